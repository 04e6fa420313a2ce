// Tests of the profile table (split/profile_table.hpp): its reads equal the
// projection engine's reads for the same pixels, angle and window up to
// rounding, and both equal the brute-force direct sum of exact pixel
// fractions; it keeps the engine's pixels and reports the engine's range and
// window; the batched read equals the single read bit for bit; a rebuilt
// table equals a fresh one bit for bit; the tile paths of its build (tiles
// wholly below, above, inside or across the window, and a set without
// tiles) give the same reads.
#include <catch2/catch.hpp>

#include <cmath>
#include <vector>

#include "fulcrum/core/random.hpp"
#include "fulcrum/split/half_split.hpp"
#include "fulcrum/split/profile_table.hpp"
#include "fulcrum/split/projection_engine.hpp"
#include "split_mock.hpp"

using namespace fulcrum;
using namespace fulcrum::split;

namespace {
// Table vs the engine's plain read: both evaluate the same exact sum, grouped
// differently (per-pixel prefix moments about segment anchors against block
// running sums and cut bins), so they differ by rounding only. Scale: the sum
// of |f| over the pixels (what the rounding of sums of ~1e3-1e4 terms, each
// below 1 in the fraction of a pixel, is relative to). Tolerance from double
// rounding with the conditioning bound of the header (<= 64^2 eps per term).
constexpr double kTableVsEngineTol = 1e-12;
// Table vs the direct sum: the engine test's tolerance.
constexpr double kTableRelTol = 1e-10;

double abs_sum(const PixelSet& px, int ch) {
  double a = 0.0;
  for (std::size_t i = 0; i < px.size(); ++i) a += std::abs(ch == 0 ? px.value[i] : px.variance_at(i));
  return a;
}
}  // namespace

TEST_CASE("profile table equals the engine and the direct sum", "[split][engine][table]") {
  for (double rot : {0.0, 27.0}) {
    for (bool flip : {false, true}) {
      for (bool aperture : {false, true}) {
        const SplitProblem pr = test::tiny_split_problem(rot, flip, aperture);
        fulcrum::Random g(17);
        // Pixel edges parallel to the line (B = 0), nearly parallel (B tiny:
        // the quadratic intervals go pixel by pixel), 45 degrees (w0 = 0), random.
        std::vector<double> angles{rot, rot + 90.0, rot + 1e-7, rot + 90.5, rot + 45.0};
        for (int k = 0; k < 4; ++k) angles.push_back(360.0 * g.uniform());
        for (double a : angles) {
          for (bool window : {false, true}) {
            EngineOptions eo;
            if (window) {
              eo.window_lo = -2.5;
              eo.window_hi = 3.0;
            }
            const ProjectionEngine e(pr.pixels, a * degrees, eo);
            for (int ch = 0; ch < e.channels(); ++ch) {
              ProfileTable t;
              t.rebuild(pr.pixels, a * degrees, eo.window_lo, eo.window_hi, ch);
              INFO("rot " << rot << " flip " << flip << " aperture " << aperture << " angle " << a << " window "
                          << window << " ch " << ch);
              const double scale = abs_sum(pr.pixels, ch);
              // The engine's pixels, range and window (the zero search reads them).
              CHECK(t.pixel_count() == e.pixel_count());
              CHECK(t.s_min() == e.s_min());
              CHECK(t.s_max() == e.s_max());
              CHECK(t.window_lo() == e.window_lo());
              CHECK(t.window_hi() == e.window_hi());
              CHECK(std::abs(t.total() - e.total(ch)) <= kTableVsEngineTol * scale);
              for (int k = 0; k < 40; ++k) {
                // Mostly inside the window, some outside (the direct sum answers).
                const double s = window ? -3.0 + 6.5 * g.uniform() : 24.0 * (g.uniform() - 0.5);
                const double ft = t.trailing(s), fe = e.trailing(s, ch);
                const double fd = direct_trailing(pr.pixels, a * degrees, s, ch);
                INFO("s " << s);
                CHECK(std::abs(ft - fe) <= kTableVsEngineTol * scale);
                CHECK(std::abs(ft - fd) <= kTableRelTol * std::abs(fd) + 1e-14 * scale);
              }
            }
          }
        }
      }
    }
  }
}

