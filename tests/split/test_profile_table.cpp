// Tests of the profile table (split/profile_table.hpp): its reads equal the
// engine's per-query reads up to rounding, and both equal the brute-force
// direct sum of exact pixel fractions; the batched read equals the single
// read bit for bit; an engine without block moments gives the same table.
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
              t.rebuild(e, ch);
              const double scale = abs_sum(pr.pixels, ch);
              for (int k = 0; k < 40; ++k) {
                // Mostly inside the window, some outside (the engine answers).
                const double s = window ? -3.0 + 6.5 * g.uniform() : 24.0 * (g.uniform() - 0.5);
                const double ft = t.trailing(s), fe = e.trailing(s, ch);
                const double fd = direct_trailing(pr.pixels, a * degrees, s, ch);
                INFO("rot " << rot << " flip " << flip << " aperture " << aperture << " angle " << a << " window "
                            << window << " ch " << ch << " s " << s);
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

TEST_CASE("profile table: batched reads, an engine without block moments, dense reads", "[split][engine][table]") {
  const SplitProblem pr = test::tiny_split_problem(13.0);
  fulcrum::Random g(23);
  ProjectionEngine full, lean;
  ProfileTable tf, tl;
  for (int k = 0; k < 8; ++k) {
    const double a = k < 2 ? 13.0 + 90.0 * k : 360.0 * g.uniform();
    EngineOptions eo;
    eo.with_variance = false;
    eo.window_lo = -2.0;
    eo.window_hi = 2.0;
    full.rebuild(pr.pixels, a * degrees, eo);
    eo.block_moments = false;
    lean.rebuild(pr.pixels, a * degrees, eo);
    CHECK(lean.total(0) == full.total(0));
    tf.rebuild(full, 0);
    tl.rebuild(lean, 0);
    // A dense run of s over the window and past it (every segment, their
    // edges and the constant parts beyond the pixels' reach).
    std::vector<double> s, out(801);
    for (int q = 0; q <= 800; ++q) s.push_back(-2.6 + 5.2 * q / 800.0);
    tl.trailing_many(s, out);
    const double scale = abs_sum(pr.pixels, 0);
    for (int q = 0; q <= 800; ++q) {
      INFO("angle " << a << " s " << s[q]);
      CHECK(out[q] == tl.trailing(s[q]));       // batched = single, bit for bit
      CHECK(tl.trailing(s[q]) == tf.trailing(s[q]));  // the engine's moments are not read
      CHECK(std::abs(tl.trailing(s[q]) - full.trailing(s[q])) <= kTableVsEngineTol * scale);
    }
    // The asymmetry as the engine defines it.
    CHECK(std::abs(tl.asymmetry(0.3) - full.asymmetry(0.3)) <= kTableVsEngineTol * scale / std::abs(full.total()));
  }
  // An engine without block moments still answers exactly (its direct sum),
  // and once it adds them it is the engine built with them, bit for bit.
  CHECK(lean.trailing(0.1) == Approx(direct_trailing(pr.pixels, lean.tail_pa(), 0.1)).epsilon(kTableRelTol));
  for (bool var : {false, true}) {
    EngineOptions eo;
    eo.with_variance = var;
    eo.window_lo = -1.5;
    eo.window_hi = 2.5;
    const ProjectionEngine built(pr.pixels, 77.0 * degrees, eo);
    eo.block_moments = false;
    ProjectionEngine added(pr.pixels, 77.0 * degrees, eo);
    added.add_block_moments();
    REQUIRE(built.channels() == (var ? 2 : 1));
    for (int ch = 0; ch < built.channels(); ++ch) {
      CHECK(added.total(ch) == built.total(ch));
      for (int q = 0; q <= 100; ++q) CHECK(added.trailing(-1.5 + 0.04 * q, ch) == built.trailing(-1.5 + 0.04 * q, ch));
    }
  }
  // A table of an empty engine answers 0.
  ProjectionEngine empty;
  ProfileTable te;
  te.rebuild(empty, 0);
  CHECK(te.trailing(0.0) == 0.0);
}
