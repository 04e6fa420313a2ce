// Sersic profile: b_n, the incomplete gamma function and the normalisation
// (formulas and sources in sersic.hpp).
#include "fulcrum/synth/sersic.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>
#include <string>

#include "fulcrum/core/error.hpp"

namespace fulcrum::synth {

double lower_gamma_regularised(double a, double x) {
  FULCRUM_CHECK(a > 0.0 && x >= 0.0, "a > 0 and x >= 0", std::to_string(a) + ", " + std::to_string(x));
  if (x == 0.0) return 0.0;
  if (x < a + 1.0) {
    // Power series (Abramowitz & Stegun 6.5.29):
    //   gamma(a, x) = x^a e^-x sum_k x^k / (a (a+1) ... (a+k)).
    double term = 1.0 / a, sum = term;
    for (int k = 1; k < 10000; ++k) {
      term *= x / (a + k);
      sum += term;
      if (std::abs(term) < std::abs(sum) * 1e-16) break;
    }
    return sum * std::exp(-x + a * std::log(x) - std::lgamma(a));
  }
  // Continued fraction for the upper function Q = 1 - P (A&S 6.5.31), by the
  // modified Lentz method (Lentz 1976, Appl. Opt. 15, 668).
  const double tiny = 1e-300;
  double b = x + 1.0 - a, c = 1.0 / tiny, d = 1.0 / b, h = d;
  for (int i = 1; i < 10000; ++i) {
    double an = -i * (i - a);
    b += 2.0;
    d = an * d + b;
    if (std::abs(d) < tiny) d = tiny;
    c = b + an / c;
    if (std::abs(c) < tiny) c = tiny;
    d = 1.0 / d;
    double del = d * c;
    h *= del;
    if (std::abs(del - 1.0) < 1e-16) break;
  }
  double q = std::exp(-x + a * std::log(x) - std::lgamma(a)) * h;
  return 1.0 - q;
}

double sersic_bn(double n) {
  if (!(n >= 0.2 && n <= 20.0))
    throw InputError("", "Sersic index " + std::to_string(n) + " is outside the supported range 0.2-20");
  // First guess: Ciotti & Bertin (1999), eq. 18 (asymptotic in n).
  const double guess = 2.0 * n - 1.0 / 3.0 + 4.0 / (405.0 * n) + 46.0 / (25515.0 * n * n) +
                       131.0 / (1148175.0 * n * n * n) - 2194697.0 / (30690717750.0 * n * n * n * n);
  // Exact root of P(2n, b) = 1/2 by bisection (P increases with b), in a
  // bracket about the guess that is widened until it holds the root.
  double lo = std::max(1e-8, guess - 0.1), hi = guess + 0.1;
  while (lo > 1e-8 && lower_gamma_regularised(2.0 * n, lo) > 0.5) lo = std::max(1e-8, lo - 1.0);
  while (lower_gamma_regularised(2.0 * n, hi) < 0.5) hi += 1.0;
  for (int it = 0; it < 100 && hi - lo > 1e-15 * hi; ++it) {
    const double mid = 0.5 * (lo + hi);
    if (lower_gamma_regularised(2.0 * n, mid) < 0.5) lo = mid; else hi = mid;
  }
  return 0.5 * (lo + hi);
}

double sersic_intensity_at_re(double total, double n, double re_arcsec, double q) {
  const double bn = sersic_bn(n);
  // L = 2 pi n q re^2 Ie e^bn bn^-2n Gamma(2n)  (Graham & Driver 2005, eq. 4 with q).
  const double norm = 2.0 * std::numbers::pi * n * q * re_arcsec * re_arcsec *
                      std::exp(bn + std::lgamma(2.0 * n) - 2.0 * n * std::log(bn));
  return total / norm;
}

double sersic_profile(double r_arcsec, double ie, double n, double re_arcsec, double bn) {
  return ie * std::exp(-bn * (std::pow(r_arcsec / re_arcsec, 1.0 / n) - 1.0));
}

}  // namespace fulcrum::synth
