// Tests of the pixel-fraction kernel and the projection engine: the engine's
// trailing/leading sums equal the brute-force direct sum of exact pixel
// fractions (split/projection_engine.hpp) for random centres and angles, on
// unrotated, rotated and flipped grids, with and without an aperture.
#include <catch2/catch.hpp>

#include <cmath>

#include "fulcrum/core/random.hpp"
#include "fulcrum/split/half_split.hpp"
#include "fulcrum/split/pixel_fraction.hpp"
#include "fulcrum/split/projection_engine.hpp"
#include "split_mock.hpp"

using namespace fulcrum;
using namespace fulcrum::split;

namespace {
// Engine vs direct sum: both are exact, they differ only by rounding in sums
// of ~1e4 terms (exact arithmetic identity; tolerance from double rounding).
constexpr double kEngineRelTol = 1e-10;
}  // namespace

TEST_CASE("trapezoid cumulative: box, triangle and symmetry", "[split]") {
  // Unit square, normal along +x: a box of width 1 (analytic: 1/2 + t).
  Eigen::Matrix2d J = Eigen::Matrix2d::Identity();
  PixelTrapezoid box(J, {1.0, 0.0});
  CHECK(box.B == 0.0);
  CHECK(box.below(0.25) == Approx(0.75).epsilon(1e-15));
  CHECK(box.below(-0.5) == 0.0);
  CHECK(box.below(0.6) == 1.0);
  // Unit square, normal at 45 deg: a triangle of half-width sqrt(2)/2;
  // the area of a unit square below x + y = t*sqrt(2) (t in [-w1, 0]) is
  // (t + w1)^2 (geometry of a corner triangle: legs sqrt(2)(t + w1)).
  const double r = std::sqrt(0.5);
  PixelTrapezoid tri(J, {r, r});
  CHECK(tri.w0 == Approx(0.0).margin(1e-15));
  const double t = -0.3;
  CHECK(tri.below(t) == Approx((t + r) * (t + r)).epsilon(1e-13));
  for (double u : {-0.6, -0.2, 0.0, 0.1, 0.5})
    CHECK(tri.below(u) + tri.above(u) == Approx(1.0).epsilon(1e-15));
}

TEST_CASE("engine equals the direct sum for random centres and angles", "[split][engine]") {
  for (double rot : {0.0, 27.0, 90.0}) {
    for (bool flip : {false, true}) {
      for (bool aperture : {false, true}) {
        const SplitProblem pr = test::tiny_split_problem(rot, flip, aperture);
        fulcrum::Random g(11);
        // Include angles where a pixel edge is parallel to the line (B = 0).
        std::vector<double> angles{rot, rot + 90.0, rot + 45.0};
        for (int k = 0; k < 5; ++k) angles.push_back(360.0 * g.uniform());
        for (double a : angles) {
          const ProjectionEngine e(pr.pixels, a * degrees);
          for (int k = 0; k < 20; ++k) {
            const SkyOffset c{8.0 * (g.uniform() - 0.5), 8.0 * (g.uniform() - 0.5)};
            const HalfSums he = e.halves(c);
            const HalfSums hd = direct_halves(pr.pixels, a * degrees, c);
            const double scale = std::abs(hd.leading) + std::abs(hd.trailing);
            INFO("rot " << rot << " flip " << flip << " aperture " << aperture << " angle " << a);
            CHECK(std::abs(he.leading - hd.leading) <= kEngineRelTol * std::abs(hd.leading) + 1e-14 * scale);
            CHECK(std::abs(he.trailing - hd.trailing) <= kEngineRelTol * std::abs(hd.trailing) + 1e-14 * scale);
            CHECK(he.leading_var == Approx(hd.leading_var).epsilon(kEngineRelTol));
            CHECK(he.trailing_var == Approx(hd.trailing_var).epsilon(kEngineRelTol));
          }
          // Far outside: one half holds everything.
          CHECK(e.trailing(e.s_max() + 1.0) == Approx(e.total()).epsilon(1e-12));
          CHECK(e.trailing(e.s_min() - 1.0) == 0.0);
        }
      }
    }
  }
}

TEST_CASE("engine is exact for any bin width", "[split][engine]") {
  test::TinyMock m;
  m.rotation_deg = 13.0;
  const auto maps = test::make_tiny_mock(m);
  SplitOptions so;
  so.centre = m.centre;
  const SplitProblem pr = prepare_split(maps.model, so);
  fulcrum::Random g(3);
  for (double width : {0.001, 0.05, 0.4, 3.0, 50.0}) {
    const double a = 360.0 * g.uniform();
    const ProjectionEngine e(pr.pixels, a * degrees, {width, false});
    for (int k = 0; k < 30; ++k) {
      const double s = 20.0 * (g.uniform() - 0.5);
      CHECK(e.trailing(s) == Approx(direct_trailing(pr.pixels, a * degrees, s)).epsilon(kEngineRelTol).margin(1e-14));
    }
  }
}

TEST_CASE("an engine rebuilt in place equals a freshly built one bit for bit", "[split][engine]") {
  // rebuild() reuses storage only (projection_engine.hpp): every sum must be
  // the identical double, whatever the previous build held (windowed or
  // whole map, with or without variance, another angle).
  const SplitProblem pr = test::tiny_split_problem(21.0);
  fulcrum::Random g(5);
  ProjectionEngine reused;
  CHECK(reused.trailing(0.0) == 0.0);  // an empty engine answers 0
  EngineScratch scratch;
  for (int k = 0; k < 12; ++k) {
    const double a = 360.0 * g.uniform();
    EngineOptions o;
    o.with_variance = k % 3 != 0;
    if (k % 2) {
      o.window_lo = -1.0 - 2.0 * g.uniform();
      o.window_hi = 1.0 + 2.0 * g.uniform();
    }
    const ProjectionEngine fresh(pr.pixels, a * degrees, o);
    reused.rebuild(pr.pixels, a * degrees, o, k % 4 == 1 ? nullptr : &scratch);
    REQUIRE(reused.channels() == fresh.channels());
    CHECK(reused.pixel_count() == fresh.pixel_count());
    CHECK(reused.bin_width() == fresh.bin_width());
    for (int ch = 0; ch < fresh.channels(); ++ch) CHECK(reused.total(ch) == fresh.total(ch));
    for (int q = 0; q < 25; ++q) {
      const double s = 6.0 * (g.uniform() - 0.5);
      for (int ch = 0; ch < fresh.channels(); ++ch) CHECK(reused.trailing(s, ch) == fresh.trailing(s, ch));
    }
  }
}
