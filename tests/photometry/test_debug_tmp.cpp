#include <catch2/catch.hpp>
#include <iostream>
#include "fulcrum/photometry/photometric_centres.hpp"
#include "fulcrum/sky/offset_frame.hpp"
#include "sersic_test_image.hpp"
using namespace fulcrum;
using namespace fulcrum::photometry;
using fulcrum::test::TestGalaxy;
static void run(TestGalaxy g) {
  Image im = test::make_test_image(g);
  PreparationOptions po; po.psf_fwhm_arcsec = g.psf_fwhm_arcsec;
  auto p = prepare_image(im, nullptr, po);
  std::cout << "ok " << p.ok << " " << p.reason << " bkg " << p.background.level << " rms " << p.background.rms << " seg area " << p.sources.galaxy_area_pixels << " radius " << p.radius_arcsec << "\n";
  for (auto& s : p.sources.sources) std::cout << " src " << s.centre.x << "," << s.centre.y << " r " << s.radius_pixels << " on " << s.on_galaxy << "\n";
  PhotometryOptions o; o.psf_fwhm_arcsec = g.psf_fwhm_arcsec; o.bootstrap.draws = 10;
  auto s = measure_photometric_centres(im, nullptr, o);
  const WorldCoord truth = test::test_truth(g, im);
  for (auto& c : s.centres)
    if (c.ok) std::cout << c.id << " err " << separation_arcsec(truth, c.world) << " sig " << std::sqrt(c.cov_arcsec2.trace()) << (c.id=="photometric-profile" ? c.details.dump() : "") << "\n";
    else std::cout << c.id << " FAILED " << c.reason << "\n";
}
TEST_CASE("dbg", "[dbg]") {
  TestGalaxy g;
  g.n = 4; g.q = 0.3; g.rotation_deg = 37; g.flip = true; run(g);
  g.oversample = 11; run(g);
  g.oversample = 21; run(g);
}
