// One galaxy's split-robustness analysis in one call: the exact split at the
// adopted centre, the flip distance, the bootstrap, the verdict and its
// sentence, and optionally a scan. This is what the whole-job pipeline calls.
//
// Units and conventions: centres in RA/Dec degrees (converted to (east,
// north) arcsec offsets about the adopted centre), covariances in arcsec^2
// (east, north), tail PA north through east in degrees.
#pragma once

#include <Eigen/Core>
#include <cstdint>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <vector>

#include "fulcrum/robustness/bootstrap.hpp"
#include "fulcrum/robustness/flip_distance.hpp"
#include "fulcrum/robustness/scan.hpp"
#include "fulcrum/robustness/tail_direction.hpp"
#include "fulcrum/robustness/verdict.hpp"
#include "fulcrum/split/half_split.hpp"

namespace fulcrum::robustness {

struct WorldCentre {
  std::string name;
  WorldCoord position;
  Eigen::Matrix2d covariance = Eigen::Matrix2d::Zero();  // arcsec^2 (east, north)
  double weight = 1.0;
  bool ok = true;
};

struct AnalysisOptions {
  std::string galaxy = "the galaxy";
  WorldCentre adopted;                     // c0 (kinematic centre when its fit succeeded)
  std::vector<WorldCentre> estimates;      // other centre estimates
  std::optional<double> tail_pa_deg;       // else estimated from tail_image
  double tail_pa_err_deg = 10.0;
  const Image* tail_image = nullptr;       // used when tail_pa_deg is empty
  std::optional<split::ApertureSpec> aperture;  // default: all finite pixels
  double rms = 0.0;
  const Image* error_map = nullptr;
  double clip_snr = 0.0;                   // > 0: the map was clipped at this S/N (split/clipped_noise.hpp)
  double noise_correlation_beams = 2.0;    // integral of the noise correlation in beam areas (half_split.hpp)
  std::uint64_t seed = 1;
  std::size_t n_draws = 10000;
  // Bootstrap centres: false (default, DESIGN.md section 5) draws them about
  // the adopted centre with its covariance only; the estimates enter the
  // verdict as plausible centres. true: a mixture over {adopted} U estimates.
  bool bootstrap_estimates = false;
  bool run_scan = false;
  ScanOptions scan;                        // tail_pa/centre are filled in
  VerdictOptions verdict;
  std::vector<std::string> failures;       // known problems (e.g. "kinematic fit failed")
};

struct AnalysisSummary {
  std::string galaxy;
  split::SplitSummary split;
  FlipSummary flip;
  BootstrapSummary bootstrap;
  VerdictSummary verdict;
  std::optional<TailDirectionSummary> tail;
  std::optional<ScanSummary> scan;
  double tail_pa_deg = 0.0, tail_pa_err_deg = 0.0;
};

// Throws InputError on unusable inputs (no map WCS, no tail direction, ...);
// a measurement the data cannot support gives verdict "undetermined" instead.
AnalysisSummary analyse(const Image& map, const AnalysisOptions& options);
nlohmann::json to_json(const AnalysisSummary& a);

}  // namespace fulcrum::robustness
