// Offsets of TAN and SIN grids computed as rotations (sky/zenithal_offsets.hpp)
// against wcslib's per-pixel path (CelestialWcs::pixel_to_world, then
// OffsetFrame::to_offset): the same numbers to 1e-9 arcsec on rotated,
// flipped, polar and RA-wrapping grids, with headers in PC + CDELT + CUNIT,
// Dec before RA and a cube's spectral axis. (Against astropy: test_wcs.)
#include <catch2/catch.hpp>

#include <cmath>
#include <cstdio>
#include <numbers>
#include <string>

#include "fulcrum/sky/pixel_offsets.hpp"
#include "fulcrum/sky/zenithal_offsets.hpp"

using namespace fulcrum;

namespace {

CelestialWcs cd_wcs(const std::string& proj, double rot_deg, bool flip, double scale_arcsec, WorldCoord crval) {
  const double s = scale_arcsec / 3600.0, r = rot_deg * std::numbers::pi / 180.0;
  const double px = flip ? 1.0 : -1.0;
  double cd[2][2] = {{px * s * std::cos(r), s * std::sin(r)}, {-px * s * std::sin(r), s * std::cos(r)}};
  return CelestialWcs::from_cd(proj, {37.3, 81.6}, crval, cd);
}

std::string card(const std::string& key, const std::string& value) {
  char buf[81];
  std::snprintf(buf, sizeof buf, "%-8s= %-70s", key.c_str(), value.c_str());
  return std::string(buf, 80);
}

// The largest difference (arcsec) between the two paths over every pixel.
double worst_difference(const CelestialWcs& wcs, WorldCoord reference, int nx, int ny) {
  const OffsetFrame frame(reference);
  const auto fast = ZenithalOffsets::make(wcs, frame, nx, ny);
  REQUIRE(fast.has_value());
  double worst = 0.0;
  for (int y = 0; y < ny; y += 3)
    for (int x = 0; x < nx; x += 3) {
      SkyOffset f;
      REQUIRE(fast->at(x, y, f));
      const SkyOffset w = frame.to_offset(wcs.pixel_to_world({double(x), double(y)}));
      worst = std::max({worst, std::abs(f.east - w.east), std::abs(f.north - w.north)});
    }
  return worst;
}

}  // namespace

TEST_CASE("zenithal offsets equal wcslib's on rotated, flipped, polar and wrapping grids", "[sky][offsets]") {
  struct Case {
    const char* proj;
    double rot;
    bool flip;
    double scale;
    WorldCoord crval, reference;
  };
  const Case cases[] = {{"SIN", 0.0, false, 0.5, {150.1, 20.2}, {150.1, 20.2}},
                        {"TAN", 27.0, true, 0.2, {10.0, -45.0}, {10.001, -44.9995}},
                        {"SIN", -121.0, false, 1.5, {359.999, 1.0}, {0.0005, 1.001}},
                        {"TAN", 210.0, true, 0.3, {45.0, 89.98}, {60.0, 89.985}},
                        {"SIN", 75.0, false, 4.0, {300.0, -89.9}, {300.0, -89.9}}};
  for (const Case& c : cases) {
    INFO(c.proj << " rotated " << c.rot << " flipped " << c.flip << " at Dec " << c.crval.dec_deg);
    CHECK(worst_difference(cd_wcs(c.proj, c.rot, c.flip, c.scale, c.crval), c.reference, 180, 150) < 1e-9);
  }
}

TEST_CASE("zenithal offsets read PC, CDELT and CUNIT headers with Dec first and a spectral axis", "[sky][offsets]") {
  const double cr = std::cos(0.3), sr = std::sin(0.3);
  std::string h = card("SIMPLE", "T") + card("BITPIX", "-32") + card("NAXIS", "3") + card("NAXIS1", "120") +
                  card("NAXIS2", "100") + card("NAXIS3", "5") + card("CTYPE1", "'DEC--SIN'") +
                  card("CTYPE2", "'RA---SIN'") + card("CTYPE3", "'VRAD'") + card("CRVAL1", "-30.5") +
                  card("CRVAL2", "187.25") + card("CRVAL3", "1500000.0") + card("CRPIX1", "61.5") +
                  card("CRPIX2", "48.0") + card("CRPIX3", "1.0") + card("CDELT1", "0.25") +
                  card("CDELT2", "-0.25") + card("CDELT3", "10000.0") + card("CUNIT1", "'arcsec'") +
                  card("CUNIT2", "'arcsec'") + card("CUNIT3", "'m/s'") + card("PC1_1", std::to_string(cr)) +
                  card("PC1_2", std::to_string(-sr)) + card("PC2_1", std::to_string(sr)) +
                  card("PC2_2", std::to_string(cr)) + card("LONPOLE", "180.0") + card("EQUINOX", "2000.0");
  h += std::string(80 - 3, ' ').insert(0, "END");
  const CelestialWcs wcs = CelestialWcs::from_header(h, "dec-first.fits");
  REQUIRE(wcs.zenithal_chain().has_value());
  CHECK(worst_difference(wcs, {187.2501, -30.4999}, 120, 100) < 1e-9);
  // CDELT alone (wcslib keeps no PC x CDELT product for a unit PC matrix).
  std::string plain = card("SIMPLE", "T") + card("BITPIX", "-32") + card("NAXIS", "2") + card("NAXIS1", "90") +
                      card("NAXIS2", "70") + card("CTYPE1", "'RA---TAN'") + card("CTYPE2", "'DEC--TAN'") +
                      card("CRVAL1", "12.5") + card("CRVAL2", "40.25") + card("CRPIX1", "45.0") +
                      card("CRPIX2", "30.5") + card("CDELT1", "-0.0001") + card("CDELT2", "0.0001");
  plain += std::string(80 - 3, ' ').insert(0, "END");
  const CelestialWcs unit_pc = CelestialWcs::from_header(plain, "cdelt-only.fits");
  REQUIRE(unit_pc.zenithal_chain().has_value());
  CHECK(worst_difference(unit_pc, {12.5002, 40.2499}, 90, 70) < 1e-9);
}

TEST_CASE("projections other than TAN and SIN take wcslib's path", "[sky][offsets]") {
  const CelestialWcs arc = cd_wcs("ARC", 15.0, false, 0.4, {120.0, 33.0});
  CHECK_FALSE(arc.zenithal_chain().has_value());
  CHECK_FALSE(ZenithalOffsets::make(arc, OffsetFrame({120.0, 33.0}), 50, 40).has_value());
  // A PixelOffsets of such a grid is still right (wcslib's path).
  const PixelOffsets held(50, 40, arc, {120.0, 33.0});
  const SkyOffset w = OffsetFrame({120.0, 33.0}).to_offset(arc.pixel_to_world({13.0, 29.0}));
  CHECK(held.at(13, 29).east == w.east);
  CHECK(held.at(13, 29).north == w.north);
}

TEST_CASE("a SIN pixel beyond the projection's sphere is refused", "[sky][offsets]") {
  // Half-degree pixels (reference pixel 37.3, 81.6): 210 pixels from it is
  // past 90 deg, where SIN has no sky.
  const CelestialWcs wcs = cd_wcs("SIN", 0.0, false, 1800.0, {10.0, 0.0});
  const auto fast = ZenithalOffsets::make(wcs, OffsetFrame({10.0, 0.0}), 60, 60);
  REQUIRE(fast.has_value());
  SkyOffset o;
  CHECK(fast->at(40.0, 80.0, o));
  CHECK_FALSE(fast->at(250.0, 80.0, o));
}
