// The harmonic centre (harmonic_centre.hpp; derivation there and in
// docs/kinematics.md §4): Gauss-Newton on the rings' second harmonics,
//     c2_k = D_k a,  s2_k = D_k b / cos i,  D_k = (c1'_k - c1_k / R_k) / 2.
// Units: arcsec, degrees, km/s.
#include "fulcrum/kinematics/harmonic_centre.hpp"

#include <algorithm>
#include <cmath>

#include "fulcrum/sky/angle.hpp"

namespace fulcrum::kinematics {

namespace {

std::vector<HarmonicRing> expand_all(const VelocitySamples& s, const DiscGeometry& g,
                                     const HarmonicCentreOptions& opt) {
  std::vector<HarmonicRing> rings;
  const double w = opt.ring_width_arcsec;
  const int K = static_cast<int>(std::floor(opt.max_radius_arcsec / w + 1e-9));
  // Bucket the samples by ring once (ring k covers [k w - w/2, k w + w/2)),
  // so that each expansion sees only its own pixels.
  std::vector<VelocitySamples> sub(K + 1);
  const Angle pa = g.pa_deg * degrees, inc = g.inc_deg * degrees;
  const double cp = pa.cos(), sp = pa.sin(), ci = inc.cos();
  for (std::size_t i = 0; i < s.size(); ++i) {
    const double de = s.east[i] - g.centre.east, dn = s.north[i] - g.centre.north;
    const double X = de * sp + dn * cp, Y = (de * cp - dn * sp) / ci;
    const int k = static_cast<int>(std::floor(std::hypot(X, Y) / w + 0.5));
    if (k < 1 || k > K) continue;
    VelocitySamples& b = sub[k];
    b.east.push_back(s.east[i]);
    b.north.push_back(s.north[i]);
    b.velocity.push_back(s.velocity[i]);
    b.sigma.push_back(s.sigma[i]);
  }
  for (int k = 1; k <= K; ++k) rings.push_back(expand_ring(sub[k], g, k * w, w, opt.expansion));
  return rings;
}

// D_k from the first harmonic c1(R): centred differences between usable
// neighbours, one-sided at the ends.
std::vector<double> derivative_terms(const std::vector<HarmonicRing>& rings) {
  std::vector<double> D(rings.size(), 0.0);
  std::vector<int> ok;
  for (int k = 0; k < static_cast<int>(rings.size()); ++k)
    if (rings[k].ok) ok.push_back(k);
  for (std::size_t q = 0; q < ok.size(); ++q) {
    const int k = ok[q];
    const int lo = q > 0 ? ok[q - 1] : k;
    const int hi = q + 1 < ok.size() ? ok[q + 1] : k;
    double slope = 0.0;
    if (hi != lo)
      slope = (rings[hi].c1() - rings[lo].c1()) / (rings[hi].radius_arcsec - rings[lo].radius_arcsec);
    D[k] = 0.5 * (slope - rings[k].c1() / rings[k].radius_arcsec);
  }
  return D;
}

}  // namespace

HarmonicCentreSummary fit_harmonic_centre(const VelocitySamples& s, const DiscGeometry& geometry,
                                          const HarmonicCentreOptions& opt) {
  HarmonicCentreSummary out;
  DiscGeometry g = geometry;
  const Angle pa = g.pa_deg * degrees, inc = g.inc_deg * degrees;
  const SkyOffset e_maj = direction_of(pa), e_min = direction_of(pa + 90.0 * degrees);
  const double ci = inc.cos();
  double var_a = 0, var_b = 0, chi2 = 0;
  int used = 0;
  for (int it = 0; it < opt.max_iterations; ++it) {
    out.rings = expand_all(s, g, opt);
    const std::vector<double> D = derivative_terms(out.rings);
    double saa = 0, sa = 0, sbb = 0, sb = 0;
    used = 0;
    chi2 = 0;
    for (std::size_t k = 0; k < out.rings.size(); ++k) {
      const HarmonicRing& h = out.rings[k];
      if (!h.ok || h.radius_arcsec < opt.min_radius_arcsec) continue;
      const double vc2 = h.covariance(3, 3), vs2 = h.covariance(4, 4);
      if (!(vc2 > 0) || !(vs2 > 0)) continue;
      // c2 = D a; s2 = (D / cos i) b.
      const double da = D[k], db = D[k] / ci;
      saa += da * da / vc2;
      sa += da * h.c2() / vc2;
      sbb += db * db / vs2;
      sb += db * h.s2() / vs2;
      chi2 += h.c2() * h.c2() / vc2 + h.s2() * h.s2() / vs2;
      ++used;
    }
    out.rings_used = used;
    if (used < opt.min_rings || !(saa > 0) || !(sbb > 0)) {
      out.reason = "too few rings with full azimuthal coverage and a rotation curve that is not "
                   "solid-body (" + std::to_string(used) + " usable)";
      out.centre = g.centre;
      return out;
    }
    const double a = sa / saa, b = sb / sbb;
    var_a = 1.0 / saa;
    var_b = 1.0 / sbb;
    // The assumed centre sits at true + delta: move by -delta.
    const SkyOffset step = e_maj * a + e_min * b;
    g.centre = g.centre - step;
    out.iterations = it + 1;
    if (!std::isfinite(step.east) || !std::isfinite(step.north) ||
        g.centre.norm() > 10.0 * opt.max_radius_arcsec + 1e3) {
      out.reason = "harmonic centre iteration diverged";
      return out;
    }
    if (step.norm() < opt.tolerance_arcsec) {
      out.ok = true;
      break;
    }
  }
  out.centre = g.centre;
  if (!out.ok) {
    out.reason = "harmonic centre did not converge in " + std::to_string(opt.max_iterations) +
                 " iterations";
    return out;
  }
  out.reduced_chi2 = used > 1 ? chi2 / (2.0 * used - 2.0) : 1.0;
  const double f = std::max(1.0, out.reduced_chi2);
  // Rotate diag(var_a, var_b) from (major, minor) to (east, north).
  Eigen::Matrix2d rot;
  rot << e_maj.east, e_min.east, e_maj.north, e_min.north;
  Eigen::Matrix2d d = Eigen::Matrix2d::Zero();
  d(0, 0) = var_a * f;
  d(1, 1) = var_b * f;
  out.covariance = rot * d * rot.transpose();
  return out;
}

}  // namespace fulcrum::kinematics
