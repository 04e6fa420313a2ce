// Colour maps: Moreland (2009) cool-warm from its Msh construction and Green
// (2011) cubehelix. sRGB <-> linear uses the IEC 61966-2-1 transfer curve;
// linear RGB <-> XYZ the sRGB primaries with D65 white; XYZ <-> CIELAB the
// CIE 1976 formulas.
#include "fulcrum/report/colour_map.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <numbers>
#include <vector>

namespace fulcrum::report {

std::string Rgb::hex() const {
  auto b = bytes();
  char buf[8];
  std::snprintf(buf, sizeof buf, "#%02x%02x%02x", b[0], b[1], b[2]);
  return buf;
}

std::array<unsigned char, 3> Rgb::bytes() const {
  auto q = [](double v) {
    return static_cast<unsigned char>(std::lround(std::clamp(v, 0.0, 1.0) * 255.0));
  };
  return {q(r), q(g), q(b)};
}

namespace {

constexpr double kXn = 0.95047, kYn = 1.0, kZn = 1.08883;  // D65 reference white

double to_linear(double c) {
  return c <= 0.04045 ? c / 12.92 : std::pow((c + 0.055) / 1.055, 2.4);
}
double to_gamma(double c) {
  c = std::clamp(c, 0.0, 1.0);
  return c <= 0.0031308 ? 12.92 * c : 1.055 * std::pow(c, 1.0 / 2.4) - 0.055;
}

struct Lab { double L, a, b; };
struct Msh { double M, s, h; };

double lab_f(double t) {
  constexpr double d = 6.0 / 29.0;
  return t > d * d * d ? std::cbrt(t) : t / (3 * d * d) + 4.0 / 29.0;
}
double lab_finv(double t) {
  constexpr double d = 6.0 / 29.0;
  return t > d ? t * t * t : 3 * d * d * (t - 4.0 / 29.0);
}

Lab rgb_to_lab(Rgb c) {
  double r = to_linear(c.r), g = to_linear(c.g), b = to_linear(c.b);
  double X = 0.4124564 * r + 0.3575761 * g + 0.1804375 * b;
  double Y = 0.2126729 * r + 0.7151522 * g + 0.0721750 * b;
  double Z = 0.0193339 * r + 0.1191920 * g + 0.9503041 * b;
  double fx = lab_f(X / kXn), fy = lab_f(Y / kYn), fz = lab_f(Z / kZn);
  return {116 * fy - 16, 500 * (fx - fy), 200 * (fy - fz)};
}

Rgb lab_to_rgb(Lab l) {
  double fy = (l.L + 16) / 116, fx = fy + l.a / 500, fz = fy - l.b / 200;
  double X = kXn * lab_finv(fx), Y = kYn * lab_finv(fy), Z = kZn * lab_finv(fz);
  double r = 3.2404542 * X - 1.5371385 * Y - 0.4985314 * Z;
  double g = -0.9692660 * X + 1.8760108 * Y + 0.0415560 * Z;
  double b = 0.0556434 * X - 0.2040259 * Y + 1.0572252 * Z;
  return {to_gamma(r), to_gamma(g), to_gamma(b)};
}

Msh lab_to_msh(Lab l) {
  double M = std::sqrt(l.L * l.L + l.a * l.a + l.b * l.b);
  return {M, M > 0 ? std::acos(l.L / M) : 0.0, std::atan2(l.b, l.a)};
}
Lab msh_to_lab(Msh m) {
  return {m.M * std::cos(m.s), m.M * std::sin(m.s) * std::cos(m.h),
          m.M * std::sin(m.s) * std::sin(m.h)};
}

// Moreland's AdjustHue: the hue to give an unsaturated colour of magnitude
// m_unsat so that the path from the saturated colour `sat` spins smoothly.
double adjust_hue(Msh sat, double m_unsat) {
  if (sat.M >= m_unsat) return sat.h;
  double spin = sat.s * std::sqrt(m_unsat * m_unsat - sat.M * sat.M) / (sat.M * std::sin(sat.s));
  return sat.h > -std::numbers::pi / 3 ? sat.h + spin : sat.h - spin;
}

const std::vector<Rgb>& cool_warm_table() {
  // 1025 samples of the exact construction; lookups interpolate linearly in
  // sRGB between samples (differences < 1e-4 of the exact curve).
  static const std::vector<Rgb> table = [] {
    std::vector<Rgb> t(1025);
    Rgb cool{0.230, 0.299, 0.754}, warm{0.706, 0.016, 0.150};
    for (std::size_t i = 0; i < t.size(); ++i)
      t[i] = moreland_interpolate(cool, warm, static_cast<double>(i) / (t.size() - 1));
    return t;
  }();
  return table;
}

}  // namespace

Rgb moreland_interpolate(Rgb from, Rgb to, double t) {
  Msh m1 = lab_to_msh(rgb_to_lab(from)), m2 = lab_to_msh(rgb_to_lab(to));
  constexpr double kSat = 0.05;
  if (m1.s > kSat && m2.s > kSat && std::abs(m1.h - m2.h) > std::numbers::pi / 3) {
    double mid = std::max({m1.M, m2.M, 88.0});
    if (t < 0.5) {
      m2 = {mid, 0.0, 0.0};
      t = 2 * t;
    } else {
      m1 = {mid, 0.0, 0.0};
      t = 2 * t - 1;
    }
  }
  if (m1.s < kSat && m2.s > kSat) m1.h = adjust_hue(m2, m1.M);
  else if (m2.s < kSat && m1.s > kSat) m2.h = adjust_hue(m1, m2.M);
  Msh m{(1 - t) * m1.M + t * m2.M, (1 - t) * m1.s + t * m2.s, (1 - t) * m1.h + t * m2.h};
  return lab_to_rgb(msh_to_lab(m));
}

Rgb cool_warm(double t) {
  if (!std::isfinite(t)) return {0.85, 0.85, 0.85};
  const auto& tab = cool_warm_table();
  double x = std::clamp(t, 0.0, 1.0) * (tab.size() - 1);
  std::size_t i = std::min<std::size_t>(static_cast<std::size_t>(x), tab.size() - 2);
  double f = x - i;
  return {tab[i].r + f * (tab[i + 1].r - tab[i].r), tab[i].g + f * (tab[i + 1].g - tab[i].g),
          tab[i].b + f * (tab[i + 1].b - tab[i].b)};
}

// Green (2011), eq. 2: with l = t^gamma, amplitude a = h l (1 - l) / 2 and
// angle phi = 2 pi (s/3 + r t), the colour is l plus a times a fixed
// direction in RGB perpendicular to the grey diagonal.
Rgb cubehelix(double t) {
  if (!std::isfinite(t)) return {0.85, 0.85, 0.85};
  t = std::clamp(t, 0.0, 1.0);
  constexpr double start = 0.5, rotations = -1.5, hue = 1.0, gamma = 1.0;
  double l = std::pow(t, gamma);
  double a = hue * l * (1 - l) / 2;
  double phi = 2 * std::numbers::pi * (start / 3 + rotations * t);
  double c = std::cos(phi), s = std::sin(phi);
  return {std::clamp(l + a * (-0.14861 * c + 1.78277 * s), 0.0, 1.0),
          std::clamp(l + a * (-0.29227 * c - 0.90649 * s), 0.0, 1.0),
          std::clamp(l + a * (1.97294 * c), 0.0, 1.0)};
}

Rgb colour_at(ColourMapKind kind, double t) {
  return kind == ColourMapKind::kCoolWarm ? cool_warm(t) : cubehelix(t);
}

std::string colour_map_citation(ColourMapKind kind) {
  return kind == ColourMapKind::kCoolWarm
             ? "diverging cool-warm map of Moreland (2009, ISVC, LNCS 5876, 92)"
             : "cubehelix map of Green (2011, Bull. Astr. Soc. India 39, 289)";
}

}  // namespace fulcrum::report
