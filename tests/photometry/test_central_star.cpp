// A bright foreground star 1-3 arcsec from the galaxy's centre: found,
// masked and reported, so every photometric centre stays on the galaxy.
// Truth: the centre the Sersic test image was drawn at (sersic_test_image.hpp,
// the published profile, independent of the estimators). Tolerance 0.3
// arcsec (the brief's example; the PSF FWHM is 1 arcsec, pixels 0.4 arcsec).
#include <catch2/catch.hpp>

#include <numbers>

#include "fulcrum/photometry/photometric_centres.hpp"
#include "fulcrum/sky/offset_frame.hpp"
#include "sersic_test_image.hpp"

using namespace fulcrum;
using namespace fulcrum::photometry;

namespace {

PhotometrySummary measure(const test::TestGalaxy& g, bool central_masking) {
  PhotometryOptions o;
  o.psf_fwhm_arcsec = g.psf_fwhm_arcsec;
  o.bootstrap.draws = 12;
  o.preparation.sources.mask_central_stars = central_masking;
  return measure_photometric_centres(test::make_test_image(g), nullptr, o);
}

// A star `offset` arcsec from the galaxy's centre towards position angle `pa`.
test::TestStar star_at(const test::TestGalaxy& g, double offset, double pa_deg, double flux) {
  const double a = pa_deg * std::numbers::pi / 180.0;
  const Eigen::Vector2d d = test::test_jacobian(g).inverse() * Eigen::Vector2d(offset * std::sin(a), offset * std::cos(a));
  return {g.x0 + d(0), g.y0 + d(1), flux};
}

}  // namespace

TEST_CASE("a bright star near the centre is masked and every centre stays on the galaxy",
          "[photometry][central-star]") {
  struct Case {
    double n, offset, pa, flux, rot;
    bool flip;
  };
  const Case cases[] = {{1.0, 1.2, 40.0, 3e4, 0.0, false},   {1.0, 2.0, 200.0, 6e4, 57.0, true},
                        {1.0, 3.0, 310.0, 2e4, 0.0, false},  {4.0, 1.5, 120.0, 4e4, 23.0, false},
                        {4.0, 2.2, 250.0, 3e4, 0.0, true}};
  for (const auto& c : cases) {
    test::TestGalaxy g;
    g.nx = g.ny = 56;
    g.x0 = 27.3;
    g.y0 = 28.1;
    g.n = c.n;
    g.re_arcsec = 2.5;
    g.rotation_deg = c.rot;
    g.flip = c.flip;
    g.stars = {star_at(g, c.offset, c.pa, c.flux)};
    const Image im = test::make_test_image(g);
    const WorldCoord truth = test::test_truth(g, im);
    const WorldCoord star = im.wcs.pixel_to_world({g.stars[0].x, g.stars[0].y});

    const PhotometrySummary s = measure(g, true);
    INFO("n " << c.n << ", star " << c.offset << " arcsec at PA " << c.pa << ", flux " << c.flux);
    REQUIRE(s.ok);
    if (c.offset < 2.5) {  // within the core-exclusion radius (2.5 PSF FWHM): subtracted and listed
      REQUIRE(s.stars_near_centre.size() == 1);
      CHECK(separation_arcsec(s.stars_near_centre[0].world, star) < 0.1);
      CHECK(s.stars_near_centre[0].offset_arcsec == Approx(c.offset).margin(0.3));
    } else {  // farther out: masked whole as a star on the galaxy
      CHECK(s.stars_near_centre.empty());
      CHECK(s.masked_sources_on_galaxy >= 1);
    }
    for (const auto& pc : s.centres) {
      INFO(pc.id() << " " << pc.centre.reason);
      REQUIRE(pc.ok());
      CHECK(separation_arcsec(pc.centre.position, truth) < 0.3);
    }
    // Without the central-star masking, the star pulls at least one centre
    // away by more than the tolerance (the test has teeth).
    const PhotometrySummary raw = measure(g, false);
    double worst = 0.0;
    for (const auto& pc : raw.centres)
      if (pc.ok()) worst = std::max(worst, separation_arcsec(pc.centre.position, truth));
      else worst = 1e9;
    INFO("worst error without masking: " << worst);
    if (c.offset < 2.5) CHECK(worst > 0.3);  // farther out the on-galaxy star search already masks it
  }
}

TEST_CASE("without a star near the centre nothing changes", "[photometry][central-star]") {
  for (double n : {1.0, 4.0}) {
    test::TestGalaxy g;
    g.nx = g.ny = 56;
    g.x0 = 27.3;
    g.y0 = 28.1;
    g.n = n;
    g.re_arcsec = 2.5;
    g.stars = {{6.0, 8.0, 2e4}};  // a field star far out
    const PhotometrySummary a = measure(g, true), b = measure(g, false);
    REQUIRE(a.ok);
    CHECK(a.stars_near_centre.empty());
    REQUIRE(a.centres.size() == b.centres.size());
    for (std::size_t i = 0; i < a.centres.size(); ++i) {
      INFO(a.centres[i].id());
      REQUIRE(a.centres[i].ok());
      CHECK(a.centres[i].centre.position.ra_deg == b.centres[i].centre.position.ra_deg);
      CHECK(a.centres[i].centre.position.dec_deg == b.centres[i].centre.position.dec_deg);
    }
  }
}
