// The Sersic (1963) surface-brightness profile used for mock optical images.
//
//   I(r) = I_e exp(-b_n [(r / r_e)^(1/n) - 1]),
//
// with r the elliptical radius (semi-major-axis equivalent, arcsec), r_e the
// half-light radius and b_n defined by P(2n, b_n) = 1/2 (P: the regularised
// lower incomplete gamma function), so that half the light lies within r_e.
// The total light of an elliptical profile with axis ratio q is
//
//   L = 2 pi n q r_e^2 I_e e^(b_n) b_n^(-2n) Gamma(2n)
//
// (e.g. Graham & Driver 2005, PASA 22, 118, eqs. 1 and 4).
//
// b_n is the root of P(2n, b) = 1/2, found by bisection with the incomplete
// gamma function from its power series (Abramowitz & Stegun 1964, 6.5.29) or
// its continued fraction (6.5.31, evaluated by Lentz's method). The
// asymptotic series of Ciotti & Bertin (1999, A&A 352, 447, eq. 18),
//
//   b_n ~ 2n - 1/3 + 4/(405 n) + 46/(25515 n^2) + 131/(1148175 n^3)
//         - 2194697/(30690717750 n^4),
//
// is only the first guess: measured against scipy.special.gammaincinv it is
// off by 2.5e-5 (relative) at n = 1 and 3.6e-4 at n = 0.5, too much for the
// test tolerance of 1e-6.
#pragma once

namespace fulcrum::synth {

// b_n for Sersic index n (0.2 <= n <= 20); throws InputError outside.
double sersic_bn(double n);
// Regularised lower incomplete gamma function P(a, x) for a > 0, x >= 0.
double lower_gamma_regularised(double a, double x);
// I_e for a profile of total light `total` (same units as I_e * arcsec^2).
double sersic_intensity_at_re(double total, double n, double re_arcsec, double q);
// I(r) for elliptical radius r (arcsec).
double sersic_profile(double r_arcsec, double ie, double n, double re_arcsec, double bn);

}  // namespace fulcrum::synth
