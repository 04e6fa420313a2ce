// Sérsic profile, regularised incomplete gamma function and exact b_n (see
// sersic_profile.hpp for the formulas and their sources).
#include "fulcrum/photometry/sersic_profile.hpp"

#include <cmath>
#include <limits>
#include <numbers>

#include "fulcrum/core/error.hpp"

namespace fulcrum::photometry {

namespace {

// Power series (A&S 6.5.29):
//   P(a, x) = x^a e^-x / Gamma(a + 1) * sum_k x^k / ((a + 1)...(a + k)).
double gamma_p_series(double a, double x) {
  double term = 1.0 / a, sum = term;
  for (int k = 1; k < 100000; ++k) {
    term *= x / (a + k);
    sum += term;
    if (std::abs(term) < std::abs(sum) * 1e-17) break;
  }
  return sum * std::exp(-x + a * std::log(x) - std::lgamma(a));
}

// Continued fraction for Q(a, x) (A&S 6.5.31), in the even form
//   Q = e^-x x^a / Gamma(a) * 1/(x + 1 - a - 1(1 - a)/(x + 3 - a - 2(2 - a)/(x + 5 - a - ...)))
// evaluated by the modified Lentz method.
double gamma_q_fraction(double a, double x) {
  constexpr double tiny = 1e-300;
  double b = x + 1.0 - a;
  double c = 1.0 / tiny;
  double d = 1.0 / b;
  double h = d;
  for (int i = 1; i < 100000; ++i) {
    const double an = -i * (i - a);
    b += 2.0;
    d = an * d + b;
    if (std::abs(d) < tiny) d = tiny;
    c = b + an / c;
    if (std::abs(c) < tiny) c = tiny;
    d = 1.0 / d;
    const double del = d * c;
    h *= del;
    if (std::abs(del - 1.0) < 1e-16) break;
  }
  return std::exp(-x + a * std::log(x) - std::lgamma(a)) * h;
}

}  // namespace

double regularized_gamma_p(double a, double x) {
  FULCRUM_CHECK(a > 0.0, "a > 0", a);
  if (x <= 0.0) return 0.0;
  if (x < a + 1.0) return gamma_p_series(a, x);
  return 1.0 - gamma_q_fraction(a, x);
}

double sersic_bn_asymptotic(double n) {
  return 2.0 * n - 1.0 / 3.0 + 4.0 / (405.0 * n) + 46.0 / (25515.0 * n * n) +
         131.0 / (1148175.0 * n * n * n) - 2194697.0 / (30690717750.0 * n * n * n * n);
}

double sersic_bn(double n) {
  FULCRUM_CHECK(n > 0.0, "n > 0", n);
  const double a = 2.0 * n;
  // P(a, b) is increasing in b; bracket [lo, hi] and Newton steps kept inside.
  double lo = 0.0, hi = a + 10.0 + 10.0 * std::sqrt(a);
  double b = n > 0.36 ? sersic_bn_asymptotic(n) : 0.5 * a;
  if (!(b > lo && b < hi)) b = 0.5 * (lo + hi);
  const double lga = std::lgamma(a);
  for (int it = 0; it < 200; ++it) {
    const double f = regularized_gamma_p(a, b) - 0.5;
    if (f > 0) hi = b; else lo = b;
    const double df = std::exp((a - 1.0) * std::log(b) - b - lga);
    double next = b - f / df;
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
    if (std::abs(next - b) <= 1e-15 * std::max(1.0, b)) {
      b = next;
      break;
    }
    b = next;
  }
  return b;
}

double sersic_relative_intensity(double scaled_radius, double n, double bn) {
  return std::exp(-bn * (std::pow(scaled_radius, 1.0 / n) - 1.0));
}

double sersic_total_flux(double ie, double re, double n, double q) {
  const double bn = sersic_bn(n);
  return 2.0 * std::numbers::pi * n * q * re * re * ie *
         std::exp(bn - 2.0 * n * std::log(bn) + std::lgamma(2.0 * n));
}

}  // namespace fulcrum::photometry
