// The PSF size without --psf-fwhm: the point-source fit against
// scipy.optimize.curve_fit, the median FWHM of a field's stars against the
// FWHM the test image was drawn with (a Gaussian of known width, outside the
// code under test: sersic_test_image.hpp draws the stars), coverage of its
// error bar over independent noise draws, seeing cards, and the refusals.
#include <catch2/catch.hpp>

#include <fstream>
#include <nlohmann/json.hpp>

#include "fulcrum/photometry/photometric_centres.hpp"
#include "fulcrum/photometry/point_source_fit.hpp"
#include "fulcrum/photometry/psf_size.hpp"
#include "fulcrum/sky/offset_frame.hpp"
#include "fulcrum/io/header_card.hpp"
#include "../support/test_support.hpp"
#include "sersic_test_image.hpp"

using namespace fulcrum;
using namespace fulcrum::photometry;

namespace {

// A field of isolated stars and no galaxy (the galaxy model is zero).
Image star_field(test::TestGalaxy& g, int n_stars, unsigned seed) {
  g.nx = g.ny = 96;
  g.total_flux = 0.0;
  g.noise = 2.0;
  g.seed = seed;
  g.stars.clear();
  for (int k = 0; k < n_stars; ++k)  // a 3x3 lattice, 28 pixels apart, shifted off pixel centres
    g.stars.push_back({14.3 + 28.0 * (k % 3) + 0.37 * k, 14.6 + 28.0 * (k / 3) - 0.21 * k, 6e3 * (1 + k % 3)});
  const std::vector<double> zero(static_cast<std::size_t>(g.nx) * g.ny, 0.0);
  return test::make_test_image(g, &zero);
}

}  // namespace

TEST_CASE("point-source fit agrees with scipy.optimize.curve_fit", "[photometry][psf][python]") {
  nlohmann::json cases = nlohmann::json::array();
  int k = 0;
  for (double rot : {0.0, 37.0}) {
    for (bool flip : {false, true}) {
      test::TestGalaxy g;
      g.rotation_deg = rot;
      g.flip = flip;
      g.psf_fwhm_arcsec = 1.1;
      if (flip) g.pixel_y_arcsec = 0.5;  // rectangular pixels too
      const Image im = star_field(g, 1, 40 + k++);
      std::vector<double> d = im.data;
      for (double& v : d) v -= g.sky;
      const Eigen::Matrix2d jac = test::test_jacobian(g);
      PointSourceFitOptions fo;
      fo.radius_pixels = 6.0;
      fo.start_fwhm_arcsec = 0.8;
      const PixelCoord start{14.0, 15.0};
      const PointSourceFit f = fit_point_source(d, im.nx, im.ny, jac, start, g.noise, fo);
      REQUIRE(f.ok);
      nlohmann::json c = {{"name", "rot " + std::to_string(rot) + (flip ? " flipped, rectangular" : "")}};
      for (int y = 0; y < im.ny; ++y)
        for (int x = 0; x < im.nx; ++x)
          if ((x - start.x) * (x - start.x) + (y - start.y) * (y - start.y) <= fo.radius_pixels * fo.radius_pixels) {
            c["x"].push_back(x);
            c["y"].push_back(y);
            c["v"].push_back(d[x + im.nx * y]);
          }
      c["jac"] = {{jac(0, 0), jac(0, 1)}, {jac(1, 0), jac(1, 1)}};
      c["start"] = {{"x", start.x}, {"y", start.y}, {"fwhm_arcsec", fo.start_fwhm_arcsec}};
      c["fit"] = {{"x", f.centre.x}, {"y", f.centre.y}, {"fwhm_arcsec", f.fwhm_arcsec},
                  {"amplitude", f.amplitude}, {"background", f.background}};
      cases.push_back(c);
    }
  }
  const auto dir = test::temp_dir("psffit");
  std::ofstream(dir / "cases.json") << std::setprecision(17) << cases.dump();
  const auto r = test::run_python("check_point_source_fit.py", (dir / "cases.json").string());
  INFO(r.out << r.err);
  CHECK(r.exit_code == 0);
}

