// The verdict on a galaxy's leading-side excess and the sentence that states
// it (DESIGN.md §5).
//
// Classes, checked in this order (significance first, docs/robustness.md):
//   undetermined      the inputs cannot support the measurement: the total
//                     S/N in the aperture is below min_total_snr, or the
//                     detected area (pixels above detection_snr sigma) is
//                     below min_detected_beams beams, or a required fit
//                     failed (the caller passes the reason);
//   marginal          noise alone can make this A: |A| / sigma_A <
//                     significance_z, or P(A > 0) inside (1 - significance_p,
//                     significance_p). sigma_A is the bootstrap's standard
//                     deviation (centre, tail angle and map noise). Such an A
//                     is never robust, reversed or centre-sensitive;
//   centre-sensitive  the sign of A at some plausible centre, for some tail
//                     angle within plausible_sigma of its error, differs from
//                     the sign at the adopted centre and nominal angle.
//                     Plausible centres: the plausible_sigma (default 2)
//                     sigma ellipse of the adopted centre and every
//                     successful centre estimate; the SAME plausible_sigma
//                     bounds the tail-angle range (nominal +- k err);
//   robust            A > 0, P(A > 0) >= robust_p, A / sigma_A >= robust_z,
//                     and, when a matched-mock calibration is given, its
//                     symmetric mocks were called robust or reversed in at
//                     most max_false_secure_rate of the mocks whose re-fit
//                     succeeded;
//   reversed          the same bar for A < 0 (P(A > 0) <= reversed_p);
//   marginal          everything else (significant, but below the robust bar
//                     or failing the calibration: the reason says which).
// The defaults (robust_p 0.99, robust_z 2.33, significance_p 0.975,
// significance_z 1.96) were chosen with tools/verdict_threshold_study.py
// (docs/robustness.md, "Choosing the thresholds").
// For one angle the plausible ellipse projects onto n as the interval
// s0 +- k sqrt(n^T C n) (the support function of the ellipse), so the sign
// changes inside it exactly when the flip distance at that angle is at most
// k sqrt(n^T C n); estimates are checked by evaluating A at their own s.
#pragma once

#include <Eigen/Core>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <vector>

#include "fulcrum/robustness/bootstrap.hpp"
#include "fulcrum/robustness/flip_distance.hpp"
#include "fulcrum/split/half_split.hpp"

namespace fulcrum::robustness {

enum class Verdict { undetermined, centre_sensitive, robust, reversed, marginal };
std::string verdict_name(Verdict v);  // "undetermined", "centre-sensitive", ...

struct VerdictOptions {
  double significance_p = 0.975;  // P(A > 0) outside (1 - p, p) to be significant
  double significance_z = 1.96;   // |A| / sigma_A to be significant
  double robust_p = 0.99;         // robust: P >= robust_p
  double reversed_p = 0.01;       // reversed: P <= reversed_p
  double robust_z = 2.33;         // and |A| / sigma_A >= robust_z
  double max_false_secure_rate = 0.05;  // calibration: symmetric mocks called robust/reversed
  double plausible_sigma = 2.0;   // centre ellipse AND tail-angle range, in sigma
  double min_total_snr = 5.0;
  double min_detected_beams = 3.0;
  double detection_snr = 3.0;
  double angle_step_deg = 1.0;  // grid over the tail-PA error
};

// What the matched-mock calibration (calibration/calibration.hpp) says about
// this galaxy's data: of n_valid symmetric (A = 0) mocks whose analysis ran
// (failed re-fits excluded and counted separately), k were called robust or
// reversed.
struct CalibrationEvidence {
  std::size_t false_secure = 0, n_valid = 0, n_failed = 0;
};

struct VerdictInput {
  SkyOffset centre;                     // adopted c0 (problem frame)
  Eigen::Matrix2d centre_covariance = Eigen::Matrix2d::Zero();
  std::vector<Centre> estimates;        // other centres (sky/centre.hpp); failed ones are skipped
  double tail_pa_deg = 0.0, tail_pa_err_deg = 0.0;
  std::vector<std::string> failures;    // reasons the caller already knows (fits failed, ...)
  std::string galaxy = "the galaxy";
  std::optional<CalibrationEvidence> calibration;  // when the calibration ran first
};

struct PlausibleCheck {
  bool sign_changes = false;
  std::string where;            // which plausible centre / angle changes the sign
  double farthest_plausible_arcsec = 0.0;  // farthest plausible centre from c0
  double worst_flip_margin_arcsec = 0.0;   // min over angles of flip - plausible reach
  double angle_range_deg = 0.0;            // the tail-angle half-range checked (k err)
  double worst_flip_arcsec = 0.0;          // smallest flip distance over that range (inf: none)
};

struct VerdictSummary {
  Verdict verdict = Verdict::undetermined;
  std::string reason;           // for undetermined: what is missing; otherwise the rule
  std::string statement;        // one plain sentence with the numbers
  std::string galaxy;
  std::string evidence;         // the numbers part of the statement (reused by apply_calibration)
  double total_snr = 0.0;
  double detected_beams = 0.0;
  double significance = 0.0;    // |A| / sigma_A (sigma_A the bootstrap standard deviation)
  bool significant = false;     // passed the significance test
  bool calibration_used = false;
  double false_secure_rate = 0.0;  // from the calibration, when used
  PlausibleCheck plausible;
};

// Signal checks: total S/N and detected area in beams.
void detection_stats(const split::SplitProblem& problem, const VerdictOptions& options,
                     double* total_snr, double* detected_beams);

// `flip` (optional): the flip distance of the same problem. Its angles that
// the check also needs (the same tail PA to the last bit, the same centre,
// and probes at the successful estimates in order) are read from it instead
// of building their engines again; the result is the same.
PlausibleCheck check_plausible_centres(const split::SplitProblem& problem, const VerdictInput& in,
                                       const VerdictOptions& options, const FlipSummary* flip = nullptr);

VerdictSummary decide(const split::SplitProblem& problem, const split::SplitSummary& nominal,
                      const FlipSummary& flip, const BootstrapSummary& boot,
                      const VerdictInput& in, const VerdictOptions& options);

// The class from the numbers alone (no map): the rule above after the
// undetermined and centre-sensitive checks. `reason` receives the rule that
// fired. Exposed for the threshold study and the tests.
Verdict classify_significance(double asymmetry, double sigma, double p_positive,
                              const VerdictOptions& options,
                              const std::optional<CalibrationEvidence>& calibration,
                              std::string* reason);

// Re-apply a calibration that ran after decide(): a robust/reversed verdict
// whose matched symmetric mocks were called robust or reversed too often
// becomes marginal, with the reason; the statement is rewritten to match.
VerdictSummary apply_calibration(const VerdictSummary& verdict, const CalibrationEvidence& calibration,
                                 const VerdictOptions& options);

nlohmann::json to_json(const VerdictSummary& v);

}  // namespace fulcrum::robustness
