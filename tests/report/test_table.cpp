// Tables: ECSV, CSV and FITS outputs read back by astropy (python3-astropy)
// with the same names, units, descriptions and values (exact doubles).
#include <catch2/catch.hpp>

#include <cmath>
#include <fstream>
#include <limits>
#include <sstream>

#include <nlohmann/json.hpp>

#include "fulcrum/core/error.hpp"
#include "fulcrum/report/table.hpp"
#include "../support/test_support.hpp"

using namespace fulcrum;
using namespace fulcrum::report;

namespace {
Table sample_table() {
  Table t;
  t.name = "robustness";
  t.caption = "Test table with awkward values";
  t.meta = {{"sample", "Mock cluster, test"}, {"seed", "7"}};
  t.add_string("galaxy", "Galaxy name", {"Alpha one", "beta\"quoted\"", "gamma,comma"});
  t.add_float("asymmetry", "", "A = (L - T)/(L + T)", {0.1, -1.0 / 3.0, std::nan("")}, 3);
  t.add_float("flip_distance_arcsec", "arcsec", "Smallest centre shift that reverses A",
              {1e-300, 12345.678901234567, 2.5});
  t.add_float("vsys_kms", "km / s", "Systemic velocity", {7000.25, 6999.0, -0.0});
  t.add_int("draws", "", "Bootstrap draws", {20000, 1, -5});
  return t;
}
}  // namespace

TEST_CASE("format_double round-trips every double", "[report]") {
  for (double v : {0.1, 1.0 / 3.0, 1e-300, 6.02214076e23, -2.5, 0.0}) {
    std::string s = format_double(v);
    REQUIRE(std::stod(s) == v);
  }
  REQUIRE(format_double(std::nan("")) == "nan");
}

TEST_CASE("ECSV, CSV and FITS tables load in astropy with units and exact values", "[report][python]") {
  auto dir = test::temp_dir("table");
  Table t = sample_table();
  write_ecsv((dir / "t.ecsv").string(), t);
  write_csv((dir / "t.csv").string(), t);
  write_fits((dir / "t.fits").string(), t);
  write_latex((dir / "t.tex").string(), t);
  write_markdown((dir / "t.md").string(), t);
  // The expected values as JSON (the same encoder report.json uses).
  nlohmann::json expect;
  for (const auto& c : t.columns) {
    nlohmann::json col{{"unit", c.unit}, {"description", c.description}};
    std::visit([&](const auto& v) {
      nlohmann::json vals = nlohmann::json::array();
      for (const auto& x : v) {
        if constexpr (std::is_same_v<std::decay_t<decltype(x)>, double>)
          vals.push_back(std::isfinite(x) ? nlohmann::json(x) : nlohmann::json(nullptr));
        else
          vals.push_back(x);
      }
      col["values"] = vals;
    }, c.values);
    expect["columns"][c.name] = col;
    expect["order"].push_back(c.name);
  }
  std::ofstream((dir / "expect.json").string()) << expect.dump();
  auto r = test::run_python("check_table.py", dir.string());
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
}

TEST_CASE("LaTeX and Markdown tables are well formed", "[report]") {
  Table t = sample_table();
  std::string tex = to_latex(t);
  CHECK(tex.find("\\begin{tabular}{@{}lrrrr@{}}") != std::string::npos);
  CHECK(tex.find("(km\\,s$^{-1}$)") != std::string::npos);
  CHECK(tex.find("$-$0.333") != std::string::npos);
  CHECK(tex.find("\\nodata") != std::string::npos);
  CHECK(tex.find("gamma,comma") != std::string::npos);
  // Every body row has as many cells as columns.
  std::string md = to_markdown(t);
  std::size_t lines = 0;
  std::istringstream in(md);
  for (std::string line; std::getline(in, line);) {
    if (line.empty() || line[0] != '|') continue;
    ++lines;
    std::size_t bars = 0;
    for (std::size_t i = 0; i < line.size(); ++i)
      if (line[i] == '|' && (i == 0 || line[i - 1] != '\\')) ++bars;
    CHECK(bars == t.columns.size() + 1);
  }
  CHECK(lines == 2 + t.rows());
}

TEST_CASE("columns of unequal length are an internal error", "[report]") {
  Table t;
  t.add_float("a", "", "", {1.0, 2.0});
  t.add_float("b", "", "", {1.0});
  REQUIRE_THROWS_AS(t.rows(), InternalError);
}

TEST_CASE("human tables: values with errors, probabilities at the draws' precision, notes", "[report]") {
  Table t;
  t.add_string("galaxy", "Galaxy name", {"a", "b", "c", "d"});
  Column& p = t.add_float("p_leading", "", "P(A > 0)", {1.0, 0.9996, 0.0, 0.5}, 3);
  p.probability = true;
  Column& a = t.add_float("asymmetry", "", "A", {0.1234, -0.2, NAN, 0.0}, 2);
  a.errors = {0.011, 0.02, NAN, NAN};
  t.notes = {"c: no verdict (undetermined): too few pixels."};
  const std::string md = to_markdown(t);
  CHECK(md.find("| a | > 0.999 | 0.12 ± 0.01 |") != std::string::npos);
  CHECK(md.find("| b | > 0.999 | -0.20 ± 0.02 |") != std::string::npos);  // 0.9996 rounds to 1.000
  CHECK(md.find("| c | < 0.001 | – |") != std::string::npos);
  CHECK(md.find("| d | 0.500 | 0.00 |") != std::string::npos);
  CHECK(md.find("c: no verdict (undetermined): too few pixels.") != std::string::npos);
  const std::string tex = to_latex(t);
  CHECK(tex.find("a & $>$0.999 & 0.12$\\pm$0.01") != std::string::npos);
  CHECK(tex.find("$-$0.20$\\pm$0.02") != std::string::npos);
  CHECK(tex.find("\\begin{table}") != std::string::npos);  // one column unless wide
  t.wide = true;
  CHECK(to_latex(t).find("\\begin{table*}") != std::string::npos);
}
