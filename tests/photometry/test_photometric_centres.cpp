// Every photometric centre estimator on test galaxies drawn from the Sérsic
// formula (sersic_test_image.hpp): n = 1 and 4, axis ratios 0.3-1, rotated
// and flipped WCS, sky and stars; the refusals (no galaxy, saturated, flat)
// and the InputErrors of an unusable image.
#include <catch2/catch.hpp>

#include <iostream>
#include <map>

#include "fulcrum/core/error.hpp"
#include "fulcrum/photometry/photometric_centres.hpp"
#include "fulcrum/sky/offset_frame.hpp"
#include "sersic_test_image.hpp"

using namespace fulcrum;
using namespace fulcrum::photometry;
using fulcrum::test::TestGalaxy;

namespace {
PhotometryOptions quick_options(double psf, int draws = 5) {
  PhotometryOptions o;
  o.psf_fwhm_arcsec = psf;
  o.bootstrap.draws = draws;
  return o;
}
const char* kIds[] = {"photometric-peak", "photometric-centroid", "photometric-profile",
                      "photometric-isophote", "photometric-symmetry"};
}  // namespace

TEST_CASE("every estimator recovers the centre within 0.1 arcsec at high S/N",
          "[photometry][centres]") {
  // 0.1 arcsec: the accuracy the issue asks of every estimator at high S/N.
  const double tol_arcsec = 0.1;
  struct Grid {
    double rot;
    bool flip;
  };
  const Grid grids[] = {{0.0, false}, {37.0, true}, {200.0, false}};
  int k = 0;
  std::map<std::string, double> worst;
  for (double n : {1.0, 4.0})
    for (double q : {0.3, 0.6, 1.0})
      for (const Grid& gr : grids) {
        TestGalaxy g;
        g.n = n;
        g.re_arcsec = n > 2 ? 1.5 : 2.0;
        g.q = q;
        g.pa_deg = 20.0 + 35.0 * k;
        g.rotation_deg = gr.rot;
        g.flip = gr.flip;
        g.sky = 250.0;
        g.noise = 2.0;
        g.x0 = 23.0 + 0.37 * (k % 3);
        g.y0 = 24.6 - 0.29 * (k % 4);
        g.seed = 100 + k;
        // One star far out, one projected on the galaxy's outskirts.
        g.stars = {{6.0, 40.0, 3e4}, {g.x0 + 8.0, g.y0 - 6.0, 4e3}};
        ++k;
        const Image im = test::make_test_image(g);
        const PhotometrySummary s = measure_photometric_centres(im, nullptr, quick_options(1.0));
        INFO("n " << n << " q " << q << " rotation " << gr.rot << (gr.flip ? " flipped" : ""));
        REQUIRE(s.ok);
        CHECK(s.masked_sources >= 2);
        const WorldCoord truth = test::test_truth(g, im);
        for (const char* id : kIds) {
          const PhotometricMeasurement* c = s.find(id);
          REQUIRE(c != nullptr);
          INFO(id << ": " << c->centre.reason);
          REQUIRE(c->ok());
          const double err = separation_arcsec(truth, c->centre.position);
          INFO("error " << err << " arcsec");
          CHECK(err < tol_arcsec);
          worst[id] = std::max(worst[id], err);
          // The covariance is a proper 2x2 covariance on the sky.
          CHECK(c->centre.covariance(0, 0) > 0);
          CHECK(c->centre.covariance(1, 1) > 0);
          CHECK(c->centre.covariance.determinant() >= 0);
          CHECK(c->centre.covariance(0, 1) == Approx(c->centre.covariance(1, 0)));
          CHECK(c->uncertainty_method ==
                (std::string(id) == "photometric-profile"    ? "fit-covariance"
                 : std::string(id) == "photometric-centroid" ? "closed-form"
                                                             : "noise-bootstrap"));
        }
        CHECK(s.spread.count == 5);
        CHECK(s.spread.max_separation_arcsec < 2 * tol_arcsec);
      }
  std::cout << "worst centre error over 18 test galaxies (arcsec):";
  for (auto& [id, e] : worst) std::cout << " " << id << " " << e;
  std::cout << "\n";
}

