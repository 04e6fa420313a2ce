// Rotational asymmetry: zero at the centre of a noise-free symmetric
// galaxy, growing away from it; the minimiser finds the centre.
#include <catch2/catch.hpp>

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
