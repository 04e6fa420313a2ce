// Bootstrap of the asymmetry: how often does a plausible centre, tail angle and
// noise realisation give A > 0, and how wide is the spread of A?
//
// Units and conventions: centre offsets (east, north) arcsec in the problem's
// frame, covariances in arcsec^2, angles are tail PAs in degrees.
//
// Each draw d takes
//   * a centre: c0 + L z (L the Cholesky factor of the adopted centre's
//     covariance, z two normal deviates); with `use_estimates`, the draw first
//     picks one centre of {adopted} U estimates with probability proportional
//     to its weight, then scatters about it with that centre's covariance;
//   * a tail angle: nominal + err * z, snapped to the nearest node of a grid
//     of step `angle_node_step_deg` about the nominal angle (the node grid
//     is what makes a draw a profile read: one engine per node; the snap adds
//     step^2/12 to the angle variance, 1/1200 of err^2 at the default step
//     err/10);
//   * map noise: noise enters L and T linearly, L_noise = sum_i eps_i a_i(s),
//     so for given (s, angle) the noise of L and of T are zero-mean Gaussians
//     whose variances are the variance map projected through the same engine
//     (times the pixels-per-beam correction of half_split.hpp). Drawing them
//     directly is the same as projecting a fresh beam-correlated realisation
//     scaled to the error map for every draw, in the approximation that a
//     half is much larger than a beam (L and T noises independent).
// and gives A_d = (L_d - T_d)/(L_d + T_d). All deviates come, in a fixed order,
// from one Generator (random.hpp) seeded with `seed`: draws are generated
// first, then evaluated grouped by angle node (in parallel over nodes, each
// result written to its own slot), so the result does not depend on the
// number of threads.
//
// Outputs: P(A > 0) = fraction of draws with A > 0, the median, the 68%
// (16-84) and 95% (2.5-97.5) percentile intervals (linear interpolation
// between order statistics), the number of draws and the seed.
#pragma once

#include <Eigen/Core>
#include <cstdint>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "fulcrum/sky/centre.hpp"
#include "fulcrum/split/half_split.hpp"

namespace fulcrum::robustness {

struct BootstrapOptions {
  std::size_t n_draws = 10000;
  std::uint64_t seed = 1;
  SkyOffset centre;                                        // adopted c0
  Eigen::Matrix2d centre_covariance = Eigen::Matrix2d::Zero();  // arcsec^2
  bool use_estimates = false;
  // Besides the adopted one (sky/centre.hpp; placed in the problem's frame
  // by SplitProblem::offset_of; failed ones and weight <= 0 are not used).
  std::vector<Centre> estimates;
  double tail_pa_deg = 0.0;
  double tail_pa_err_deg = 0.0;
  double angle_node_step_deg = 0.0;  // 0: err/10, at most 1 deg
  bool noise = true;                 // needs a variance channel
  bool keep_draws = false;           // return every A_d
};

struct BootstrapSummary {
  std::size_t n_draws = 0;
  std::uint64_t seed = 0;
  double p_positive = 0.0;
  double median = 0.0, mean = 0.0, stddev = 0.0;
  double lo68 = 0.0, hi68 = 0.0, lo95 = 0.0, hi95 = 0.0;
  std::size_t angle_nodes = 0;
  bool noise_included = false;
  std::vector<double> draws;  // when keep_draws
};

BootstrapSummary bootstrap(const split::SplitProblem& problem, const BootstrapOptions& options);

// Percentile q in [0, 1] of sorted values (linear interpolation, the
// "type 7" definition of Hyndman & Fan 1996, Am. Stat. 50, 361).
double percentile_sorted(const std::vector<double>& sorted, double q);

nlohmann::json to_json(const BootstrapSummary& b);

}  // namespace fulcrum::robustness
