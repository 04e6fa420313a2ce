// A portable, seeded random number generator for mocks and resampling.
//
// std::mt19937_64 is specified bit for bit by the C++ standard, but the
// standard distributions (std::normal_distribution, ...) are not: they differ
// between library implementations. For byte-reproducible outputs everything
// here is built on the raw 64-bit engine output:
//  * uniform():  the top 53 bits of one engine output times 2^-53, in [0, 1);
//  * normal():   the Box-Muller transform (Box & Muller 1958, Ann. Math.
//                Stat. 29, 610), both variates of a pair are used;
//  * derive():   independent sub-streams seeded through SplitMix64 (Steele,
//                Lea & Flood 2014, "Fast splittable pseudorandom number
//                generators"), so that each part of a mock (line noise,
//                velocity noise, optical image, ...) draws from its own
//                stream and switching one part off does not change the others.
#pragma once

#include <cstdint>
#include <random>

namespace fulcrum::synth {

// One SplitMix64 step: a well-mixed 64-bit function of `x`.
std::uint64_t splitmix64(std::uint64_t x);

class Rng {
 public:
  explicit Rng(std::uint64_t seed) : engine_(splitmix64(seed)) {}
  // A generator for sub-stream `stream` of `seed`.
  static Rng derive(std::uint64_t seed, std::uint64_t stream) {
    return Rng(splitmix64(seed) ^ splitmix64(stream * 0x9E3779B97F4A7C15ULL + 0x632BE59BD9B4E019ULL));
  }
  std::uint64_t next() { return engine_(); }
  // Uniform in [0, 1).
  double uniform() { return static_cast<double>(engine_() >> 11) * 0x1.0p-53; }
  double uniform(double lo, double hi) { return lo + (hi - lo) * uniform(); }
  // Standard normal (mean 0, variance 1).
  double normal();

 private:
  std::mt19937_64 engine_;
  bool have_spare_ = false;
  double spare_ = 0.0;
};

}  // namespace fulcrum::synth
