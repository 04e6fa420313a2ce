// The Sérsic (1963) surface-brightness profile and its constant b_n.
//
//   I(r) = I_e exp( -b_n [ (r / r_e)^(1/n) - 1 ] )
//
// r is the elliptical radius, r_e the half-light radius along the major
// axis, I_e the surface brightness at r_e. b_n is fixed by requiring that
// r_e enclose half the light; for the profile integrated over the plane this
// is the condition on the regularised lower incomplete gamma function
//   P(2n, b_n) = gamma(2n, b_n) / Gamma(2n) = 1/2
// (Ciotti & Bertin 1999, A&A 352, 447, eq. 3 and the text around it), solved
// here to machine precision by Newton's method on P with the derivative
// dP/db = b^(2n-1) e^(-b) / Gamma(2n). Ciotti & Bertin give the asymptotic
// expansion
//   b_n ~ 2n - 1/3 + 4/(405 n) + 46/(25515 n^2) + 131/(1148175 n^3)
//         - 2194697/(30690717750 n^4)
// which serves as a check and as the Newton start.
//
// P(a, x) is evaluated with its power series for x < a + 1 and the
// continued fraction of Q = 1 - P otherwise (Abramowitz & Stegun 1964,
// 6.5.29 and 6.5.31; the continued fraction evaluated by the modified Lentz
// method, Lentz 1976, Thompson & Barnett 1986).
//
// Total flux of an elliptical profile of axis ratio q:
//   F = 2 pi n q r_e^2 I_e e^(b_n) b_n^(-2n) Gamma(2n)
// (Ciotti & Bertin 1999, eq. 4 for q = 1; the factor q for the ellipse).
#pragma once

namespace fulcrum::photometry {

// Regularised lower incomplete gamma function P(a, x), a > 0, x >= 0.
double regularized_gamma_p(double a, double x);
// Exact b_n for Sérsic index n > 0 (throws InternalError for n <= 0).
double sersic_bn(double n);
// Ciotti & Bertin (1999) asymptotic expansion of b_n (accurate for n > 0.36).
double sersic_bn_asymptotic(double n);
// I(r) / I_e for r / r_e = `scaled_radius`.
double sersic_relative_intensity(double scaled_radius, double n, double bn);
// Total flux of an elliptical profile (units of I_e times arcsec^2 if r_e is in arcsec).
double sersic_total_flux(double ie, double re, double n, double q);

}  // namespace fulcrum::photometry
