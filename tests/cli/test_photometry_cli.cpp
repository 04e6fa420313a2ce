// `fulcrum photometry`: the command-line contract (ids, fields, offsets) on
// a mock optical image written to FITS, and its one-line errors.
#include <catch2/catch.hpp>

#include <fstream>
#include <nlohmann/json.hpp>

#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/sky/offset_frame.hpp"
#include "../photometry/sersic_test_image.hpp"
#include "../support/test_support.hpp"

using namespace fulcrum;

TEST_CASE("fulcrum photometry writes the centres and their offsets", "[cli][photometry]") {
  test::TestGalaxy g;
  g.rotation_deg = 250.0;
  g.flip = true;
  g.stars = {{8.0, 40.0, 2e4}};
  const Image im = test::make_test_image(g);
  const auto dir = test::temp_dir("cli-phot");
  write_image((dir / "opt.fits").string(), im);
  const WorldCoord truth = test::test_truth(g, im);
  const WorldCoord dyn = OffsetFrame(truth).to_world({0.3, -0.4});
  char centre[96];
  std::snprintf(centre, sizeof centre, "%.10f,%.10f", dyn.ra_deg, dyn.dec_deg);
  const std::string out = (dir / "out.json").string();
  const std::string args = "photometry --image " + (dir / "opt.fits").string() +
                           " --psf-fwhm 1.0 --bootstrap 10 --dynamical-centre " + centre +
                           " --dynamical-cov 0.01,0,0.01 --beam 2.0,1.5,30 --distance-mpc 80"
                           " --json " + out;
  auto r = test::run_fulcrum(args);
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  nlohmann::json j;
  std::ifstream(out) >> j;
  REQUIRE(j["centres"].size() == 5);
  const char* ids[] = {"photometric-peak", "photometric-centroid", "photometric-profile",
                       "photometric-isophote", "photometric-symmetry"};
  for (int i = 0; i < 5; ++i) {
    const auto& c = j["centres"][i];
    CHECK(c["id"] == ids[i]);
    CHECK(c["status"] == "ok");
    const WorldCoord w{c["ra_deg"].get<double>(), c["dec_deg"].get<double>()};
    CHECK(separation_arcsec(w, truth) < 0.1);
    CHECK(c["cov_arcsec2"].size() == 2);
    CHECK(c["uncertainty_method"].is_string());
    // The photometric centre seen from the dynamical one: (-0.3, +0.4) arcsec,
    // 0.5 arcsec at PA atan2(-0.3, 0.4) = 323.13 deg.
    CHECK(c["offset"]["offset_arcsec"].get<double>() == Approx(0.5).margin(0.1));
    CHECK(c["offset"]["pa_deg"].get<double>() == Approx(323.13).margin(5.0));
    CHECK(c["offset"]["offset_beams"].is_number());
    CHECK(c["offset"]["offset_kpc"].is_number());
    CHECK(c["offset"]["mahalanobis"].is_number());
    CHECK(c["offset"]["match_probability"].is_number());
  }
  CHECK(j["comparison"]["photometric_spread_rms_arcsec"].is_number());
  // Same inputs and seed: the same report, byte for byte.
  const std::string out2 = (dir / "out2.json").string();
  r = test::run_fulcrum(args.substr(0, args.size() - out.size()) + out2);
  REQUIRE(r.exit_code == 0);
  std::ifstream a(out), b(out2);
  std::string sa((std::istreambuf_iterator<char>(a)), {}), sb((std::istreambuf_iterator<char>(b)), {});
  CHECK(sa == sb);
  // An existing output is not overwritten without --force.
  r = test::run_fulcrum(args);
  CHECK(r.exit_code == 2);
  CHECK(r.err.find("exists") != std::string::npos);
}

TEST_CASE("fulcrum photometry refuses bad input with one line", "[cli][photometry]") {
  test::TestGalaxy g;
  const auto dir = test::temp_dir("cli-phot-bad");
  write_image((dir / "opt.fits").string(), test::make_test_image(g));
  const std::string base = "photometry --image " + (dir / "opt.fits").string() + " --psf-fwhm 1 --json " +
                           (dir / "o.json").string();
  auto r = test::run_fulcrum("photometry --image " + (dir / "missing.fits").string() +
                             " --psf-fwhm 1 --json " + (dir / "o.json").string());
  CHECK(r.exit_code == 2);
  CHECK(r.err.find("missing.fits") != std::string::npos);
  r = test::run_fulcrum(base + " --dynamical-centre 150,20");
  CHECK(r.exit_code == 2);
  CHECK(r.err.find("go together") != std::string::npos);
  r = test::run_fulcrum(base + " --dynamical-centre 150,20 --dynamical-cov 1,x,1");
  CHECK(r.exit_code == 2);
  CHECK(r.err.find("not a number") != std::string::npos);
  r = test::run_fulcrum(base + " --dynamical-centre 150,20 --dynamical-cov 1,2,1");
  CHECK(r.exit_code == 2);
  CHECK(r.err.find("not a covariance") != std::string::npos);
  r = test::run_fulcrum("photometry --image " + (dir / "opt.fits").string() + " --psf-fwhm=-1 --json " +
                        (dir / "o.json").string());
  CHECK(r.exit_code == 2);
  CHECK(r.err.find("--psf-fwhm = -1 is not allowed") != std::string::npos);  // the one validation layer
  CHECK(!std::filesystem::exists(dir / "o.json"));
  // No PSF size anywhere and no star to measure it: a refused measurement
  // that says so (not an error), with a warning line.
  r = test::run_fulcrum("photometry --image " + (dir / "opt.fits").string() + " --json " +
                        (dir / "o.json").string());
  CHECK(r.exit_code == 0);
  CHECK(r.err.find("--psf-fwhm") != std::string::npos);
  {
    nlohmann::json j;
    std::ifstream(dir / "o.json") >> j;
    CHECK(j["status"] == "refused");
    CHECK(j["psf"]["source"] == "not-available");
  }
  // A flat image: refused measurement, written as failed statuses.
  Image flat = test::make_test_image(g);
  std::fill(flat.data.begin(), flat.data.end(), 5.0);
  write_image((dir / "flat.fits").string(), flat);
  r = test::run_fulcrum("photometry --image " + (dir / "flat.fits").string() +
                        " --psf-fwhm 1 --json " + (dir / "flat.json").string());
  CHECK(r.exit_code == 0);
  nlohmann::json j;
  std::ifstream(dir / "flat.json") >> j;
  CHECK(j["status"] == "refused");
  for (const auto& c : j["centres"]) {
    CHECK(c["status"] == "failed");
    CHECK(c["reason"].get<std::string>().rfind("flat image", 0) == 0);
  }
}
