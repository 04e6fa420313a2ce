// One galaxy's split-robustness chain in one call: the exact split at the
// adopted centre, A at every successful centre estimate, the flip distance,
// the bootstrap, the verdict and its sentence, and (on request) the data of
// the robustness figures. This is THE chain: the single-galaxy pipeline
// (pipeline/galaxy_analysis.hpp) calls it once, and the matched-mock
// calibration (calibration/calibration.hpp) calls it on every mock, with the
// same ChainSettings, the same seed derivation and the same defaults.
//
// Seeds: one galaxy seed (ChainSettings::seed) drives the chain. The
// bootstrap uses it as given; the tail-direction bootstrap (only when the
// tail PA is estimated from an image) uses seed XOR "tail" (0x7461696c), a
// stream of its own.
//
// Units and conventions: centres in RA/Dec degrees (converted to (east,
// north) arcsec offsets about the adopted centre), covariances in arcsec^2
// (east, north), tail PA north through east in degrees.
#pragma once

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
#include "fulcrum/sky/centre.hpp"
#include "fulcrum/split/half_split.hpp"

namespace fulcrum::robustness {

// Settings that do not depend on the galaxy's data: the same struct for the
// single-galaxy analysis and for every calibration mock.
struct ChainSettings {
  std::uint64_t seed = 1;          // the galaxy seed (see above)
  std::size_t n_draws = 20000;     // bootstrap draws
  // Bootstrap centres: false (default, DESIGN.md section 5) draws them about
  // the adopted centre with its covariance only; the estimates enter the
  // verdict as plausible centres. true: a mixture over {adopted} U estimates.
  bool bootstrap_estimates = false;
  VerdictOptions verdict;          // thresholds; angle_step_deg is also the flip-distance angle step
  bool figure_data = false;        // keep the bootstrap draws, scan the offset plane, wide flip range
};

struct AnalysisOptions {
  std::string galaxy = "the galaxy";
  Centre adopted;                          // c0 (the adopted-centre policy's choice)
  std::vector<Centre> estimates;           // other centre estimates (failed ones are ignored)
  std::optional<double> tail_pa_deg;       // else estimated from tail_image
  double tail_pa_err_deg = 10.0;
  const Image* tail_image = nullptr;       // used when tail_pa_deg is empty
  std::optional<split::ApertureSpec> aperture;  // default: all finite pixels
  double rms = 0.0;
  const Image* error_map = nullptr;
  double clip_snr = 0.0;                   // > 0: the map was clipped at this S/N (split/clipped_noise.hpp)
  double noise_correlation_beams = 2.0;    // integral of the noise correlation in beam areas (half_split.hpp)
  std::vector<std::string> failures;       // known problems (e.g. "kinematic fit failed")
  ChainSettings settings;
};

// The split about one centre estimate.
struct SplitAtCentre {
  std::string id;                          // Centre::id()
  split::SplitSummary split;
};

// What the robustness figures draw: A over a square of centre offsets at the
// nominal angle, and the flip distance over a wide range of split angles.
struct RobustnessFigureData {
  ScanSummary plane;
  FlipSummary wide_flip;
};

struct AnalysisSummary {
  std::string galaxy;
  split::SplitProblem problem;             // the prepared map (aperture, noise, units)
  split::SplitSummary split;               // at the adopted centre, nominal angle
  std::vector<SplitAtCentre> at_centres;   // adopted first, then each successful estimate in order
  FlipSummary flip;
  BootstrapSummary bootstrap;
  VerdictSummary verdict;
  std::optional<TailDirectionSummary> tail;
  std::optional<RobustnessFigureData> figures;
  double tail_pa_deg = 0.0, tail_pa_err_deg = 0.0;
  ChainSettings settings;                  // as used
};

// Throws InputError on unusable inputs (no map WCS, no tail direction, ...);
// a measurement the data cannot support gives verdict "undetermined" instead.
AnalysisSummary analyse(const Image& map, const AnalysisOptions& options);
nlohmann::json to_json(const AnalysisSummary& a);

}  // namespace fulcrum::robustness
