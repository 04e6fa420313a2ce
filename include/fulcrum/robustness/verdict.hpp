// The verdict on a galaxy's leading-side excess and the sentence that states
// it (DESIGN.md §5).
//
// Classes, checked in this order:
//   undetermined      the inputs cannot support the measurement: the total
//                     S/N in the aperture is below min_total_snr, or the
//                     detected area (pixels above detection_snr sigma) is
//                     below min_detected_beams beams, or a required fit
//                     failed (the caller passes the reason);
//   centre-sensitive  the sign of A at some plausible centre, for some tail
//                     angle within its error, differs from the sign at the
//                     adopted centre and nominal angle. Plausible centres: the
//                     plausible_sigma (default 2) sigma ellipse of the adopted
//                     centre and every successful centre estimate;
//   robust            not centre-sensitive, A > 0 and P(A > 0) >= robust_p;
//   reversed          not centre-sensitive, A < 0 and P(A > 0) <= reversed_p;
//   marginal          everything else.
// For one angle the plausible ellipse projects onto n as the interval
// s0 +- k sqrt(n^T C n) (the support function of the ellipse), so the sign
// changes inside it exactly when the flip distance at that angle is at most
// k sqrt(n^T C n); estimates are checked by evaluating A at their own s.
#pragma once

#include <Eigen/Core>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "fulcrum/robustness/bootstrap.hpp"
#include "fulcrum/robustness/flip_distance.hpp"
#include "fulcrum/split/half_split.hpp"

namespace fulcrum::robustness {

enum class Verdict { undetermined, centre_sensitive, robust, reversed, marginal };
std::string verdict_name(Verdict v);  // "undetermined", "centre-sensitive", ...

struct VerdictOptions {
  double robust_p = 0.95;
  double reversed_p = 0.05;
  double plausible_sigma = 2.0;
  double min_total_snr = 5.0;
  double min_detected_beams = 3.0;
  double detection_snr = 3.0;
  double angle_step_deg = 1.0;  // grid over the tail-PA error
};

struct VerdictInput {
  SkyOffset centre;                     // adopted c0 (problem frame)
  Eigen::Matrix2d centre_covariance = Eigen::Matrix2d::Zero();
  std::vector<CentreEstimate> estimates;
  double tail_pa_deg = 0.0, tail_pa_err_deg = 0.0;
  std::vector<std::string> failures;    // reasons the caller already knows (fits failed, ...)
  std::string galaxy = "the galaxy";
};

struct PlausibleCheck {
  bool sign_changes = false;
  std::string where;            // which plausible centre / angle changes the sign
  double farthest_plausible_arcsec = 0.0;  // farthest plausible centre from c0
  double worst_flip_margin_arcsec = 0.0;   // min over angles of flip - plausible reach
};

struct VerdictSummary {
  Verdict verdict = Verdict::undetermined;
  std::string reason;           // for undetermined: what is missing; otherwise the rule
  std::string statement;        // one plain sentence with the numbers
  double total_snr = 0.0;
  double detected_beams = 0.0;
  PlausibleCheck plausible;
};

// Signal checks: total S/N and detected area in beams.
void detection_stats(const split::SplitProblem& problem, const VerdictOptions& options,
                     double* total_snr, double* detected_beams);

PlausibleCheck check_plausible_centres(const split::SplitProblem& problem, const VerdictInput& in,
                                       const VerdictOptions& options);

VerdictSummary decide(const split::SplitProblem& problem, const split::SplitSummary& nominal,
                      const FlipSummary& flip, const BootstrapSummary& boot,
                      const VerdictInput& in, const VerdictOptions& options);

nlohmann::json to_json(const VerdictSummary& v);

}  // namespace fulcrum::robustness
