// The seeded random generator (core/random.hpp: methods and sources).
#include "fulcrum/core/random.hpp"

#include <cmath>
#include <numbers>

namespace fulcrum {

std::uint64_t splitmix64_mix(std::uint64_t z) {
  z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ULL;
  z = (z ^ (z >> 27)) * 0x94D049BB133111EBULL;
  return z ^ (z >> 31);
}

std::uint64_t splitmix64(std::uint64_t x) { return splitmix64_mix(x + 0x9E3779B97F4A7C15ULL); }

Random Random::stream(std::uint64_t seed, std::uint64_t id) {
  return Random(splitmix64(splitmix64(seed) ^ splitmix64(id * 0x9E3779B97F4A7C15ULL + 0x632BE59BD9B4E019ULL)));
}

double Random::normal() {
  if (has_spare_) {
    has_spare_ = false;
    return spare_;
  }
  const double u1 = 1.0 - uniform();  // in (0, 1): log(u1) finite
  const double u2 = uniform();
  const double r = std::sqrt(-2.0 * std::log(u1));
  const double t = 2.0 * std::numbers::pi * u2;
  spare_ = r * std::sin(t);
  has_spare_ = true;
  return r * std::cos(t);
}

std::uint64_t Random::below(std::uint64_t n) {
  const std::uint64_t limit = UINT64_MAX - UINT64_MAX % n;
  for (;;) {
    const std::uint64_t v = engine_();
    if (v < limit) return v % n;
  }
}

}  // namespace fulcrum
