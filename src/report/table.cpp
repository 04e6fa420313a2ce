// Table writers: ECSV 1.0, CSV, FITS binary table, LaTeX and Markdown.
// See include/fulcrum/report/table.hpp for the formats and number rules.
#include "fulcrum/report/table.hpp"

#include <charconv>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <sstream>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/number_text.hpp"
#include "fulcrum/io/atomic_file.hpp"

namespace fulcrum::report {

std::size_t Column::size() const {
  return std::visit([](const auto& v) { return v.size(); }, values);
}

std::size_t Table::rows() const {
  if (columns.empty()) return 0;
  std::size_t n = columns.front().size();
  for (const auto& c : columns) FULCRUM_CHECK(c.size() == n, n, c.name + ":" + std::to_string(c.size()));
  return n;
}

const Column* Table::find(const std::string& column_name) const {
  for (const auto& c : columns)
    if (c.name == column_name) return &c;
  return nullptr;
}

Column& Table::add_float(std::string n, std::string unit, std::string description,
                         std::vector<double> values, int digits) {
  Column c;
  c.name = std::move(n);
  c.unit = std::move(unit);
  c.description = std::move(description);
  c.values = std::move(values);
  c.digits = digits;
  columns.push_back(std::move(c));
  return columns.back();
}

Column& Table::add_int(std::string n, std::string unit, std::string description,
                       std::vector<std::int64_t> values) {
  Column c;
  c.name = std::move(n);
  c.unit = std::move(unit);
  c.description = std::move(description);
  c.values = std::move(values);
  columns.push_back(std::move(c));
  return columns.back();
}

Column& Table::add_string(std::string n, std::string description, std::vector<std::string> values) {
  Column c;
  c.name = std::move(n);
  c.description = std::move(description);
  c.values = std::move(values);
  columns.push_back(std::move(c));
  return columns.back();
}

std::string format_double(double v) { return shortest_text(v); }

namespace {

std::string fixed(double v, int digits) {
  if (!std::isfinite(v)) return "";
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.*f", digits, v);
  std::string s = buf;
  if (s.size() > 1 && s[0] == '-' && s.find_first_not_of("-0.") == std::string::npos) s = s.substr(1);
  return s;
}

// YAML single-quoted scalar: quotes doubled.
std::string yaml_quote(const std::string& s) {
  std::string out = "'";
  for (char ch : s) {
    if (ch == '\'') out += "''";
    else if (ch == '\n') out += ' ';
    else out += ch;
  }
  return out + "'";
}

// Double-quoted field with quotes doubled and newlines folded to spaces,
// when `s` holds any of `specials` (or is empty and `quote_empty`); else as is.
// ECSV's data lines and CSV (RFC 4180) share this rule.
std::string quote_field(const std::string& s, const char* specials, bool quote_empty) {
  bool need = quote_empty && s.empty();
  for (char ch : s)
    if (ch != '\0' && std::strchr(specials, ch) != nullptr) need = true;
  if (!need) return s;
  std::string out = "\"";
  for (char ch : s) {
    if (ch == '"') out += "\"\"";
    else if (ch == '\n') out += ' ';
    else out += ch;
  }
  return out + "\"";
}

std::string ecsv_string(const std::string& s) { return quote_field(s, " \"\t#,", true); }
std::string csv_string(const std::string& s) { return quote_field(s, ",\"\n#", false); }

std::string cell_exact(const Column& c, std::size_t row) {
  switch (c.values.index()) {
    case 0: return format_double(std::get<0>(c.values)[row]);
    case 1: return std::to_string(std::get<1>(c.values)[row]);
    default: return std::get<2>(c.values)[row];
  }
}

const char* ecsv_datatype(const Column& c) {
  switch (c.values.index()) {
    case 0: return "float64";
    case 1: return "int64";
    default: return "string";
  }
}

std::string latex_escape(const std::string& s) {
  std::string out;
  for (char ch : s) {
    switch (ch) {
      case '&': out += "\\&"; break;
      case '%': out += "\\%"; break;
      case '$': out += "\\$"; break;
      case '#': out += "\\#"; break;
      case '_': out += "\\_"; break;
      case '{': out += "\\{"; break;
      case '}': out += "\\}"; break;
      case '~': out += "\\textasciitilde{}"; break;
      case '^': out += "\\textasciicircum{}"; break;
      case '\\': out += "\\textbackslash{}"; break;
      case '<': out += "\\textless{}"; break;  // plain < and > print as inverted marks in OT1
      case '>': out += "\\textgreater{}"; break;
      case '|': out += "\\textbar{}"; break;
      default: out += ch;
    }
  }
  return out;
}

// Unit strings as set in a journal: "km / s" -> "km\,s$^{-1}$" etc.
std::string latex_unit(const std::string& unit) {
  if (unit.empty()) return "";
  if (unit == "deg") return "deg";
  if (unit == "arcsec") return "$''$";
  if (unit == "km / s") return "km\\,s$^{-1}$";
  if (unit == "Jy km / s") return "Jy\\,km\\,s$^{-1}$";
  if (unit == "Jy / beam km / s") return "Jy\\,beam$^{-1}$\\,km\\,s$^{-1}$";
  if (unit == "arcsec2") return "arcsec$^2$";
  if (unit == "Mpc") return "Mpc";
  if (unit == "kpc") return "kpc";
  if (unit == "solMass") return "M$_\\odot$";
  if (unit == "K km / s pc2") return "K\\,km\\,s$^{-1}$\\,pc$^2$";
  return latex_escape(unit);
}

std::string md_escape(const std::string& s) {
  std::string out;
  for (char ch : s) {
    if (ch == '|') out += "\\|";
    else if (ch == '\n') out += ' ';
    else out += ch;
  }
  return out;
}

// A number cell of cell_human() in LaTeX: minus signs, "+-" and the
// inequality signs in math mode.
std::string latex_number(const std::string& cell) {
  std::string out;
  for (std::size_t i = 0; i < cell.size(); ++i) {
    if (cell.compare(i, 4, " ± ") == 0) {
      out += "$\\pm$";  // tight, as journals set a value and its error
      i += 3;
    } else if (cell[i] == '-') {
      out += "$-$";
    } else if ((cell[i] == '>' || cell[i] == '<') && i + 1 < cell.size() && cell[i + 1] == ' ') {
      out += std::string("$") + cell[i] + "$";
      ++i;
    } else {
      out += cell[i];
    }
  }
  return out;
}

}  // namespace

std::string human_cell(const Column& c, std::size_t row) {
  switch (c.values.index()) {
    case 0: {
      const double v = std::get<0>(c.values)[row];
      if (!std::isfinite(v)) return "";
      std::string t = c.probability ? probability_text(v, c.digits) : fixed(v, c.digits);
      if (row < c.errors.size() && std::isfinite(c.errors[row])) t += " ± " + fixed(c.errors[row], c.digits);
      return t;
    }
    case 1: return std::to_string(std::get<1>(c.values)[row]);
    default: return std::get<2>(c.values)[row];
  }
}

std::string to_ecsv(const Table& table) {
  const std::size_t n = table.rows();
  std::ostringstream os;
  os << "# %ECSV 1.0\n# ---\n# datatype:\n";
  for (const auto& c : table.columns) {
    os << "# - {name: " << yaml_quote(c.name);
    if (!c.unit.empty()) os << ", unit: " << yaml_quote(c.unit);
    os << ", datatype: " << ecsv_datatype(c);
    if (!c.description.empty()) os << ", description: " << yaml_quote(c.description);
    os << "}\n";
  }
  if (!table.meta.empty() || !table.caption.empty() || !table.name.empty()) {
    os << "# meta: !!omap\n";
    if (!table.name.empty()) os << "# - {table: " << yaml_quote(table.name) << "}\n";
    if (!table.caption.empty()) os << "# - {caption: " << yaml_quote(table.caption) << "}\n";
    for (const auto& [k, v] : table.meta) os << "# - {" << yaml_quote(k) << ": " << yaml_quote(v) << "}\n";
  }
  os << "# schema: astropy-2.0\n";
  for (std::size_t j = 0; j < table.columns.size(); ++j)
    os << (j ? " " : "") << ecsv_string(table.columns[j].name);
  os << "\n";
  for (std::size_t i = 0; i < n; ++i) {
    for (std::size_t j = 0; j < table.columns.size(); ++j) {
      const auto& c = table.columns[j];
      std::string cell = cell_exact(c, i);
      os << (j ? " " : "") << (c.is_string() ? ecsv_string(cell) : cell);
    }
    os << "\n";
  }
  return os.str();
}

std::string to_csv(const Table& table) {
  const std::size_t n = table.rows();
  std::ostringstream os;
  if (!table.caption.empty()) os << "# " << table.caption << "\n";
  os << "# units:";
  for (std::size_t j = 0; j < table.columns.size(); ++j)
    os << (j ? "," : " ") << csv_string(table.columns[j].unit);
  os << "\n";
  for (std::size_t j = 0; j < table.columns.size(); ++j)
    os << (j ? "," : "") << csv_string(table.columns[j].name);
  os << "\n";
  for (std::size_t i = 0; i < n; ++i) {
    for (std::size_t j = 0; j < table.columns.size(); ++j) {
      const auto& c = table.columns[j];
      std::string cell = cell_exact(c, i);
      if (c.is_float() && cell == "nan") cell = "";
      os << (j ? "," : "") << (c.is_string() ? csv_string(cell) : cell);
    }
    os << "\n";
  }
  return os.str();
}

// A plain `tabular` that needs no package. The rules follow the usual
// journal look: a heavier rule above the headings and below the last row, a
// light rule between headings and body, no vertical rules. Heavier rules are
// drawn with \noalign{\hrule height 0.8pt} so the file compiles with any
// LaTeX installation; units go on a second heading line in parentheses.
std::string to_latex(const Table& table) {
  const std::size_t n = table.rows();
  std::ostringstream os;
  os << "% " << (table.name.empty() ? std::string("table") : table.name)
     << ": written by fulcrum. Plain tabular, no packages needed.\n";
  const std::string env = table.wide ? "table*" : "table";
  os << "\\begin{" << env << "}\n\\centering\n";
  // Journal tables are set small; the column gap is narrowed so that the
  // one-column table fits a 8.5 cm column (checked by a test with pdflatex).
  os << "\\footnotesize\n\\setlength{\\tabcolsep}{" << "2.5pt" << "}\n";
  if (!table.caption.empty()) os << "\\caption{" << latex_escape(table.caption) << "}\n";
  if (!table.name.empty()) os << "\\label{tab:" << table.name << "}\n";
  // No padding outside the first and last columns; text columns after the
  // first (verdicts, centre names) may break at their hyphens, so that a
  // long word does not widen the table.
  os << "\\begin{tabular}{@{}";
  for (std::size_t j = 0; j < table.columns.size(); ++j) {
    const auto& c = table.columns[j];
    os << (!c.is_string() ? "r" : j == 0 ? "l" : "p{5.75em}");
  }
  os << "@{}}\n\\noalign{\\hrule height 0.8pt}\\noalign{\\smallskip}\n";
  bool any_unit = false;
  for (std::size_t j = 0; j < table.columns.size(); ++j) {
    const auto& c = table.columns[j];
    os << (j ? " & " : "") << (c.latex_heading.empty() ? latex_escape(c.name) : c.latex_heading);
    any_unit = any_unit || !c.unit.empty();
  }
  os << " \\\\\n";
  if (any_unit) {
    for (std::size_t j = 0; j < table.columns.size(); ++j) {
      const auto& c = table.columns[j];
      os << (j ? " & " : "") << (c.unit.empty() ? "" : "(" + latex_unit(c.unit) + ")");
    }
    os << " \\\\\n";
  }
  os << "\\noalign{\\smallskip}\\hline\\noalign{\\smallskip}\n";
  for (std::size_t i = 0; i < n; ++i) {
    for (std::size_t j = 0; j < table.columns.size(); ++j) {
      const auto& c = table.columns[j];
      std::string cell = human_cell(c, i);
      // \hspace{0pt} lets TeX hyphenate the first word of a p{} cell.
      if (c.is_string()) cell = (j > 0 && !cell.empty() ? "\\hspace{0pt}" : "") + latex_escape(cell);
      else if (cell.empty()) cell = "\\nodata";
      else cell = latex_number(cell);
      os << (j ? " & " : "") << cell;
    }
    os << " \\\\\n";
  }
  os << "\\noalign{\\smallskip}\\noalign{\\hrule height 0.8pt}\n\\end{tabular}\n";
  for (const auto& note : table.notes) os << "\\par\\smallskip\\parbox{\\linewidth}{\\raggedright " << latex_escape(note) << "}\n";
  os << "\\end{" << env << "}\n";
  std::string s = os.str();
  // \nodata is not standard LaTeX: define it locally when used.
  if (s.find("\\nodata") != std::string::npos)
    s = "\\providecommand{\\nodata}{\\ldots}\n" + s;
  return s;
}

std::string to_markdown(const Table& table) {
  const std::size_t n = table.rows();
  std::ostringstream os;
  if (!table.caption.empty()) os << md_escape(table.caption) << "\n\n";
  os << "|";
  for (const auto& c : table.columns) {
    os << " " << md_escape(c.heading.empty() ? c.name : c.heading);
    if (!c.unit.empty()) os << " (" << md_escape(c.unit) << ")";
    os << " |";
  }
  os << "\n|";
  for (const auto& c : table.columns) os << (c.is_string() ? " :--- |" : " ---: |");
  os << "\n";
  for (std::size_t i = 0; i < n; ++i) {
    os << "|";
    for (const auto& c : table.columns) {
      std::string cell = human_cell(c, i);
      os << " " << (cell.empty() ? "–" : md_escape(cell)) << " |";
    }
    os << "\n";
  }
  if (!table.notes.empty()) os << "\n";
  for (const auto& note : table.notes) os << md_escape(note) << "\n\n";
  return os.str();
}

void write_ecsv(const std::string& path, const Table& table) { write_text_file(path, to_ecsv(table)); }
void write_csv(const std::string& path, const Table& table) { write_text_file(path, to_csv(table)); }
void write_latex(const std::string& path, const Table& table) { write_text_file(path, to_latex(table)); }
void write_markdown(const std::string& path, const Table& table) {
  write_text_file(path, to_markdown(table));
}

std::vector<TableColumn> to_fits_columns(const Table& table) {
  table.rows();
  std::vector<TableColumn> out;
  out.reserve(table.columns.size());
  for (const auto& c : table.columns) {
    TableColumn t;
    t.name = c.name;
    t.unit = c.unit;
    t.description = c.description;
    std::visit([&](const auto& v) { t.values = v; }, c.values);
    out.push_back(std::move(t));
  }
  return out;
}

void write_fits(const std::string& path, const Table& table) {
  std::vector<HeaderCard> extra;
  for (const auto& [k, v] : table.meta) {
    std::string key = k;
    for (auto& ch : key) ch = static_cast<char>(std::toupper(static_cast<unsigned char>(ch)));
    // FITS keywords are at most 8 characters; longer meta keys stay in the
    // ECSV header only.
    if (key.size() <= 8) extra.push_back({key, v, "", false});
  }
  write_fits_table(path, table.name.empty() ? std::string("RESULTS") : table.name,
                   to_fits_columns(table), extra);
}

}  // namespace fulcrum::report
