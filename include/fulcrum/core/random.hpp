// The project's one seeded random generator, and how to derive independent
// streams from one seed.
//
// Every random draw in fulcrum (bootstrap draws, tail-direction resampling,
// photometric noise realisations, mock galaxies, calibration mocks) comes
// from a Random: the same seed gives the same numbers on every platform with
// an IEEE-754 libm (DESIGN.md section 2).
//
//  * The engine is std::mt19937_64, whose output sequence is fixed by the
//    C++ standard ([rand.predef]); the standard distributions are not (they
//    differ between standard libraries), so every deviate is built here on
//    the raw 64-bit output.
//  * uniform(): the top 53 bits of one engine output times 2^-53, on the
//    OPEN interval (0, 1) (an exact 0 is drawn again; it has probability
//    2^-53). uniform(lo, hi) = lo + (hi - lo) * uniform().
//  * normal(): the Box-Muller transform (Box & Muller 1958, Ann. Math. Stat.
//    29, 610) on u1 = 1 - uniform() and u2 = uniform(): r = sqrt(-2 ln u1), t = 2 pi u2,
//    returns r cos t, then r sin t on the next call.
//  * normal_ziggurat(): a standard normal deviate by the ziggurat method
//    (Marsaglia & Tsang 2000, J. Stat. Softw. 5(8)), 256 layers, about 1.5
//    times faster than normal() (21 against 32 ns per deviate measured on a
//    loaded machine, 9 ns of it the engine); used where millions are drawn
//    (the photometric bootstrap's noise images). One engine output per try:
//    its low 8 bits pick the layer, bit 8 the sign and its top 53 bits the
//    position, so the layer and the value are independent (the flaw of the
//    original 32-bit version, Doornik 2005); the base layer's tail beyond
//    r = 3.6541528853610088 by Marsaglia's (1964) exponential method. Its
//    sequence differs from normal()'s for the same seed.
//  * below(n): a whole number in [0, n) by rejection (no modulo bias).
//
// Streams. Random(seed) seeds the engine with `seed` itself. Independent
// streams of one seed come from Random::stream(seed, id): the engine is
// seeded with splitmix64(splitmix64(seed) ^ splitmix64(id * phi + c)),
// where splitmix64 is the SplitMix64 step of Steele, Lea & Flood (2014,
// "Fast splittable pseudorandom number generators", OOPSLA), phi =
// 0x9E3779B97F4A7C15 (2^64 / golden ratio) and c = 0x632BE59BD9B4E019.
// Each part of a mock (line noise, velocity noise, holes, optical image,
// cube noise) and each bootstrap draw of a photometric centre has its own
// stream, so switching one part off does not change the numbers of the
// others, and parallel loops draw the same numbers in any order.
// docs/conventions.md lists the stream ids in use.
#pragma once

#include <cstddef>
#include <cstdint>
#include <random>

namespace fulcrum {

// SplitMix64 finaliser (Steele, Lea & Flood 2014): a bijective, well-mixed
// function of z (two xor-shift-multiply rounds).
std::uint64_t splitmix64_mix(std::uint64_t z);
// One SplitMix64 step: splitmix64_mix(x + 0x9E3779B97F4A7C15).
std::uint64_t splitmix64(std::uint64_t x);

class Random {
 public:
  explicit Random(std::uint64_t seed) : engine_(seed) {}
  // Independent stream `id` of `seed` (see above).
  static Random stream(std::uint64_t seed, std::uint64_t id);

  // Uniform on the open interval (0, 1), 53 random bits.
  double uniform() {
    for (;;) {
      const double u = static_cast<double>(engine_() >> 11) * 0x1.0p-53;
      if (u > 0.0) return u;
    }
  }
  // Uniform on (lo, hi) (up to rounding at the ends).
  double uniform(double lo, double hi) { return lo + (hi - lo) * uniform(); }
  // Standard normal deviate (Box-Muller; both values of a pair are used).
  double normal();
  // Standard normal deviate (ziggurat; see above).
  double normal_ziggurat();
  // n of them into out[0 .. n - 1]: the same numbers as n calls of
  // normal_ziggurat(), without a call per deviate.
  void normal_ziggurat(double* out, std::size_t n);
  // Uniform whole number in [0, n), n > 0.
  std::uint64_t below(std::uint64_t n);
  // The raw engine output (64 random bits).
  std::uint64_t bits() { return engine_(); }

 private:
  std::mt19937_64 engine_;
  double spare_ = 0.0;
  bool has_spare_ = false;
};

}  // namespace fulcrum
