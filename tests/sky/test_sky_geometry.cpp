// Sky geometry: offsets, position angles, ellipses, disc coordinates and
// half-planes on rotated and flipped grids. References: the spherical
// position-angle formula (verified against astropy in test_wcs),
// and the thin-disc projection of the tilted-ring model (Begeman 1989).
#include <catch2/catch.hpp>

#include <cmath>
#include <numbers>
#include <utility>
#include <vector>

#include "fulcrum/io/image.hpp"
#include "fulcrum/sky/ellipse.hpp"
#include "fulcrum/sky/pixel_offsets.hpp"

using namespace fulcrum;

namespace {
CelestialWcs grid_wcs(double rot_deg, bool flip, double scale_arcsec, WorldCoord crval, PixelCoord crpix) {
  const double s = scale_arcsec / 3600.0, r = rot_deg * std::numbers::pi / 180.0;
  const double px = flip ? 1.0 : -1.0;
  double cd[2][2] = {{px * s * std::cos(r), s * std::sin(r)}, {-px * s * std::sin(r), s * std::cos(r)}};
  return CelestialWcs::from_cd("SIN", crpix, crval, cd);
}
}  // namespace

TEST_CASE("angles wrap to the PA convention", "[sky][angle]") {
  CHECK(wrap_pa_deg(-10.0) == Approx(350.0));
  CHECK(wrap_pa_deg(720.5) == Approx(0.5));
  CHECK(wrap_pa_deg(360.0) == 0.0);
  CHECK(angle_diff_deg(10.0, 350.0) == Approx(20.0));
  CHECK(angle_diff_deg(350.0, 10.0) == Approx(-20.0));
  CHECK((90.0 * degrees).rad() == Approx(std::numbers::pi / 2));
  CHECK(SkyOffset{1.0, 0.0}.pa_deg() == Approx(90.0));   // east
  CHECK(SkyOffset{0.0, -1.0}.pa_deg() == Approx(180.0)); // south
  CHECK(SkyOffset{-1.0, 0.0}.pa_deg() == Approx(270.0)); // west
}

TEST_CASE("a sky half-plane selects the right pixels on any grid", "[sky][halfplane]") {
  const WorldCoord centre{210.0, 35.0};
  for (double rot : {0.0, 47.0, 180.0, 293.0}) {
    for (bool flip : {false, true}) {
      CelestialWcs wcs = grid_wcs(rot, flip, 0.4, centre, {20.3, 18.7});
      PixelOffsets grid(41, 39, wcs, centre);
      for (double tail : {0.0, 75.0, 300.0}) {
        const double lead = wrap_pa_deg(tail + 180.0);
        const SkyOffset n = direction_of(lead * degrees);
        int agree = 0, total = 0;
        for (int y = 0; y < 39; ++y)
          for (int x = 0; x < 41; ++x) {
            SkyOffset o = grid.at(x, y);
            const double s = n.east * o.east + n.north * o.north;
            if (std::abs(s) < 1e-3) continue;
            const double pa = position_angle_deg(centre, wcs.pixel_to_world({double(x), double(y)}));
            const bool leading_by_pa = std::abs(angle_diff_deg(pa, lead)) < 90.0;
            agree += (leading_by_pa == (s > 0));
            ++total;
          }
        CHECK(agree == total);
      }
    }
  }
}

TEST_CASE("pixel offsets and Jacobian match the CD matrix", "[sky][offsets]") {
  CelestialWcs wcs = grid_wcs(30.0, false, 0.25, {10.0, -20.0}, {50.0, 50.0});
  PixelOffsets grid(101, 101, wcs, {10.0, -20.0});
  const SkyOffset c = grid.at(50, 50);
  CHECK(std::abs(c.east) < 1e-9);
  CHECK(std::abs(c.north) < 1e-9);
  CHECK(grid.pixel_scale_arcsec() == Approx(0.25).epsilon(1e-9));
  CHECK(grid.max_jacobian_variation() < 1e-6);
  // +y points to PA 30: one pixel up is 0.25" towards PA 30.
  const SkyOffset up = grid.at(50, 51) - c;
  CHECK(up.pa_deg() == Approx(30.0).epsilon(1e-6));
  CHECK(up.norm() == Approx(0.25).epsilon(1e-6));
  PixelCoord p = grid.offset_to_pixel_linear(grid.at(70, 20));
  CHECK(p.x == Approx(70.0).margin(1e-5));
  CHECK(p.y == Approx(20.0).margin(1e-5));
}

