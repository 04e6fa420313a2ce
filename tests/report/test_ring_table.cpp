// The per-ring table of a kinematic fit goes through the one table writer
// (report/ring_table.hpp, report/table.hpp): written as ECSV, read back by
// astropy.table.Table.read (python3-astropy, ECSV 1.0 reader), every double
// equal to the last bit and every unit and description kept.
// Reference: tests/python/check_table.py (exact equality, astropy units).
#include <catch2/catch.hpp>

#include <cmath>
#include <fstream>
#include <limits>

#include <nlohmann/json.hpp>

#include "fulcrum/report/ring_table.hpp"
#include "../support/test_support.hpp"

using namespace fulcrum;

namespace {
// A fit with three ring nodes whose values need all 17 digits; no
// ring-by-ring or harmonic fits, so those columns are NaN.
kinematics::KinematicFit three_ring_fit() {
  kinematics::KinematicFit fit;
  fit.status = "ok";
  fit.source = "invented/vel.fits";
  fit.reference = {150.123456789012345, -20.987654321098765};
  const double radius[3] = {0.1 + 0.2, 1.0 / 3.0, 2.0 / 7.0 * 10.0};
  for (int i = 0; i < 3; ++i) {
    kinematics::RingRow r;
    r.node.radius_arcsec = radius[i];
    r.node.vrot_kms = 100.0 * std::sqrt(2.0) + i * 1e-13;
    r.node.vrot_err_kms = 1e-300 * (i + 1);
    r.node.vrad_kms = -0.0;
    r.node.n_pixels = 17 + i;
    fit.rings.push_back(r);
  }
  return fit;
}
}  // namespace

TEST_CASE("ring table: ECSV read back by astropy, exact values and units", "[report][python]") {
  const auto fit = three_ring_fit();
  const report::Table t = report::ring_table(fit);
  // The table holds what the fit holds (no rounding on the way in).
  REQUIRE(t.rows() == 3);
  CHECK(std::get<0>(t.find("radius")->values)[0] == 0.1 + 0.2);
  CHECK(std::get<1>(t.find("n_pixels")->values)[2] == 19);
  CHECK(t.find("vrot")->unit == "km / s");
  CHECK(std::isnan(std::get<0>(t.find("ring_pa")->values)[1]));

  auto dir = test::temp_dir("ring_table");
  report::write_ecsv((dir / "t.ecsv").string(), t);
  report::write_csv((dir / "t.csv").string(), t);
  report::write_fits((dir / "t.fits").string(), t);
  nlohmann::json expect;
  for (const auto& c : t.columns) {
    nlohmann::json col{{"unit", c.unit}, {"description", c.description}};
    nlohmann::json vals = nlohmann::json::array();
    if (c.is_float())
      for (double x : std::get<0>(c.values)) vals.push_back(std::isfinite(x) ? nlohmann::json(x) : nlohmann::json(nullptr));
    else
      for (auto x : std::get<1>(c.values)) vals.push_back(x);
    col["values"] = vals;
    expect["columns"][c.name] = col;
    expect["order"].push_back(c.name);
  }
  std::ofstream((dir / "expect.json").string()) << expect.dump();
  const auto r = test::run_python("check_table.py", dir.string());
  INFO(r.out << r.err);
  CHECK(r.exit_code == 0);
}
