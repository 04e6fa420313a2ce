// Pixel <-> world, offsets and position angles against astropy (python3-astropy):
// astropy.wcs.WCS.all_pix2world / all_world2pix, SkyCoord.position_angle, and a
// TAN projection about the reference for the (east, north) offsets.
#include <catch2/catch.hpp>

#include <cmath>
#include <fstream>
#include <numbers>
#include <random>

#include <nlohmann/json.hpp>

#include "../support/test_support.hpp"
#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/sky/offset_frame.hpp"
#include "fulcrum/sky/pixel_offsets.hpp"

using namespace fulcrum;

namespace {
Image make_grid(const std::string& proj, double rot_deg, bool flip, double scale_arcsec,
                WorldCoord crval, int nx, int ny) {
  const double s = scale_arcsec / 3600.0, r = rot_deg * std::numbers::pi / 180.0;
  const double px = flip ? 1.0 : -1.0;  // RA increases to the left normally
  // Columns of CD are the sky directions of +x and +y (intermediate world
  // coordinates, first row towards east): +y points to PA = rot, +x to
  // PA = rot - 90 deg (usual parity) or rot + 90 deg (flipped).
  double cd[2][2] = {{px * s * std::cos(r), s * std::sin(r)}, {-px * s * std::sin(r), s * std::cos(r)}};
  Image img;
  img.nx = nx;
  img.ny = ny;
  img.data.assign(img.size(), 1.0);
  img.wcs = CelestialWcs::from_cd(proj, {nx / 2.0 - 0.3, ny / 2.0 + 0.7}, crval, cd);
  img.unit = "Jy/beam.km/s";
  return img;
}
}  // namespace

TEST_CASE("pixel<->world, offsets and PAs agree with astropy", "[io][wcs][python]") {
  auto dir = test::temp_dir("wcsref");
  struct Case { std::string proj; double rot; bool flip; WorldCoord crval; };
  std::vector<Case> cases = {{"SIN", 0.0, false, {150.1, 20.2}},
                             {"TAN", 0.0, false, {10.0, -45.0}},
                             {"SIN", 37.5, false, {200.0, 60.0}},
                             {"TAN", -121.0, true, {359.99, 2.0}},
                             {"SIN", 210.0, true, {45.0, -80.0}},
                             {"ARC", 15.0, false, {120.0, 33.0}}};
  std::mt19937_64 rng(42);
  std::uniform_real_distribution<double> ux(-5.0, 205.0);
  nlohmann::json all = nlohmann::json::array();
  int k = 0;
  for (const auto& c : cases) {
    Image img = make_grid(c.proj, c.rot, c.flip, 0.37, c.crval, 200, 180);
    std::string file = (dir / ("grid" + std::to_string(k++) + ".fits")).string();
    write_image(file, img);
    Image back = read_image(file);
    OffsetFrame frame(c.crval);
    nlohmann::json pts = nlohmann::json::array(), pas = nlohmann::json::array();
    WorldCoord prev = back.wcs.pixel_to_world({0, 0});
    for (int i = 0; i < 50; ++i) {
      PixelCoord p{ux(rng), ux(rng)};
      WorldCoord w = back.wcs.pixel_to_world(p);
      PixelCoord p2 = back.wcs.world_to_pixel(w);
      CHECK(std::abs(p2.x - p.x) < 1e-8);
      CHECK(std::abs(p2.y - p.y) < 1e-8);
      SkyOffset o = frame.to_offset(w);
      WorldCoord w2 = frame.to_world(o);
      CHECK(separation_arcsec(w, w2) < 1e-7);
      pts.push_back({{"x", p.x}, {"y", p.y}, {"ra", w.ra_deg}, {"dec", w.dec_deg},
                     {"east", o.east}, {"north", o.north}});
      pas.push_back({{"ra1", prev.ra_deg}, {"dec1", prev.dec_deg}, {"ra2", w.ra_deg},
                     {"dec2", w.dec_deg}, {"pa", position_angle_deg(prev, w)},
                     {"sep", separation_arcsec(prev, w)}});
      prev = w;
    }
    // The offsets a whole grid holds (for TAN and SIN maps computed as
    // rotations, sky/zenithal_offsets.hpp) about a reference off CRVAL.
    const WorldCoord grid_ref{c.crval.ra_deg + 0.004, c.crval.dec_deg - 0.003};
    const PixelOffsets held(back, grid_ref);
    std::uniform_int_distribution<int> gx(0, back.nx - 1), gy(0, back.ny - 1);
    nlohmann::json grid_pts = nlohmann::json::array();
    for (int i = 0; i < 60; ++i) {
      const int x = gx(rng), y = gy(rng);
      const SkyOffset o = held.at(x, y);
      grid_pts.push_back({{"x", x}, {"y", y}, {"east", o.east}, {"north", o.north}});
    }
    GridOrientation g = grid_orientation(back.wcs, {100, 90});
    all.push_back({{"file", file}, {"ref_ra", c.crval.ra_deg}, {"ref_dec", c.crval.dec_deg},
                   {"points", pts}, {"pas", pas}, {"pa_plus_y", g.north_pa_of_plus_y_deg},
                   {"grid_ref_ra", grid_ref.ra_deg}, {"grid_ref_dec", grid_ref.dec_deg},
                   {"grid_points", grid_pts}});
  }
  std::string json = (dir / "points.json").string();
  std::ofstream(json) << all.dump();
  auto r = test::run_python("check_wcs.py", json);
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
}

TEST_CASE("grid orientation follows the CD matrix", "[sky][wcs]") {
  for (double rot : {0.0, 30.0, 135.0, 270.0}) {
    for (bool flip : {false, true}) {
      Image img = make_grid("TAN", rot, flip, 0.5, {80.0, 10.0}, 50, 50);
      GridOrientation g = grid_orientation(img.wcs, {25, 25});
      // 1e-4 deg: the meridians converge between the reference pixel and (25, 25).
      CHECK(std::abs(angle_diff_deg(g.north_pa_of_plus_y_deg, rot)) < 1e-4);
      CHECK(g.east_left_when_north_up == !flip);
      CHECK(std::abs(g.pixel_scale_x_arcsec - 0.5) < 1e-6);
      CHECK(std::abs(g.skew_deg) < 1e-6);
    }
  }
}
