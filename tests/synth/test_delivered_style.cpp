// `fulcrum synth --as-delivered`: the files carry what docs/synth.md
// promises (BLANK = -999 on 32-bit floats, +inf and 1e38 errors, isolated
// wild pixels, long HISTORY, the SIN projection), read back with astropy
// (tests/python/check_delivered_mock.py); the library's counts agree with
// the maps it returns; bad settings are one-line errors.
#include <catch2/catch.hpp>

#include <cmath>

#include "../support/test_support.hpp"
#include "fulcrum/core/error.hpp"
#include "fulcrum/synth/mock_galaxy.hpp"

using namespace fulcrum;
using namespace fulcrum::synth;

TEST_CASE("delivered-style mock files read back with astropy", "[synth][delivered][python]") {
  const auto dir = test::temp_dir("delivered") / "m";
  const auto r = test::run_fulcrum("synth --as-delivered --grid-projection SIN --grid-nx 96 --grid-ny 96 "
                                   "--optical-enabled=false --out " + dir.string());
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
  const auto py = test::run_python("check_delivered_mock.py", dir.string() + " SIN");
  INFO(py.out << py.err);
  CHECK(py.exit_code == 0);
}

TEST_CASE("delivered-style maps: the counts match the maps", "[synth][delivered]") {
  MockGalaxy g;
  g.grid.nx = g.grid.ny = 80;
  g.optical.enabled = false;
  g.delivered.enabled = true;
  g.delivered.scattered_pixels = 120;
  g.delivered.failed_fit_pixels_outside = 40;
  const MockProducts p = make_mock(g);
  REQUIRE(p.delivered);
  const auto& d = *p.delivered;
  int inf = 0, huge = 0, lonely = 0, wild = 0;
  for (double v : d.velocity_error.data) {
    inf += std::isinf(v);
    huge += v == 1e38;
  }
  CHECK(inf + huge == d.summary["failed_fits_inside_galaxy"].get<int>() + 40);
  CHECK(d.summary["scattered_pixels"] == 120);
  CHECK(d.summary["vel_err.fits"]["plus_inf"] == inf);
  for (int y = 1; y < d.velocity.ny - 1; ++y)
    for (int x = 1; x < d.velocity.nx - 1; ++x) {
      if (d.velocity.at(x, y) == -999.0 || !std::isnan(p.velocity.at(x, y))) continue;
      ++wild;  // a velocity where the clean mock has none
      bool alone = true;
      for (int dy = -1; dy <= 1; ++dy)
        for (int dx = -1; dx <= 1; ++dx)
          if ((dx || dy) && d.velocity.at(x + dx, y + dy) != -999.0) alone = false;
      lonely += alone;
    }
  CHECK(wild == 120);
  CHECK(lonely == 120);
  int nan = 0;
  for (double v : d.velocity.data) nan += std::isnan(v);
  CHECK(nan == 0);
  CHECK(d.history.size() == 150);
  // Reproducible: the same seed gives the same maps.
  CHECK(make_mock(g).delivered->velocity.data == d.velocity.data);
  g.delivered.failed_fit_fraction = 0.9;
  CHECK_THROWS_AS(validate_mock(g), InputError);
}
