// The seeded random generator (core/random.hpp: methods and sources).
#include "fulcrum/core/random.hpp"

#include <array>
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

namespace {

// The ziggurat's layers (Marsaglia & Tsang 2000, section 2, n = 256): the
// right edges x[0] > x[1] = r > ... > x[256] = 0 of 256 regions of equal
// area v under f(x) = exp(-x^2 / 2) (x[0] = v / f(r) is the base layer's
// width, its area split between the rectangle [0, r] x [0, f(r)] and the
// tail beyond r), and f at each edge.
struct ZigguratTable {
  static constexpr int kLayers = 256;
  static constexpr double kR = 3.6541528853610088;
  static constexpr double kV = 4.92867323399e-3;
  std::array<double, kLayers + 1> x{}, f{};
  ZigguratTable() {
    auto pdf = [](double t) { return std::exp(-0.5 * t * t); };
    x[0] = kV / pdf(kR);
    x[1] = kR;
    for (int i = 1; i < kLayers - 1; ++i) x[i + 1] = std::sqrt(-2.0 * std::log(kV / x[i] + pdf(x[i])));
    x[kLayers] = 0.0;
    for (int i = 0; i <= kLayers; ++i) f[i] = pdf(x[i]);
  }
};

const ZigguratTable& ziggurat_table() {
  static const ZigguratTable table;
  return table;
}

// One deviate from the engine output b (the first try) and, when that try
// is rejected, further outputs of r: normal_ziggurat()'s loop.
double ziggurat_from(std::uint64_t b, const ZigguratTable& t, Random& r) {
  for (;; b = r.bits()) {
    const int i = static_cast<int>(b & 0xFF);
    const double sign = (b & 0x100) ? -1.0 : 1.0;
    const double u = static_cast<double>(b >> 11) * 0x1.0p-53;  // [0, 1)
    const double z = u * t.x[i];
    if (z < t.x[i + 1]) return sign * z;  // inside the layer's rectangle under the curve
    if (i == 0) {
      // The tail beyond r: r + a with a exponential of rate r, accepted
      // with probability exp(-a^2 / 2) (Marsaglia 1964).
      for (;;) {
        const double a = -std::log(r.uniform()) / ZigguratTable::kR;
        const double e = -std::log(r.uniform());
        if (2.0 * e > a * a) return sign * (ZigguratTable::kR + a);
      }
    }
    // The wedge between the rectangle and the curve.
    if (t.f[i] + r.uniform() * (t.f[i + 1] - t.f[i]) < std::exp(-0.5 * z * z)) return sign * z;
  }
}

}  // namespace

double Random::normal_ziggurat() { return ziggurat_from(engine_(), ziggurat_table(), *this); }

void Random::normal_ziggurat(double* out, std::size_t n) {
  const ZigguratTable& t = ziggurat_table();
  for (std::size_t k = 0; k < n; ++k) {
    // The first try inline (it is accepted ~99% of the time), as in
    // ziggurat_from; any other outcome goes there with the same bits.
    const std::uint64_t b = engine_();
    const int i = static_cast<int>(b & 0xFF);
    const double z = static_cast<double>(b >> 11) * 0x1.0p-53 * t.x[i];
    out[k] = z < t.x[i + 1] ? ((b & 0x100) ? -1.0 : 1.0) * z : ziggurat_from(b, t, *this);
  }
}

std::uint64_t Random::below(std::uint64_t n) {
  const std::uint64_t limit = UINT64_MAX - UINT64_MAX % n;
  for (;;) {
    const std::uint64_t v = engine_();
    if (v < limit) return v % n;
  }
}

}  // namespace fulcrum
