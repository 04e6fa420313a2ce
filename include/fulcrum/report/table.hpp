// A table of results (one row per galaxy, or per ring) and the formats it is
// written in: ECSV 1.0, CSV, FITS binary table, LaTeX and Markdown.
//
// A Table is a list of named columns of equal length. Each column has a unit
// (an astropy/FITS-style unit string such as "arcsec", "deg", "km / s",
// "Jy km / s"; empty for dimensionless or text), a one-line description and
// float64, int64 or string values. NaN floats mean "not available".
//
// Number formatting is chosen so that the machine-readable formats (ECSV,
// CSV, FITS) carry the exact binary double: floats are written with the
// shortest decimal that reads back to the same double (std::to_chars), the
// same rule nlohmann::json uses for report.json, so a value in a table and in
// the JSON compare equal. The human formats (LaTeX, Markdown) round to
// `digits` decimals per column.
//
// ECSV follows the ECSV 1.0 specification (a YAML header after "# %ECSV 1.0"
// giving datatype, unit and description per column; space-delimited body;
// strings with spaces in double quotes). Missing floats are written "nan".
//
// Every writer goes through write_text_file / the FITS writer, which write a
// temporary file and rename it, so no half-written table is left behind.
#pragma once

#include <cstdint>
#include <string>
#include <utility>
#include <variant>
#include <vector>

#include "fulcrum/io/fits_table.hpp"

namespace fulcrum::report {

struct Column {
  std::string name;
  std::string unit;
  std::string description;
  std::variant<std::vector<double>, std::vector<std::int64_t>, std::vector<std::string>> values;
  int digits = 3;              // decimals shown in LaTeX and Markdown (floats only)
  std::string latex_heading;   // heading in the LaTeX table; empty: the name, escaped
  std::string heading;         // heading for people (Markdown, HTML); empty: the name
  // Human formats only (LaTeX, Markdown): each value followed by "+- error"
  // when `errors` holds one per row (the machine formats carry the error as
  // a column of its own).
  std::vector<double> errors;
  // Human formats only: a probability, shown with the precision the draws
  // support: "> 0.999" and "< 0.001" (for 3 digits) instead of 1.000 / 0.000.
  bool probability = false;

  std::size_t size() const;
  bool is_float() const { return values.index() == 0; }
  bool is_int() const { return values.index() == 1; }
  bool is_string() const { return values.index() == 2; }
};

struct Table {
  std::string name;         // used as EXTNAME in FITS and as a caption label
  std::string caption;      // one sentence, for LaTeX/Markdown/ECSV meta
  bool wide = false;        // LaTeX: a table* over both columns of a two-column page
  std::vector<std::string> notes;  // LaTeX and Markdown: lines under the table (e.g. why a row is blank)
  std::vector<Column> columns;
  // Free key/value pairs written into the ECSV meta and as FITS header cards.
  std::vector<std::pair<std::string, std::string>> meta;

  std::size_t rows() const;  // throws InternalError if columns differ in length
  const Column* find(const std::string& column_name) const;

  // Convenience builders (append a column).
  Column& add_float(std::string name, std::string unit, std::string description,
                    std::vector<double> values, int digits = 3);
  Column& add_int(std::string name, std::string unit, std::string description,
                  std::vector<std::int64_t> values);
  Column& add_string(std::string name, std::string description, std::vector<std::string> values);
};

// Shortest round-trip decimal for a double ("nan", "inf", "-inf" for
// non-finite values).
std::string format_double(double v);

// One cell as people read it (LaTeX, Markdown, HTML): fixed decimals, the
// error after "±", probabilities at their precision; "" when not available.
std::string human_cell(const Column& column, std::size_t row);

std::string to_ecsv(const Table& table);
std::string to_csv(const Table& table);
std::string to_latex(const Table& table);
std::string to_markdown(const Table& table);

void write_ecsv(const std::string& path, const Table& table);
void write_csv(const std::string& path, const Table& table);
void write_latex(const std::string& path, const Table& table);
void write_markdown(const std::string& path, const Table& table);
// FITS binary table through io/fits_table.hpp (EXTNAME = table.name).
void write_fits(const std::string& path, const Table& table);

// The columns as io::TableColumn for write_fits_table.
std::vector<TableColumn> to_fits_columns(const Table& table);

}  // namespace fulcrum::report