TEST_CASE("the PSF FWHM of a star field is recovered within 10%", "[photometry][psf]") {
  // Truth: the FWHM the stars were drawn with. Acceptance 10% (the brief).
  int k = 0;
  for (double fwhm : {0.9, 1.4, 2.2}) {
    for (double rot : {0.0, 121.0}) {
      test::TestGalaxy g;
      g.psf_fwhm_arcsec = fwhm;
      g.rotation_deg = rot;
      g.flip = rot > 0;
      const Image im = star_field(g, 7, 100 + k++);
      const PsfEstimate e = estimate_psf_from_stars(im, nullptr);
      INFO("truth " << fwhm << " rot " << rot << ": " << e.fwhm_arcsec << " +- " << e.fwhm_err_arcsec
                    << " from " << e.stars_used << " stars; " << e.reason);
      REQUIRE(e.ok);
      CHECK(e.stars_used == 7);
      CHECK(std::abs(e.fwhm_arcsec / fwhm - 1.0) < 0.10);
      CHECK(e.fwhm_err_arcsec > 0.0);
    }
  }
}

TEST_CASE("hot pixels, saturated stars, blends and the galaxy are not taken as stars", "[photometry][psf]") {
  test::TestGalaxy g;
  g.psf_fwhm_arcsec = 1.2;
  star_field(g, 6, 7);  // sets the grid and six good stars (rows y = 14 and 42)
  g.stars.push_back({60.2, 75.4, 2e5});  // to be clipped: saturated
  g.stars.push_back({40.0, 80.0, 8e3});  // a close pair: blended
  g.stars.push_back({43.0, 81.0, 8e3});
  const std::vector<double> zero(static_cast<std::size_t>(g.nx) * g.ny, 0.0);
  Image im = test::make_test_image(g, &zero);
  im.at(50, 50) += 5000.0;  // a hot pixel
  const double clip = g.sky + 2000.0;
  for (double& v : im.data) v = std::min(v, clip);
  const PsfEstimate e = estimate_psf_from_stars(im, nullptr);
  REQUIRE(e.ok);
  CHECK(e.stars_used == 6);
  CHECK(std::abs(e.fwhm_arcsec / 1.2 - 1.0) < 0.05);
  for (const auto& s : e.stars)
    if (s.used) {
      CHECK(std::hypot(s.centre.x - 50.0, s.centre.y - 50.0) > 3.0);
      CHECK(std::hypot(s.centre.x - 60.2, s.centre.y - 75.4) > 3.0);
      CHECK(std::hypot(s.centre.x - 41.5, s.centre.y - 80.5) > 4.0);
    }

  // A galaxy and no stars: nothing is a point source.
  test::TestGalaxy gal;
  gal.nx = gal.ny = 64;
  gal.x0 = 31.2;
  gal.y0 = 32.7;
  gal.psf_fwhm_arcsec = 1.0;
  gal.total_flux = 3e5;
  const PsfEstimate none = estimate_psf_from_stars(test::make_test_image(gal), nullptr);
  INFO(none.reason << " / " << (none.stars.empty() ? "" : none.stars.front().rejected));
  CHECK_FALSE(none.ok);
}

