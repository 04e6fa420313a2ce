// Verdict classes and the sentence (see the header for the rules).
#include "fulcrum/robustness/verdict.hpp"

#include <Eigen/Eigenvalues>
#include <cmath>
#include <cstdio>
#include <limits>

#include "fulcrum/core/error.hpp"

namespace fulcrum::robustness {

using split::ProjectionEngine;

std::string verdict_name(Verdict v) {
  switch (v) {
    case Verdict::undetermined: return "undetermined";
    case Verdict::centre_sensitive: return "centre-sensitive";
    case Verdict::robust: return "robust";
    case Verdict::reversed: return "reversed";
    case Verdict::marginal: return "marginal";
  }
  return "undetermined";
}

namespace {
int sign_of(double v) { return v > 0.0 ? 1 : (v < 0.0 ? -1 : 0); }
std::string f(const char* fmt, double v) {
  char b[64];
  std::snprintf(b, sizeof b, fmt, v);
  return b;
}
std::vector<double> angle_grid(double pa, double err, double step) {
  if (!(err > 0.0)) return {pa};
  const int m = std::max(1, static_cast<int>(std::ceil(err / std::max(step, 1e-6))));
  std::vector<double> v;
  for (int k = -m; k <= m; ++k) v.push_back(pa + k * err / m);
  return v;
}
}  // namespace

void detection_stats(const split::SplitProblem& pr, const VerdictOptions& o, double* snr,
                     double* beams) {
  const auto& px = pr.pixels;
  double S = 0.0, V = 0.0;
  std::size_t det = 0;
  const bool noise = px.variance.size() == px.size();
  for (std::size_t i = 0; i < px.size(); ++i) {
    S += px.value[i];
    if (noise) {
      V += px.variance[i];
      if (px.value[i] > o.detection_snr * std::sqrt(px.variance[i])) ++det;
    }
  }
  if (!noise) {
    *snr = std::numeric_limits<double>::quiet_NaN();
    *beams = std::numeric_limits<double>::quiet_NaN();
    return;
  }
  *snr = S / std::sqrt(pr.pixels_per_beam * V);
  *beams = double(det) / pr.pixels_per_beam;
}

PlausibleCheck check_plausible_centres(const split::SplitProblem& pr, const VerdictInput& in,
                                       const VerdictOptions& o) {
  PlausibleCheck pc;
  const Eigen::Matrix2d& C = in.centre_covariance;
  const double k = o.plausible_sigma;
  {
    Eigen::SelfAdjointEigenSolver<Eigen::Matrix2d> es(C);
    pc.farthest_plausible_arcsec = k * std::sqrt(std::max(0.0, es.eigenvalues()(1)));
  }
  for (const auto& e : in.estimates)
    if (e.ok) pc.farthest_plausible_arcsec = std::max(pc.farthest_plausible_arcsec, (e.offset - in.centre).norm());
  int nominal_sign;
  {
    const ProjectionEngine e(pr.pixels, in.tail_pa_deg * degrees, {0.0, false});
    nominal_sign = sign_of(e.asymmetry(e.s_of(in.centre)));
  }
  const auto angles = angle_grid(in.tail_pa_deg, in.tail_pa_err_deg, o.angle_step_deg);
  pc.worst_flip_margin_arcsec = std::numeric_limits<double>::infinity();
  for (double a : angles) {
    const ProjectionEngine e(pr.pixels, a * degrees, {0.0, false});
    const SkyOffset n = e.normal();
    const double reach = k * std::sqrt(std::max(0.0, n.east * (C(0, 0) * n.east + C(0, 1) * n.north) +
                                                         n.north * (C(1, 0) * n.east + C(1, 1) * n.north)));
    const AngleFlip fl = flip_at_angle(e, in.centre, nominal_sign);
    const double margin = fl.distance_arcsec - reach;
    pc.worst_flip_margin_arcsec = std::min(pc.worst_flip_margin_arcsec, margin);
    if (!pc.sign_changes && (fl.already_reversed || (fl.found && fl.distance_arcsec <= reach))) {
      pc.sign_changes = true;
      pc.where = fl.already_reversed
                     ? "at the adopted centre for tail PA " + f("%.1f", wrap_pa_deg(a)) + " deg"
                     : "inside the " + f("%.0f", k) + "-sigma centre ellipse (flip " +
                           f("%.2f", fl.distance_arcsec) + " arcsec <= reach " + f("%.2f", reach) +
                           " arcsec) for tail PA " + f("%.1f", wrap_pa_deg(a)) + " deg";
    }
    for (const auto& est : in.estimates) {
      if (!est.ok || pc.sign_changes) continue;
      const int sg = sign_of(e.asymmetry(e.s_of(est.offset)));
      if (nominal_sign != 0 && sg != nominal_sign) {
        pc.sign_changes = true;
        pc.where = "at the " + est.name + " centre for tail PA " + f("%.1f", wrap_pa_deg(a)) + " deg";
      }
    }
  }
  return pc;
}

VerdictSummary decide(const split::SplitProblem& pr, const split::SplitSummary& nom,
                      const FlipSummary& flip, const BootstrapSummary& boot, const VerdictInput& in,
                      const VerdictOptions& o) {
  VerdictSummary v;
  detection_stats(pr, o, &v.total_snr, &v.detected_beams);
  std::string why;
  for (const auto& s : in.failures) why += (why.empty() ? "" : "; ") + s;
  if (why.empty() && !(nom.total_flux > 0.0))
    why = "the total flux in the analysis region is not positive";
  if (why.empty() && std::isfinite(v.total_snr) && v.total_snr < o.min_total_snr)
    why = "too little detected emission: total S/N " + f("%.1f", v.total_snr) + " < " +
          f("%.1f", o.min_total_snr);
  if (why.empty() && std::isfinite(v.detected_beams) && v.detected_beams < o.min_detected_beams)
    why = "too little detected emission: " + f("%.1f", v.detected_beams) + " beams above " +
          f("%.0f", o.detection_snr) + " sigma < " + f("%.1f", o.min_detected_beams);
  std::string numbers = "A = " + f("%+.3f", nom.asymmetry) + " (68% " + f("%+.3f", boot.lo68) +
                        " to " + f("%+.3f", boot.hi68) + ", 95% " + f("%+.3f", boot.lo95) + " to " +
                        f("%+.3f", boot.hi95) + "), P(A > 0) = " + f("%.3f", boot.p_positive) +
                        " from " + std::to_string(boot.n_draws) + " draws (seed " +
                        std::to_string(boot.seed) + ")";
  if (!why.empty()) {
    v.verdict = Verdict::undetermined;
    v.reason = why;
    v.statement = in.galaxy + ": undetermined, because " + why + " (" + numbers + ").";
    return v;
  }
  v.plausible = check_plausible_centres(pr, in, o);
  const auto dist = [&](const AngleFlip& a) {
    return a.found ? f("%.2f", a.distance_arcsec) + " arcsec" : std::string("no shift within the map");
  };
  std::string flipping = "reversing the sign needs a centre shift of " + dist(flip.nominal);
  if (flip.nominal.found && std::isfinite(flip.nominal_beams))
    flipping += " (" + f("%.2f", flip.nominal_beams) + " beams) towards PA " +
                f("%.0f", flip.nominal.direction_pa_deg) + " deg";
  if (in.tail_pa_err_deg > 0.0)
    flipping += ", " + dist(flip.worst) + " for a tail PA within +-" +
                f("%.0f", in.tail_pa_err_deg) + " deg";
  flipping += ", against " + f("%.2f", v.plausible.farthest_plausible_arcsec) +
              " arcsec to the farthest plausible centre";
  if (v.plausible.sign_changes) {
    v.verdict = Verdict::centre_sensitive;
    v.reason = "the sign of A changes " + v.plausible.where;
  } else if (nom.asymmetry > 0.0 && boot.p_positive >= o.robust_p) {
    v.verdict = Verdict::robust;
    v.reason = "A > 0 at every plausible centre and P(A > 0) >= " + f("%.2f", o.robust_p);
  } else if (nom.asymmetry < 0.0 && boot.p_positive <= o.reversed_p) {
    v.verdict = Verdict::reversed;
    v.reason = "A < 0 at every plausible centre and P(A > 0) <= " + f("%.2f", o.reversed_p);
  } else {
    v.verdict = Verdict::marginal;
    v.reason = "the sign is stable over the plausible centres but P(A > 0) = " +
               f("%.3f", boot.p_positive) + " is between " + f("%.2f", o.reversed_p) + " and " +
               f("%.2f", o.robust_p);
  }
  v.statement = in.galaxy + ": " + numbers + "; " + flipping + ": " + verdict_name(v.verdict) +
                " (" + v.reason + ").";
  return v;
}

nlohmann::json to_json(const VerdictSummary& v) {
  auto num = [](double x) { return std::isfinite(x) ? nlohmann::json(x) : nlohmann::json(); };
  return {{"verdict", verdict_name(v.verdict)},
          {"reason", v.reason},
          {"statement", v.statement},
          {"total_snr", num(v.total_snr)},
          {"detected_beams", num(v.detected_beams)},
          {"plausible_sign_change", v.plausible.sign_changes},
          {"plausible_where", v.plausible.where},
          {"farthest_plausible_arcsec", v.plausible.farthest_plausible_arcsec},
          {"worst_flip_margin_arcsec", num(v.plausible.worst_flip_margin_arcsec)}};
}

}  // namespace fulcrum::robustness
