// Portable seeded random numbers (see random.hpp for the methods and sources).
#include "fulcrum/synth/random.hpp"

#include <cmath>
#include <numbers>

namespace fulcrum::synth {

std::uint64_t splitmix64(std::uint64_t x) {
  // SplitMix64 (Steele, Lea & Flood 2014): one increment and two xor-shift-multiply rounds.
  std::uint64_t z = x + 0x9E3779B97F4A7C15ULL;
  z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ULL;
  z = (z ^ (z >> 27)) * 0x94D049BB133111EBULL;
  return z ^ (z >> 31);
}

double Rng::normal() {
  if (have_spare_) {
    have_spare_ = false;
    return spare_;
  }
  // Box-Muller: u1 in (0, 1] so that log(u1) is finite.
  double u1 = 1.0 - uniform();
  double u2 = uniform();
  double r = std::sqrt(-2.0 * std::log(u1));
  double t = 2.0 * std::numbers::pi * u2;
  spare_ = r * std::sin(t);
  have_spare_ = true;
  return r * std::cos(t);
}

}  // namespace fulcrum::synth
