// Verdict classes and the sentence (see the header for the rules).
#include "fulcrum/robustness/verdict.hpp"

#include <Eigen/Eigenvalues>
#include <cmath>
#include <cstdio>
#include <limits>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/number_text.hpp"

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
std::string f(const char* fmt, double v) {
  char b[64];
  std::snprintf(b, sizeof b, fmt, v);
  return b;
}

// "P(A > 0) = 0.873", or "P(A > 0) > 0.999" when it rounds to 1 (< 0.001 when
// to 0): the same honest precision as the tables (core/number_text.hpp).
std::string p_words(double P) {
  const std::string t = probability_text(P, 3);
  return "P(A > 0) " + (t[0] == '>' || t[0] == '<' ? t : "= " + t);
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
  const bool noise = px.has_variance();
  for (std::size_t i = 0; i < px.size(); ++i) {
    S += px.value[i];
    if (noise) {
      V += px.variance_at(i);
      if (px.value[i] > o.detection_snr * std::sqrt(px.variance_at(i))) ++det;
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
                                       const VerdictOptions& o, const FlipSummary* flip) {
  PlausibleCheck pc;
  const Eigen::Matrix2d& C = in.centre_covariance;
  const double k = o.plausible_sigma;
  {
    Eigen::SelfAdjointEigenSolver<Eigen::Matrix2d> es(C);
    pc.farthest_plausible_arcsec = k * std::sqrt(std::max(0.0, es.eigenvalues()(1)));
  }
  std::vector<SkyOffset> probes;  // the successful estimates, in order
  for (const auto& e : in.estimates)
    if (e.ok()) {
      probes.push_back(pr.offset_of(e.position));
      pc.farthest_plausible_arcsec = std::max(pc.farthest_plausible_arcsec, (probes.back() - in.centre).norm());
    }
  // The flip distance's results are reused only when computed for the same
  // centre, nominal angle and probes.
  const auto same = [](SkyOffset a, SkyOffset b) { return a.east == b.east && a.north == b.north; };
  bool reuse = flip && same(flip->centre, in.centre) && flip->nominal_tail_pa_deg == in.tail_pa_deg &&
               flip->probes.size() == probes.size() && flip->angles_deg.size() == flip->per_angle.size();
  for (std::size_t j = 0; reuse && j < probes.size(); ++j) reuse = same(flip->probes[j], probes[j]);
  int nominal_sign;
  if (reuse) {
    nominal_sign = flip->nominal_sign;
  } else {
    const ProjectionEngine e(pr.pixels, in.tail_pa_deg * degrees, {0.0, false});
    nominal_sign = sign_of(e.asymmetry(e.s_of(in.centre)));
  }
  // The same confidence level for the tail angle as for the centre: +- k err.
  pc.angle_range_deg = k * in.tail_pa_err_deg;
  const auto angles = angle_grid(in.tail_pa_deg, pc.angle_range_deg, o.angle_step_deg);
  pc.worst_flip_margin_arcsec = std::numeric_limits<double>::infinity();
  pc.worst_flip_arcsec = std::numeric_limits<double>::infinity();
  ProjectionEngine e;  // rebuilt in place for every angle (its storage reused)
  split::EngineScratch scratch;
  std::vector<int> signs(probes.size());
  for (double a : angles) {
    const AngleFlip* known = nullptr;
    if (reuse)
      for (std::size_t j = 0; j < flip->angles_deg.size() && !known; ++j)
        if (flip->angles_deg[j] == a) known = &flip->per_angle[j];
    AngleFlip fl;
    if (known) {
      fl = *known;
      signs = known->probe_signs;
    } else {
      e.rebuild(pr.pixels, a * degrees, {0.0, false}, &scratch);
      fl = flip_at_angle(e, in.centre, nominal_sign);
      // Once the sign has changed the estimates are not looked at again.
      for (std::size_t j = 0; j < probes.size() && !pc.sign_changes; ++j)
        signs[j] = sign_of(e.asymmetry(e.s_of(probes[j])));
    }
    const SkyOffset n = fl.normal;
    const double reach = k * std::sqrt(std::max(0.0, n.east * (C(0, 0) * n.east + C(0, 1) * n.north) +
                                                         n.north * (C(1, 0) * n.east + C(1, 1) * n.north)));
    const double margin = fl.distance_arcsec - reach;
    if (fl.found || fl.already_reversed)
      pc.worst_flip_arcsec = std::min(pc.worst_flip_arcsec, fl.already_reversed ? 0.0 : fl.distance_arcsec);
    pc.worst_flip_margin_arcsec = std::min(pc.worst_flip_margin_arcsec, margin);
    if (!pc.sign_changes && (fl.already_reversed || (fl.found && fl.distance_arcsec <= reach))) {
      pc.sign_changes = true;
      pc.where = fl.already_reversed
                     ? "at the adopted centre for tail PA " + f("%.1f", wrap_pa_deg(a)) + " deg"
                     : "inside the " + f("%.0f", k) + "-sigma centre ellipse (flip " +
                           f("%.2f", fl.distance_arcsec) + " arcsec <= reach " + f("%.2f", reach) +
                           " arcsec) for tail PA " + f("%.1f", wrap_pa_deg(a)) + " deg";
    }
    std::size_t j = 0;
    for (const auto& est : in.estimates) {
      if (!est.ok()) continue;
      const int sg = signs[j++];
      if (pc.sign_changes) continue;
      if (nominal_sign != 0 && sg != nominal_sign) {
        pc.sign_changes = true;
        pc.where = "at the " + est.id() + " centre for tail PA " + f("%.1f", wrap_pa_deg(a)) + " deg";
      }
    }
  }
  return pc;
}

namespace {
// Significance: can noise (with the centre and angle errors) make this A?
bool is_significant(double A, double sigma, double P, const VerdictOptions& o, std::string* why) {
  const double z = sigma > 0.0 ? std::abs(A) / sigma : (A != 0.0 ? INFINITY : 0.0);
  const bool p_ok = A > 0.0 ? P >= o.significance_p : (A < 0.0 ? P <= 1.0 - o.significance_p : false);
  if (z >= o.significance_z && p_ok) return true;
  if (z < o.significance_z)
    *why = "noise can make this A: |A| / sigma_A = " + f("%.2f", z) + " < " + f("%.2f", o.significance_z);
  else
    *why = "noise can make this A: " + p_words(P) + " is not beyond " +
           f("%.3f", A > 0.0 ? o.significance_p : 1.0 - o.significance_p);
  return false;
}

std::string calibration_words(const CalibrationEvidence& c) {
  std::string s = std::to_string(c.false_secure) + " of " + std::to_string(c.n_valid) +
                  " matched symmetric mocks were called robust or reversed";
  if (c.n_failed > 0) s += " (" + std::to_string(c.n_failed) + " more whose re-fit failed are not counted)";
  return s;
}

// Robust / reversed / marginal for a significant A that no plausible centre reverses.
Verdict secure_class(double A, double sigma, double P, const VerdictOptions& o,
                     const std::optional<CalibrationEvidence>& cal, std::string* why) {
  const double z = sigma > 0.0 ? std::abs(A) / sigma : INFINITY;
  const bool pos = A > 0.0;
  const bool p_ok = pos ? P >= o.robust_p : P <= o.reversed_p;
  const std::string name = pos ? "robust" : "reversed";
  const std::string pbar = pos ? "P(A > 0) >= " + f("%.3f", o.robust_p) : "P(A > 0) <= " + f("%.3f", o.reversed_p);
  if (!p_ok || z < o.robust_z) {
    *why = "significant, but below the bar for " + name + " (" + pbar + " and |A| / sigma_A >= " +
           f("%.2f", o.robust_z) + "; here " + p_words(P) + ", |A| / sigma_A = " + f("%.2f", z) + ")";
    return Verdict::marginal;
  }
  if (cal && cal->n_valid > 0) {
    const double rate = double(cal->false_secure) / double(cal->n_valid);
    if (rate > o.max_false_secure_rate) {
      *why = "would be " + name + ", but " + calibration_words(*cal) + " (" + f("%.1f", 100.0 * rate) +
             "% > " + f("%.1f", 100.0 * o.max_false_secure_rate) + "%): these data make such an A without a real excess";
      return Verdict::marginal;
    }
  }
  *why = std::string(pos ? "A > 0" : "A < 0") + " at every plausible centre, " + pbar + " and |A| / sigma_A = " +
         f("%.2f", z) + " >= " + f("%.2f", o.robust_z);
  if (cal && cal->n_valid > 0) *why += "; " + calibration_words(*cal);
  else if (cal) *why += "; the calibration had no valid mock";
  return pos ? Verdict::robust : Verdict::reversed;
}

std::string flip_words(const FlipSummary& flip, const PlausibleCheck& pc, double tail_err) {
  const auto dist = [](bool found, double d) {
    return found ? f("%.2f", d) + " arcsec" : std::string("no shift within the map");
  };
  std::string s = "reversing the sign needs a centre shift of " + dist(flip.nominal.found, flip.nominal.distance_arcsec);
  if (flip.nominal.found && std::isfinite(flip.nominal_beams))
    s += " (" + f("%.2f", flip.nominal_beams) + " beams) towards PA " + f("%.0f", flip.nominal.direction_pa_deg) + " deg";
  if (tail_err > 0.0)
    s += ", " + dist(std::isfinite(pc.worst_flip_arcsec), pc.worst_flip_arcsec) + " for a tail PA within +-" +
         f("%.0f", pc.angle_range_deg) + " deg";
  return s + ", against " + f("%.2f", pc.farthest_plausible_arcsec) + " arcsec to the farthest plausible centre";
}

std::string undetermined_reason(const split::SplitProblem& pr, const split::SplitSummary& nom,
                                const VerdictInput& in, const VerdictOptions& o, VerdictSummary& v) {
  detection_stats(pr, o, &v.total_snr, &v.detected_beams);
  std::string why;
  for (const auto& s : in.failures) why += (why.empty() ? "" : "; ") + s;
  if (why.empty() && !(nom.total_flux > 0.0)) why = "the total flux in the analysis region is not positive";
  if (why.empty() && std::isfinite(v.total_snr) && v.total_snr < o.min_total_snr)
    why = "too little detected emission: total S/N " + f("%.1f", v.total_snr) + " < " + f("%.1f", o.min_total_snr);
  if (why.empty() && std::isfinite(v.detected_beams) && v.detected_beams < o.min_detected_beams)
    why = "too little detected emission: " + f("%.1f", v.detected_beams) + " beams above " +
          f("%.0f", o.detection_snr) + " sigma < " + f("%.1f", o.min_detected_beams);
  return why;
}
}  // namespace

Verdict classify_significance(double A, double sigma, double P, const VerdictOptions& o,
                              const std::optional<CalibrationEvidence>& cal, std::string* reason) {
  std::string why;
  Verdict v = is_significant(A, sigma, P, o, &why) ? secure_class(A, sigma, P, o, cal, &why) : Verdict::marginal;
  if (reason) *reason = why;
  return v;
}

VerdictSummary decide(const split::SplitProblem& pr, const split::SplitSummary& nom,
                      const FlipSummary& flip, const BootstrapSummary& boot, const VerdictInput& in,
                      const VerdictOptions& o) {
  VerdictSummary v;
  v.galaxy = in.galaxy;
  const std::string why = undetermined_reason(pr, nom, in, o, v);
  const double A = nom.asymmetry, sigma = boot.stddev, P = boot.p_positive;
  v.significance = sigma > 0.0 ? std::abs(A) / sigma : std::numeric_limits<double>::quiet_NaN();
  v.evidence = "A = " + f("%+.3f", A) + " +- " + f("%.3f", sigma) + " (68% " + f("%+.3f", boot.lo68) + " to " +
               f("%+.3f", boot.hi68) + ", 95% " + f("%+.3f", boot.lo95) + " to " + f("%+.3f", boot.hi95) +
               "), " + p_words(P) + " from " + std::to_string(boot.n_draws) + " draws (seed " +
               std::to_string(boot.seed) + ")";
  if (!why.empty()) {
    v.verdict = Verdict::undetermined;
    v.reason = why;
    v.statement = in.galaxy + ": undetermined, because " + why + " (" + v.evidence + ").";
    return v;
  }
  v.plausible = check_plausible_centres(pr, in, o, &flip);
  v.evidence += "; " + flip_words(flip, v.plausible, in.tail_pa_err_deg);
  if (in.calibration && in.calibration->n_valid > 0) {
    v.calibration_used = true;
    v.false_secure_rate = double(in.calibration->false_secure) / double(in.calibration->n_valid);
  }
  v.significant = is_significant(A, sigma, P, o, &v.reason);
  if (!v.significant) {
    v.verdict = Verdict::marginal;
  } else if (v.plausible.sign_changes) {
    v.verdict = Verdict::centre_sensitive;
    v.reason = "the sign of A changes " + v.plausible.where;
  } else {
    v.verdict = secure_class(A, sigma, P, o, in.calibration, &v.reason);
  }
  v.statement = in.galaxy + ": " + v.evidence + ": " + verdict_name(v.verdict) + " (" + v.reason + ").";
  return v;
}

VerdictSummary apply_calibration(const VerdictSummary& in, const CalibrationEvidence& cal,
                                 const VerdictOptions& o) {
  VerdictSummary v = in;
  if (cal.n_valid == 0) return v;
  v.calibration_used = true;
  v.false_secure_rate = double(cal.false_secure) / double(cal.n_valid);
  if (v.verdict != Verdict::robust && v.verdict != Verdict::reversed) return v;
  const std::string name = verdict_name(v.verdict);
  if (v.false_secure_rate > o.max_false_secure_rate) {
    v.reason = "would be " + name + ", but " + calibration_words(cal) + " (" + f("%.1f", 100.0 * v.false_secure_rate) +
               "% > " + f("%.1f", 100.0 * o.max_false_secure_rate) + "%): these data make such an A without a real excess";
    v.verdict = Verdict::marginal;
  } else {
    v.reason += "; " + calibration_words(cal);
  }
  v.statement = v.galaxy + ": " + v.evidence + ": " + verdict_name(v.verdict) + " (" + v.reason + ").";
  return v;
}

nlohmann::json to_json(const VerdictSummary& v) {
  auto num = [](double x) { return std::isfinite(x) ? nlohmann::json(x) : nlohmann::json(); };
  return {{"verdict", verdict_name(v.verdict)},
          {"reason", v.reason},
          {"statement", v.statement},
          {"total_snr", num(v.total_snr)},
          {"detected_beams", num(v.detected_beams)},
          {"significance", num(v.significance)},
          {"significant", v.significant},
          {"calibration_used", v.calibration_used},
          {"false_secure_rate", v.calibration_used ? nlohmann::json(v.false_secure_rate) : nlohmann::json()},
          {"plausible_sign_change", v.plausible.sign_changes},
          {"tail_angle_range_deg", v.plausible.angle_range_deg},
          {"plausible_where", v.plausible.where},
          {"farthest_plausible_arcsec", v.plausible.farthest_plausible_arcsec},
          {"worst_flip_margin_arcsec", num(v.plausible.worst_flip_margin_arcsec)}};
}

}  // namespace fulcrum::robustness
