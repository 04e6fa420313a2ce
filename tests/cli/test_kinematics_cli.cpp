// `fulcrum kinematics` end to end: the JSON contract, the output maps (input
// WCS, read back with astropy in tests/python/kinematics_outputs_reference.py)
// and tables, and one-line errors for bad input.
#include <catch2/catch.hpp>

#include <fstream>
#include <nlohmann/json.hpp>

#include "../kinematics/velocity_field_mock.hpp"
#include "../support/test_support.hpp"
#include "fulcrum/io/fits_image.hpp"

using namespace fulcrum;

TEST_CASE("fulcrum kinematics writes JSON, maps and ring tables", "[kinematics][cli][python]") {
  const auto dir = test::temp_dir("kin-cli");
  test::VelocityMockSpec spec;
  spec.noise_kms = 3;
  spec.rotation_deg = 200;
  spec.flip = true;
  const auto m = test::make_velocity_mock(spec);
  const auto vel = (dir / "vel.fits").string(), err = (dir / "err.fits").string();
  write_image(vel, m.velocity);
  write_image(err, m.velocity_error);
  const auto json = (dir / "kin.json").string();
  const auto out = (dir / "out").string();
  auto r = test::run_fulcrum("kinematics --velocity " + vel + " --velocity-error " + err +
                             " --json " + json + " --out " + out);
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
  std::ifstream in(json);
  const auto j = nlohmann::json::parse(in);
  CHECK(j["status"] == "ok");
  CHECK(j["method"] == "both");
  CHECK(j.contains("harmonic_centre"));
  CHECK(separation_arcsec({j["centre"]["ra_deg"], j["centre"]["dec_deg"]}, m.true_centre) < 0.3);
  // Outside check: astropy reads the maps (same WCS as the input) and the
  // ECSV table (units) and the CSV header.
  auto py = test::run_python("kinematics_outputs_reference.py", vel + " " + out);
  INFO(py.out << py.err);
  CHECK(py.exit_code == 0);

  SECTION("existing outputs are kept without --force") {
    auto again = test::run_fulcrum("kinematics --velocity " + vel + " --json " + json);
    CHECK(again.exit_code == 2);
    CHECK(again.err.find("exists") != std::string::npos);
  }
}

TEST_CASE("fulcrum kinematics: bad input gives a one-line error", "[kinematics][cli]") {
  const auto dir = test::temp_dir("kin-cli-bad");
  auto r = test::run_fulcrum("kinematics --velocity " + (dir / "missing.fits").string() +
                             " --json " + (dir / "k.json").string());
  CHECK(r.exit_code == 2);
  CHECK(r.err.find("missing.fits") != std::string::npos);
  test::VelocityMockSpec spec;
  spec.vflat_kms = 0;  // no rotation: refused, JSON still written
  const auto m = test::make_velocity_mock(spec);
  const auto vel = (dir / "flat.fits").string();
  write_image(vel, m.velocity);
  const auto json = (dir / "flat.json").string();
  r = test::run_fulcrum("kinematics --velocity " + vel + " --json " + json);
  CHECK(r.exit_code == 2);
  CHECK(r.err.find("cannot constrain a centre") != std::string::npos);
  std::ifstream in(json);
  const auto j = nlohmann::json::parse(in);
  CHECK(j["status"] == "refused");
  CHECK(j["centre"].is_null());
  r = test::run_fulcrum("kinematics --velocity " + vel + " --json " + json + " --method fast --force");
  CHECK(r.exit_code == 2);
}
