// Rotational asymmetry: zero at the centre of a noise-free symmetric
// galaxy, growing away from it; the minimiser finds the centre.
#include <catch2/catch.hpp>

#include <cmath>
#include <random>

#include "fulcrum/photometry/symmetry.hpp"
#include "sersic_test_image.hpp"

using namespace fulcrum;
using namespace fulcrum::photometry;

TEST_CASE("asymmetry is minimal at the centre of a symmetric galaxy", "[photometry][symmetry]") {
  test::TestGalaxy g;
  g.q = 0.4;
  g.rotation_deg = 140.0;
  g.noise = 0.3;
  const Image im = test::make_test_image(g);
  PreparationOptions po;
  po.psf_fwhm_arcsec = g.psf_fwhm_arcsec;
  const PreparedImage p = prepare_image(im, nullptr, po);
  REQUIRE(p.ok);
  const PixelCoord truth{g.x0, g.y0};
  const double r = 1.5 * p.radius_arcsec;
  const double a0 = rotational_asymmetry(p, p.data, truth, truth, r);
  CHECK(rotational_asymmetry(p, p.data, {g.x0 + 0.5, g.y0}, truth, r) > a0);
  CHECK(rotational_asymmetry(p, p.data, {g.x0, g.y0 - 0.5}, truth, r) > a0);
  const PixelEstimate e = estimate_symmetry_centre(p, p.data);
  REQUIRE(e.ok);
  CHECK(std::hypot(e.centre.x - g.x0, e.centre.y - g.y0) < 0.02);
}

// A(c) of the definition above, pixel by pixel: the aperture's pixels in
// row order, each reflection read by bilinear() (prepared_image.hpp), the
// sums added one pixel after the other. The production sums run along rows
// in eight parts (symmetry.cpp), so they agree to round-off.
namespace {
double plain_asymmetry(const PreparedImage& p, const std::vector<double>& d, PixelCoord c, PixelCoord ac,
                       double r_arcsec) {
  double num = 0, den = 0;
  for (int y = 0; y < p.ny; ++y)
    for (int x = 0; x < p.nx; ++x) {
      const double f = d[x + p.nx * y];
      if (!std::isfinite(f) || p.to_sky(x - ac.x, y - ac.y).norm() > r_arcsec) continue;
      const double g = bilinear(d, p.nx, p.ny, 2 * c.x - x, 2 * c.y - y);
      if (!std::isfinite(g)) continue;
      num += std::abs(f - g);
      den += std::abs(f);
    }
  return num / den;
}
}  // namespace

TEST_CASE("the asymmetry sums agree with a pixel-by-pixel sum", "[photometry][symmetry]") {
  test::TestGalaxy g;
  g.nx = 61;
  g.ny = 53;
  g.rotation_deg = 25.0;
  g.noise = 2.0;
  const Image im = test::make_test_image(g);
  PreparationOptions po;
  po.psf_fwhm_arcsec = g.psf_fwhm_arcsec;
  PreparedImage p = prepare_image(im, nullptr, po);
  REQUIRE(p.ok);
  // Holes: single pixels and a short row, inside the aperture and where
  // reflections land.
  for (int i : {20 + 61 * 25, 21 + 61 * 25, 22 + 61 * 25, 30 + 61 * 30, 5 + 61 * 40}) p.data[i] = NAN;
  const PixelCoord ac{g.x0, g.y0};
  // Radii from inside the galaxy to past the grid's edges (reflections off
  // the grid), centres off the aperture's centre, on a pixel (t = 0) and on
  // the last column's reflection.
  for (double r : {3.0, 8.0, 30.0})
    for (PixelCoord c : {PixelCoord{g.x0, g.y0}, PixelCoord{g.x0 + 0.37, g.y0 - 1.21}, PixelCoord{23.0, 24.5},
                         PixelCoord{30.0, 26.0}, PixelCoord{10.25, 40.75}}) {
      const double a = rotational_asymmetry(p, p.data, c, ac, r);
      const double b = plain_asymmetry(p, p.data, c, ac, r);
      CAPTURE(r, c.x, c.y, a, b);
      CHECK(std::abs(a - b) <= 1e-13 * b);
    }
}

TEST_CASE("the symmetry centre's draws give the same centres as the estimator", "[photometry][symmetry]") {
  test::TestGalaxy g;
  g.noise = 3.0;
  const Image im = test::make_test_image(g);
  PreparationOptions po;
  po.psf_fwhm_arcsec = g.psf_fwhm_arcsec;
  PreparedImage p = prepare_image(im, nullptr, po);
  REQUIRE(p.ok);
  p.data[10 + p.nx * 12] = NAN;
  SymmetryOptions o;
  o.aperture_centre = PixelCoord{g.x0 + 0.2, g.y0 - 0.1};
  o.tolerance_pixels = 1e-3;
  const SymmetryDraws draws(p, o);
  std::mt19937_64 rng(7);
  std::normal_distribution<double> noise(0.0, 3.0);
  for (int k = 0; k < 5; ++k) {
    std::vector<double> d = p.data;
    for (double& v : d)
      if (std::isfinite(v)) v += noise(rng);
    const PixelEstimate a = estimate_symmetry_centre(p, d, o), b = draws.estimate(d);
    REQUIRE(a.ok);
    REQUIRE(b.ok);
    CHECK(a.centre.x == b.centre.x);
    CHECK(a.centre.y == b.centre.y);
    CHECK(a.details == b.details);
  }
}
