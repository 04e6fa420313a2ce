// Colour maps: the Moreland (2009) cool-warm end points and midpoint, its
// lightness profile, and cubehelix's monotonic brightness (Green 2011).
#include <catch2/catch.hpp>

#include <cmath>

#include "fulcrum/report/colour_map.hpp"

using namespace fulcrum::report;

namespace {
// CIE 1976 L* of a gamma-encoded sRGB colour (for the monotonicity checks).
double lightness(Rgb c) {
  auto lin = [](double v) { return v <= 0.04045 ? v / 12.92 : std::pow((v + 0.055) / 1.055, 2.4); };
  double y = 0.2126729 * lin(c.r) + 0.7151522 * lin(c.g) + 0.0721750 * lin(c.b);
  return y > 216.0 / 24389.0 ? 116 * std::cbrt(y) - 16 : 24389.0 / 27.0 * y;
}
}  // namespace

TEST_CASE("cool-warm map reproduces Moreland's end points and neutral midpoint", "[report]") {
  // End points are the paper's control colours (exact by construction).
  auto lo = cool_warm(0.0).bytes(), hi = cool_warm(1.0).bytes();
  CHECK(int(lo[0]) == 59); CHECK(int(lo[1]) == 76); CHECK(int(lo[2]) == 192);
  CHECK(int(hi[0]) == 180); CHECK(int(hi[1]) == 4); CHECK(int(hi[2]) == 38);
  // Midpoint: the paper's table gives (221, 221, 221) (recalled from memory;
  // it follows from M = 88 at s = 0: L* = 88 grey -> sRGB 0.865). Allow one
  // 8-bit step.
  auto mid = cool_warm(0.5).bytes();
  for (int k = 0; k < 3; ++k) CHECK(std::abs(int(mid[k]) - 221) <= 1);
  // Lightness rises to the middle and falls after it (the defining property).
  double prev = lightness(cool_warm(0.0));
  for (int i = 1; i <= 50; ++i) {
    double l = lightness(cool_warm(i / 100.0));
    CHECK(l > prev - 1e-9);
    prev = l;
  }
  for (int i = 51; i <= 100; ++i) {
    double l = lightness(cool_warm(i / 100.0));
    CHECK(l < prev + 1e-9);
    prev = l;
  }
}

TEST_CASE("cubehelix runs from black to white with rising lightness", "[report]") {
  CHECK(cubehelix(0.0).hex() == "#000000");
  CHECK(cubehelix(1.0).hex() == "#ffffff");
  double prev = -1;
  for (int i = 0; i <= 100; ++i) {
    double l = lightness(cubehelix(i / 100.0));
    CHECK(l >= prev - 0.5);  // clamping at the gamut edge allows tiny dips
    prev = l;
  }
  CHECK(cool_warm(std::nan("")).hex() == cubehelix(std::nan("")).hex());
}
