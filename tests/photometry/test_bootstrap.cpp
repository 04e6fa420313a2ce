// The noise bootstrap: its covariance matches the scatter of the estimator
// over independent noise realisations; it is reproducible.
#include <catch2/catch.hpp>

#include "fulcrum/photometry/bootstrap.hpp"
#include "fulcrum/photometry/centroid.hpp"
#include "sersic_test_image.hpp"

using namespace fulcrum;
using namespace fulcrum::photometry;

TEST_CASE("bootstrap error of the centroid matches the true scatter", "[photometry][bootstrap]") {
  test::TestGalaxy g;
  g.nx = g.ny = 32;
  g.x0 = 15.4;
  g.y0 = 15.8;
  g.total_flux = 3e3;
  g.noise = 2.0;
  const std::vector<double> model = test::test_galaxy_model(g);
  PreparationOptions po;
  po.psf_fwhm_arcsec = g.psf_fwhm_arcsec;
  // Fixed aperture from the noise-free geometry, so both sides measure the
  // same estimator.
  CentroidOptions co;
  co.aperture_radius_arcsec = 4.0;
  const int n = 100;
  double sxx = 0, syy = 0, mx = 0, my = 0;
  std::vector<PixelCoord> c;
  for (int k = 0; k < n; ++k) {
    const Image im = test::make_test_image(g, &model, 500 + k);
    const PreparedImage p = prepare_image(im, nullptr, po);
    REQUIRE(p.ok);
    const PixelEstimate e = estimate_centroid(p, p.data, co);
    REQUIRE(e.ok);
    c.push_back(e.centre);
    mx += e.centre.x / n;
    my += e.centre.y / n;
  }
  for (auto& p : c) {
    sxx += (p.x - mx) * (p.x - mx) / (n - 1);
    syy += (p.y - my) * (p.y - my) / (n - 1);
  }
  const Image im = test::make_test_image(g, &model, 9);
  const PreparedImage p = prepare_image(im, nullptr, po);
  BootstrapOptions bo;
  bo.draws = 100;
  auto est = [&](const std::vector<double>& d) { return estimate_centroid(p, d, co); };
  const BootstrapSummary b = bootstrap_centre(p, est, g.noise, "centroid", bo);
  REQUIRE(b.ok);
  // The variances come from 100 realisations and 100 draws (relative
  // errors 14% each, 20% for their ratio). The draws add the true noise
  // level. Measured ratio here: x 1.40, y 1.64 (1.3-1.6 with other draws
  // and realisations): the bootstrap errs on the large side
  // for this iterated-aperture centroid (the pipeline uses its closed-form
  // covariance, centroid.hpp). The bounds reject a bootstrap off by more
  // than that: [0.6, 2.5] lies > 3 sigma from both 1 and 1.5.
  const double rx = b.cov_pixels(0, 0) / sxx, ry = b.cov_pixels(1, 1) / syy;
  INFO("bootstrap/true variance: x " << rx << " y " << ry);
  CHECK(rx > 0.6);
  CHECK(rx < 2.5);
  CHECK(ry > 0.6);
  CHECK(ry < 2.5);
  // Reproducible: the same seed gives the same covariance.
  const BootstrapSummary b2 = bootstrap_centre(p, est, g.noise, "centroid", bo);
  CHECK(b2.cov_pixels == b.cov_pixels);
}