TEST_CASE("rectangular pixels on a rotated grid", "[photometry][centres]") {
  TestGalaxy g;
  g.pixel_y_arcsec = 0.25;
  g.ny = 64;
  g.y0 = 31.7;
  g.rotation_deg = 115.0;
  g.q = 0.5;
  g.pa_deg = 70.0;
  const Image im = test::make_test_image(g);
  const PhotometrySummary s = measure_photometric_centres(im, nullptr, quick_options(1.0));
  REQUIRE(s.ok);
  const WorldCoord truth = test::test_truth(g, im);
  for (const auto& c : s.centres) {
    INFO(c.id() << ": " << c.centre.reason);
    REQUIRE(c.ok());
    CHECK(separation_arcsec(truth, c.centre.position) < 0.1);  // issue tolerance
  }
  const PhotometricMeasurement* prof = s.find("photometric-profile");
  CHECK(prof->details["axis_ratio"].get<double>() == Approx(0.5).margin(0.02));
  CHECK(prof->details["pa_deg"].get<double>() == Approx(70.0).margin(1.0));
}

TEST_CASE("a mask file removes pixels from every estimator", "[photometry][centres]") {
  TestGalaxy g;
  g.stars = {{g.x0 + 5.0, g.y0 + 4.0, 5e4}};
  Image im = test::make_test_image(g);
  // Turn the automatic masking off: without the mask file the bright star
  // pulls the centroid; with it the centroid is back on the galaxy.
  PhotometryOptions o = quick_options(1.0);
  o.preparation.automatic_masking = false;
  o.peak_enabled = o.profile_enabled = o.isophote_enabled = o.symmetry_enabled = false;
  const WorldCoord truth = test::test_truth(g, im);
  const auto no_mask = measure_photometric_centres(im, nullptr, o);
  Image mask = im.like(0.0);
  for (int y = 0; y < g.ny; ++y)
    for (int x = 0; x < g.nx; ++x)
      if (std::hypot(x - g.stars[0].x, y - g.stars[0].y) < 4.0) mask.at(x, y) = 1.0;
  const auto with_mask = measure_photometric_centres(im, &mask, o);
  REQUIRE(no_mask.find("photometric-centroid")->ok());
  REQUIRE(with_mask.find("photometric-centroid")->ok());
  const double e0 = separation_arcsec(truth, no_mask.find("photometric-centroid")->centre.position);
  const double e1 = separation_arcsec(truth, with_mask.find("photometric-centroid")->centre.position);
  CHECK(e0 > 0.1);
  CHECK(e1 < 0.05);
  CHECK(with_mask.user_masked_pixels > 30);
}

TEST_CASE("an image with no galaxy is refused with a reason", "[photometry][refusal]") {
  TestGalaxy g;
  g.total_flux = 0.0;
  const Image sky_only = test::make_test_image(g);
  auto s = measure_photometric_centres(sky_only, nullptr, quick_options(1.0));
  CHECK_FALSE(s.ok);
  CHECK(s.status() == "refused");
  CHECK(s.reason.rfind("no galaxy", 0) == 0);
  REQUIRE(s.centres.size() == 5);
  for (const auto& c : s.centres) {
    CHECK_FALSE(c.ok());
    CHECK(c.centre.reason == s.reason);
  }
  // A lone star is not a galaxy.
  g.stars = {{20.0, 20.0, 5e4}};
  const Image star_only = test::make_test_image(g);
  s = measure_photometric_centres(star_only, nullptr, quick_options(1.0));
  CHECK_FALSE(s.ok);
  CHECK(s.reason.find("none extended") != std::string::npos);
}

TEST_CASE("a flat image is refused with a reason", "[photometry][refusal]") {
  TestGalaxy g;
  Image im = test::make_test_image(g);
  std::fill(im.data.begin(), im.data.end(), 42.0);
  const auto s = measure_photometric_centres(im, nullptr, quick_options(1.0));
  CHECK_FALSE(s.ok);
  CHECK(s.reason.rfind("flat image", 0) == 0);
  for (const auto& c : s.centres) CHECK_FALSE(c.ok());
}