// A WCS that keeps its grid's world positions (CelestialWcs::keep_grid_world)
// gives the same offsets, bit for bit, to itself and to every copy, made
// before or after; a grid of another size is computed afresh (exact: the
// kept numbers are wcslib's own).
TEST_CASE("pixel offsets from a kept grid are identical to computed ones", "[sky][offsets]") {
  CelestialWcs wcs = grid_wcs(30.0, false, 0.25, {10.0, -20.0}, {50.0, 50.0});
  const CelestialWcs before = wcs;
  const PixelOffsets fresh(61, 57, wcs, {10.0001, -20.0002});
  CHECK(wcs.kept_grid_world(61, 57) == nullptr);
  wcs.keep_grid_world(61, 57);
  REQUIRE(wcs.kept_grid_world(61, 57) != nullptr);
  CHECK(before.kept_grid_world(61, 57) != nullptr);
  const CelestialWcs after = wcs;
  CHECK(wcs.kept_grid_world(60, 57) == nullptr);
  for (const CelestialWcs* w : {static_cast<const CelestialWcs*>(&wcs), &before, &after}) {
    const PixelOffsets kept(61, 57, *w, {10.0001, -20.0002});
    CHECK(kept.east() == fresh.east());
    CHECK(kept.north() == fresh.north());
    CHECK(kept.jacobian() == fresh.jacobian());
  }
}

// Offsets streamed a band of rows at a time (grid_row_offsets) are the
// numbers a PixelOffsets holds, bit for bit, with and without a kept grid; a
// PixelOffsets of the geometry only has the same frame and Jacobian.
TEST_CASE("pixel offsets streamed by rows equal the held ones", "[sky][offsets]") {
  CelestialWcs wcs = grid_wcs(-35.0, true, 0.3, {10.0, -20.0}, {60.0, 30.0});
  const int nx = 113, ny = 71;  // 8023 pixels: crosses the 4096-pixel chunks
  const WorldCoord ref{10.0002, -19.9999};
  const PixelOffsets held(nx, ny, wcs, ref);
  const PixelOffsets geometry(nx, ny, wcs, ref, PixelOffsets::Holds::geometry_only);
  CHECK_FALSE(geometry.holds_pixels());
  CHECK(geometry.jacobian() == held.jacobian());
  CHECK(geometry.max_jacobian_variation() == held.max_jacobian_variation());
  for (bool kept : {false, true}) {
    if (kept) wcs.keep_grid_world(nx, ny);
    std::vector<double> east, north;
    for (auto [y0, y1] : {std::pair{0, 13}, {13, 50}, {50, 50}, {50, 71}}) {
      std::vector<double> e(static_cast<std::size_t>(nx) * (y1 - y0)), n(e.size());
      grid_row_offsets(wcs, held.frame(), nx, ny, y0, y1, e.data(), n.data());
      east.insert(east.end(), e.begin(), e.end());
      north.insert(north.end(), n.begin(), n.end());
    }
    INFO("kept grid " << kept);
    CHECK(east == held.east());
    CHECK(north == held.north());
  }
}

TEST_CASE("ellipses and disc coordinates", "[sky][ellipse]") {
  SkyEllipse e{{1.0, -2.0}, 40.0 * degrees, 10.0, 0.5};
  for (double t = 0; t < 6.28; t += 0.3) CHECK(e.scaled_radius(e.point_at(t)) == Approx(1.0).epsilon(1e-12));
  // With the PA's sine and cosine given: the same number, bit for bit.
  for (SkyOffset p : {SkyOffset{3.0, 4.0}, SkyOffset{-7.5, 0.25}, SkyOffset{1.0, -2.0}, SkyOffset{12.0, 9.0}}) {
    CHECK(e.scaled_radius(p, e.pa.sin(), e.pa.cos()) == e.scaled_radius(p));
    CHECK(e.contains(p, e.pa.sin(), e.pa.cos()) == e.contains(p));
  }
  // The end of the major axis is at PA 40 from the centre.
  CHECK((e.point_at(0.0) - e.centre).pa_deg() == Approx(40.0));
  CHECK((e.point_at(0.0) - e.centre).norm() == Approx(10.0));
  CHECK((e.point_at(std::numbers::pi / 2) - e.centre).norm() == Approx(5.0));
  // Disc plane: a point on the receding major axis has cos(theta) = 1, and a
  // point on the minor axis at sky distance d has R = d / cos(i).
  const Angle pa = 40.0 * degrees, inc = 60.0 * degrees;
  DiscPoint d = disc_coordinates(direction_of(pa) * 3.0, {}, pa, inc);
  CHECK(d.radius_arcsec == Approx(3.0));
  CHECK(d.cos_theta == Approx(1.0));
  d = disc_coordinates(direction_of(pa + 90.0 * degrees) * 2.0, {}, pa, inc);
  CHECK(d.radius_arcsec == Approx(4.0));
  CHECK(d.sin_theta == Approx(1.0));
}