TEST_CASE("profile table: batched reads, rebuilt in place, dense reads", "[split][engine][table]") {
  const SplitProblem pr = test::tiny_split_problem(13.0);
  fulcrum::Random g(23);
  ProfileTable reused;
  for (int k = 0; k < 8; ++k) {
    const double a = k < 2 ? 13.0 + 90.0 * k : 360.0 * g.uniform();
    EngineOptions eo;
    eo.with_variance = false;
    eo.window_lo = -2.0;
    eo.window_hi = 2.0;
    const ProjectionEngine e(pr.pixels, a * degrees, eo);
    ProfileTable fresh;
    fresh.rebuild(pr.pixels, a * degrees, -2.0, 2.0, 0);
    // The previous build held another angle, window or channel.
    reused.rebuild(pr.pixels, a * degrees, -2.0, 2.0, 0);
    CHECK(reused.total() == fresh.total());
    // A dense run of s over the window and past it (every segment, their
    // edges and the constant parts beyond the pixels' reach).
    std::vector<double> s, out(801);
    for (int q = 0; q <= 800; ++q) s.push_back(-2.6 + 5.2 * q / 800.0);
    reused.trailing_many(s, out);
    const double scale = abs_sum(pr.pixels, 0);
    for (int q = 0; q <= 800; ++q) {
      INFO("angle " << a << " s " << s[q]);
      CHECK(out[q] == reused.trailing(s[q]));         // batched = single, bit for bit
      CHECK(reused.trailing(s[q]) == fresh.trailing(s[q]));  // rebuilt in place = fresh, bit for bit
      CHECK(std::abs(reused.trailing(s[q]) - e.trailing(s[q])) <= kTableVsEngineTol * scale);
    }
    // The asymmetry as the engine defines it.
    CHECK(std::abs(reused.asymmetry(0.3) - e.asymmetry(0.3)) <= kTableVsEngineTol * scale / std::abs(e.total()));
    reused.rebuild(pr.pixels, (a + 31.0) * degrees, k % 2 ? -3.0 : 1.0, k % 2 ? 1.0 : -1.0, k % 3 == 0 ? 1 : 0);
  }
  // A table of an empty set, and the variance channel of a set without
  // noise, answer 0.
  PixelSet empty;
  ProfileTable te;
  te.rebuild(empty, 10.0 * degrees, -1.0, 1.0, 0);
  CHECK(te.trailing(0.0) == 0.0);
  CHECK(te.total() == 0.0);
  PixelSet quiet = pr.pixels;
  quiet.uniform_variance = 0.0;
  quiet.variance.clear();
  te.rebuild(quiet, 10.0 * degrees, -1.0, 1.0, 1);
  CHECK(te.trailing(0.2) == 0.0);
}

TEST_CASE("profile table: tiles inside, across and beside the window, and no tiles", "[split][engine][table]") {
  // A 200 x 200 map of 0.1" pixels (49 tiles of 32 x 32, 20" across): a
  // window of a few arcsec has tiles wholly inside it, across its edges and
  // wholly below and above it (each a path of the build).
  test::TinyMock m;
  m.nx = m.ny = 200;
  m.pixel_arcsec = 0.1;
  m.rotation_deg = 33.0;
  m.scale_arcsec = 3.0;
  m.bmaj = 0.6;
  m.bmin = 0.5;
  m.rms = 0.02;
  const auto maps = test::make_tiny_mock(m);
  SplitOptions so;
  so.centre = m.centre;
  so.rms = 0.02;
  const SplitProblem pr = prepare_split(maps.map, so);
  REQUIRE(pr.pixels.tiles.size() == 49);
  PixelSet untiled = pr.pixels;  // one run of every pixel, classified one by one
  untiled.tiles.clear();
  fulcrum::Random g(29);
  const double scale = abs_sum(pr.pixels, 0);
  for (double a : {33.0, 78.0, 123.4, 200.0 + 360.0 * g.uniform()}) {
    for (const auto& [lo, hi] : {std::pair{-4.5, 3.5}, std::pair{-1.0, 1.2}, std::pair{6.0, 9.5}}) {
      EngineOptions eo;
      eo.with_variance = false;
      eo.window_lo = lo;
      eo.window_hi = hi;
      const ProjectionEngine e(pr.pixels, a * degrees, eo);
      ProfileTable t, tu;
      t.rebuild(pr.pixels, a * degrees, lo, hi, 0);
      tu.rebuild(untiled, a * degrees, lo, hi, 0);
      INFO("angle " << a << " window " << lo << " " << hi);
      CHECK(t.pixel_count() == e.pixel_count());
      CHECK(tu.pixel_count() == e.pixel_count());
      CHECK(t.s_min() == e.s_min());
      CHECK(t.s_max() == e.s_max());
      // The tiles' estimate of the kept pixels: the right size (it only
      // chooses the bin width and between a table and an engine).
      const double expected = ProfileTable::expected_pixels(pr.pixels, a * degrees, lo, hi);
      CHECK(expected >= 0.5 * double(e.pixel_count()));
      CHECK(expected <= 2.0 * double(e.pixel_count()) + 64.0);
      for (int k = 0; k < 12; ++k) {
        const double s = lo + (hi - lo) * g.uniform();
        const double fd = direct_trailing(pr.pixels, a * degrees, s);
        INFO("s " << s);
        CHECK(std::abs(t.trailing(s) - e.trailing(s)) <= kTableVsEngineTol * scale);
        CHECK(std::abs(tu.trailing(s) - e.trailing(s)) <= kTableVsEngineTol * scale);
        CHECK(std::abs(t.trailing(s) - fd) <= kTableRelTol * std::abs(fd) + 1e-14 * scale);
      }
    }
  }
  // Without a window the estimate is every pixel.
  CHECK(ProfileTable::expected_pixels(pr.pixels, 10.0 * degrees, 1.0, -1.0) == double(pr.pixels.size()));
}