TEST_CASE("the PSF FWHM error bar covers the truth over independent noise draws", "[photometry][psf][coverage]") {
  // 120 independent star fields (7 stars each, noise drawn by the test
  // image, not by the code under test). Nominal 68.27% inside 1 sigma;
  // acceptance: within 3 binomial sigma (+-0.128) of it.
  const int draws = 120;
  int inside = 0;
  double pull2 = 0.0;
  for (int k = 0; k < draws; ++k) {
    test::TestGalaxy g;
    g.psf_fwhm_arcsec = 1.0;
    Image im = star_field(g, 7, 1000 + k);
    const PsfEstimate e = estimate_psf_from_stars(im, nullptr);
    REQUIRE(e.ok);
    const double pull = (e.fwhm_arcsec - 1.0) / e.fwhm_err_arcsec;
    inside += std::abs(pull) < 1.0;
    pull2 += pull * pull;
  }
  const double frac = static_cast<double>(inside) / draws;
  INFO("inside 1 sigma: " << frac << "; rms pull " << std::sqrt(pull2 / draws));
  CHECK(std::abs(frac - 0.6827) < 3.0 * std::sqrt(0.6827 * 0.3173 / draws));
}

TEST_CASE("seeing cards: PSF_FWHM, SEEING, FWHM with its unit", "[photometry][psf]") {
  test::TestGalaxy g;
  Image im = star_field(g, 3, 5);
  auto card = [](const std::string& k, const std::string& v, const std::string& c) {
    return header_card(k, v, false, c);
  };
  const double scale = 0.4;
  std::string detail;
  im.header = card("SEEING", "1.3", "[arcsec] seeing FWHM");
  CHECK(psf_from_header_card(im, scale, &detail).value() == Approx(1.3));
  im.header = card("FWHM", "3.0", "PSF FWHM in pixels");
  CHECK(psf_from_header_card(im, scale, &detail).value() == Approx(1.2));
  im.header = card("FWHM", "3.0", "");  // no unit: ambiguous, not used
  CHECK_FALSE(psf_from_header_card(im, scale, &detail));
  CHECK(detail.find("no unit") != std::string::npos);
  im.header = card("PSF_FWHM", "0.01", "arcsec");  // below half a pixel: implausible
  CHECK_FALSE(psf_from_header_card(im, scale, &detail));
  im.header = card("PSF_FWHM", "1.1", "") + card("SEEING", "2.0", "arcsec");
  CHECK(psf_from_header_card(im, scale, &detail).value() == Approx(1.1));
  CHECK(detail.find("arcsec assumed") != std::string::npos);
}

TEST_CASE("photometry without --psf-fwhm measures the stars and says so", "[photometry][psf]") {
  test::TestGalaxy g;
  g.nx = g.ny = 96;
  g.x0 = 47.3;
  g.y0 = 46.8;
  g.psf_fwhm_arcsec = 1.0;
  g.rotation_deg = 30.0;
  g.stars = {{12.2, 14.7, 1.5e4}, {80.6, 12.1, 1e4}, {15.4, 82.3, 2e4}, {83.1, 84.9, 1.2e4}};
  const Image im = test::make_test_image(g);
  PhotometryOptions o;
  o.bootstrap.draws = 10;
  const PhotometrySummary s = measure_photometric_centres(im, nullptr, o);
  REQUIRE(s.ok);
  CHECK(s.psf.source == "measured");
  CHECK(s.psf.measured->stars_used == 4);
  CHECK(std::abs(s.psf_fwhm_arcsec - 1.0) < 0.1);
  const auto j = to_json(s);
  CHECK(j["psf"]["source"] == "measured");
  CHECK(j["psf"]["stars_used"] == 4);
  const WorldCoord truth = test::test_truth(g, im);
  for (const auto& c : s.centres) {
    INFO(c.id() << " " << c.centre.reason);
    REQUIRE(c.ok());
    CHECK(separation_arcsec(c.centre.position, truth) < 0.1);
  }

  // No stars, no card: refused with the reason, not an exception.
  test::TestGalaxy lone = g;
  lone.stars.clear();
  const PhotometrySummary r = measure_photometric_centres(test::make_test_image(lone), nullptr, o);
  CHECK_FALSE(r.ok);
  CHECK(r.psf.source == "not-available");
  CHECK(r.reason.find("PSF size is unknown") != std::string::npos);
  CHECK(to_json(r)["psf_fwhm_arcsec"].is_null());
}
