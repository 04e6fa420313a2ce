// The one seeded random generator of a galaxy's analysis, and its normal
// deviates.
//
// Every random draw of the robustness analysis comes from one Generator per
// galaxy, seeded by the user (DESIGN.md §2): the same inputs and seed give the
// same numbers on every platform with an IEEE-754 libm. The uniform stream is
// std::mt19937_64 (its output sequence is fixed by the C++ standard); normal
// deviates use our own Box-Muller transform (Box & Muller 1958, Ann. Math.
// Stat. 29, 610) instead of std::normal_distribution, whose algorithm differs
// between standard libraries.
#pragma once

#include <cmath>
#include <cstdint>
#include <numbers>
#include <random>

namespace fulcrum::robustness {

class Generator {
 public:
  explicit Generator(std::uint64_t seed) : engine_(seed) {}

  // Uniform on the open interval (0, 1), 53 random bits.
  double uniform() {
    for (;;) {
      const double u = static_cast<double>(engine_() >> 11) * 0x1.0p-53;
      if (u > 0.0) return u;
    }
  }
  // Standard normal deviate (Box-Muller, both values of a pair are used).
  double normal() {
    if (has_spare_) {
      has_spare_ = false;
      return spare_;
    }
    const double u1 = uniform();
    const double u2 = uniform();
    const double r = std::sqrt(-2.0 * std::log(u1));
    const double t = 2.0 * std::numbers::pi * u2;
    spare_ = r * std::sin(t);
    has_spare_ = true;
    return r * std::cos(t);
  }
  // Uniform integer in [0, n), n > 0 (rejection sampling, no modulo bias).
  std::uint64_t below(std::uint64_t n) {
    const std::uint64_t limit = UINT64_MAX - UINT64_MAX % n;
    for (;;) {
      const std::uint64_t v = engine_();
      if (v < limit) return v % n;
    }
  }
  std::mt19937_64& engine() { return engine_; }

 private:
  std::mt19937_64 engine_;
  double spare_ = 0.0;
  bool has_spare_ = false;
};

}  // namespace fulcrum::robustness