TEST_CASE("a saturated galaxy is refused with a reason", "[photometry][refusal]") {
  TestGalaxy g;
  g.n = 4.0;
  g.re_arcsec = 1.5;
  Image im = test::make_test_image(g);
  const double top = *std::max_element(im.data.begin(), im.data.end());
  // A clipped core (no header keyword): a plateau at the maximum.
  Image clipped = im;
  const double clip = g.sky + 0.3 * (top - g.sky);
  for (double& v : clipped.data) v = std::min(v, clip);
  auto s = measure_photometric_centres(clipped, nullptr, quick_options(1.0));
  CHECK_FALSE(s.ok);
  CHECK(s.reason.rfind("saturated", 0) == 0);
  for (const auto& c : s.centres) CHECK_FALSE(c.ok());
  // The SATURATE keyword (FITS common practice) is honoured too.
  Image keyword = im;
  std::string card = "SATURATE= " + std::to_string(g.sky + 0.5 * (top - g.sky));
  card.resize(80, ' ');
  keyword.header = card;
  s = measure_photometric_centres(keyword, nullptr, quick_options(1.0));
  CHECK_FALSE(s.ok);
  CHECK(s.reason.find("saturation level") != std::string::npos);
  // The unclipped image is fine.
  s = measure_photometric_centres(im, nullptr, quick_options(1.0));
  CHECK(s.ok);
}

TEST_CASE("an unusable image is an InputError", "[photometry][refusal]") {
  TestGalaxy g;
  const Image im = test::make_test_image(g);
  Image no_wcs = im;
  no_wcs.wcs = CelestialWcs();
  CHECK_THROWS_AS(measure_photometric_centres(no_wcs, nullptr, quick_options(1.0)), InputError);
  Image nan_image = im;
  std::fill(nan_image.data.begin(), nan_image.data.end(), std::nan(""));
  CHECK_THROWS_AS(measure_photometric_centres(nan_image, nullptr, quick_options(1.0)), InputError);
  Image small_mask;
  small_mask.nx = small_mask.ny = 10;
  small_mask.data.assign(100, 0.0);
  CHECK_THROWS_AS(measure_photometric_centres(im, &small_mask, quick_options(1.0)), InputError);
  // No PSF size, no beam, no seeing card and no star: refused with the reason.
  const PhotometrySummary no_psf = measure_photometric_centres(im, nullptr, quick_options(0.0));
  CHECK_FALSE(no_psf.ok);
  CHECK(no_psf.psf.source == "not-available");
  CHECK(no_psf.reason.find("`psf_fwhm_arcsec`") != std::string::npos);
  Image with_beam = im;
  with_beam.beam = Beam{1.0, 1.0, 0.0};
  CHECK(measure_photometric_centres(with_beam, nullptr, quick_options(0.0)).psf_fwhm_arcsec == 1.0);
}

#include "fulcrum/synth/mock_galaxy.hpp"

TEST_CASE("every estimator recovers the centre of synth mock optical images",
          "[photometry][centres][synth]") {
  // Mock optical images from synth::make_mock (Sérsic + PSF + sky + stars on
  // a rotated/flipped grid); truth: truth["photometric_centre"]. Tolerance
  // 0.1 arcsec at high S/N (issue).
  int k = 0;
  for (double n : {1.0, 4.0})
    for (double q : {0.3, 1.0}) {
      synth::MockGalaxy g;
      g.seed = 7 + k;
      g.optical.grid = {72, 72, 0.4, 30.0 + 70.0 * k, k % 2 == 1, "TAN"};
      g.optical.sersic_n = n;
      g.optical.re_arcsec = n > 2 ? 2.0 : 3.0;
      g.optical.q = q;
      g.optical.pa_deg = 25.0 + 40 * k;
      g.optical.offset_east_arcsec = 0.7;
      g.optical.offset_north_arcsec = -0.4;
      g.optical.n_stars = 3;
      ++k;
      const synth::MockProducts m = synth::make_mock(g);
      REQUIRE(m.optical);
      const WorldCoord truth{m.truth["truth"]["photometric_centre"]["ra_deg"].get<double>(),
                             m.truth["truth"]["photometric_centre"]["dec_deg"].get<double>()};
      PhotometryOptions o = quick_options(g.optical.psf_fwhm_arcsec, 4);
      const PhotometrySummary s = measure_photometric_centres(*m.optical, nullptr, o);
      INFO("n " << n << " q " << q << " " << s.reason);
      REQUIRE(s.ok);
      for (const auto& c : s.centres) {
        INFO(c.id() << ": " << c.centre.reason);
        REQUIRE(c.ok());
        const double err = separation_arcsec(truth, c.centre.position);
        INFO("error " << err << " arcsec");
        CHECK(err < 0.1);
      }
    }
}
