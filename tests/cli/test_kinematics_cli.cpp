// `fulcrum kinematics` end to end: the JSON contract, the output maps (input
// WCS, read back with astropy in tests/python/kinematics_outputs_reference.py)
// and tables, and one-line errors for bad input.
#include <catch2/catch.hpp>

#include <filesystem>
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

TEST_CASE("fulcrum kinematics --intensity weights the beam-smearing correction",
          "[kinematics][cli]") {
  const auto dir = test::temp_dir("kin-cli-smear");
  // A steep rotation curve under a large beam at high inclination (invented
  // disc), smeared with its exponential intensity.
  test::VelocityMockSpec spec;
  spec.nx = spec.ny = 72;
  spec.disc_radius_arcsec = 16;
  spec.inc_deg = 70;
  spec.pa_deg = 125;
  spec.r_turn_arcsec = 2.0;
  spec.beam = Beam{2.6, 2.2, 40.0};
  spec.noise_kms = 2;
  const auto m = test::make_velocity_mock(spec);
  const auto vel = (dir / "vel.fits").string(), mom0 = (dir / "mom0.fits").string();
  write_image(vel, m.velocity);
  write_image(mom0, m.intensity);
  auto run = [&](const std::string& extra, const std::string& name) {
    const auto json = (dir / (name + ".json")).string();
    auto r = test::run_fulcrum("kinematics --velocity " + vel + " --method rings --json " + json +
                               " " + extra);
    INFO(r.out << r.err);
    REQUIRE(r.exit_code == 0);
    std::ifstream in(json);
    return nlohmann::json::parse(in);
  };
  const auto with = run("--intensity " + mom0, "with");
  CHECK(with["inputs"]["intensity"] == mom0);
  CHECK(with["beam_smearing"]["applied"] == true);
  CHECK(with["beam_smearing"]["weighting"].get<std::string>().find(mom0) != std::string::npos);
  CHECK(with["beam_smearing"]["max_abs_correction_kms"].get<double>() > 5.0);
  const auto off = run("--no-smearing-correction", "off");
  CHECK(off["beam_smearing"]["applied"] == false);
  CHECK(off["beam_smearing"]["reason"] == "turned off");
  const auto fp = run("", "footprint");
  CHECK(fp["beam_smearing"]["applied"] == true);
  CHECK(fp["beam_smearing"]["weighting"].get<std::string>().find("footprint") != std::string::npos);
  // The correction moves the inclination towards the truth (noise 2 km/s;
  // the bias without it is several degrees for this disc).
  const double inc_with = with["inc_deg"], inc_off = off["inc_deg"];
  INFO("inclination with correction " << inc_with << ", without " << inc_off << ", true "
                                      << spec.inc_deg);
  CHECK(std::abs(inc_with - spec.inc_deg) < 1.0);
  CHECK(std::abs(inc_off - spec.inc_deg) > std::abs(inc_with - spec.inc_deg));

  auto bad = test::run_fulcrum("kinematics --velocity " + vel + " --intensity " +
                               (dir / "no_such_mom0.fits").string() + " --json " +
                               (dir / "bad.json").string());
  CHECK(bad.exit_code == 2);
  CHECK(bad.err.find("no_such_mom0.fits") != std::string::npos);
  CHECK_FALSE(std::filesystem::exists(dir / "bad.json"));
}
