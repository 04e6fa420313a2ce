// Automatic masking: the galaxy is found, stars off and on it are masked,
// the galaxy's own nucleus is not.
#include <catch2/catch.hpp>

#include "fulcrum/photometry/prepared_image.hpp"
#include "sersic_test_image.hpp"

using namespace fulcrum;
using namespace fulcrum::photometry;

TEST_CASE("stars off and on the galaxy are masked, the nucleus is kept", "[photometry][mask]") {
  test::TestGalaxy g;
  g.n = 4.0;
  g.re_arcsec = 1.5;
  g.rotation_deg = 75.0;
  g.stars = {{6.0, 6.0, 3e4}, {g.x0 + 7.0, g.y0 + 3.0, 5e3}};
  const Image im = test::make_test_image(g);
  PreparationOptions po;
  po.psf_fwhm_arcsec = g.psf_fwhm_arcsec;
  const PreparedImage p = prepare_image(im, nullptr, po);
  REQUIRE(p.ok);
  auto masked = [&](double x, double y) {
    return static_cast<bool>(p.auto_masked[static_cast<int>(std::lround(x)) + p.nx * static_cast<int>(std::lround(y))]);
  };
  for (const auto& s : g.stars) CHECK(masked(s.x, s.y));
  CHECK_FALSE(masked(g.x0, g.y0));
  CHECK(p.galaxy[static_cast<int>(std::lround(g.x0)) + p.nx * static_cast<int>(std::lround(g.y0))]);
  // First guesses from the moments are near the truth.
  CHECK(std::hypot(p.guess.x - g.x0, p.guess.y - g.y0) < 0.5);
  // The sky of this small (19") field is biased high by the n = 4 galaxy's
  // wings, which cover every pixel at a few sigma: a known limitation of a
  // clipped sky on a field not much larger than the galaxy (documented in
  // docs/photometry.md; the profile fit's free background absorbs it).
  CHECK(p.background.level > g.sky);
  CHECK(p.background.level < g.sky + 10.0);
}
