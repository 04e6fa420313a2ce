// Several starts for the global tilted-ring fit, so that the answer does not
// depend on where one first guess happened to put the fit.
//
// A least-squares fit of a velocity field can settle in a local minimum: a
// PA off by tens of degrees with the centre moved along the minor axis, or
// the receding side swapped. scout_starts runs quick "scout" fits (the global
// fit of global_fit.hpp on a thinned set of at most `scout_samples` pixels,
// `scout_passes` passes) from a grid of starts:
//   * PA: the first-guess (velocity-gradient) PA plus every 360/`pa_starts`
//     deg, or only the PA the user gave. PA + 180 deg is the same model with
//     the speeds' signs swapped, so a start whose flip is already in the grid
//     is not run again (8: four scouts, every 45 deg over half a turn);
//   * centre: the first-guess centre (footprint centroid) and the coordinate-
//     wise median of the footprint when the two differ by more than a
//     quarter of the ring width, or only the centre the user gave;
// and ranks the scouts by their misfit on one common set, every thinned
// sample: the median of |v - model| / sigma (the fits' own chi^2 cannot be
// compared: each uses the pixels its geometry selects, and a wrong geometry
// can drop the pixels that disagree with it). The best start and
// the best *distinct* one (centre more than `distinct_centre_beams` beam
// FWHM away, or PA more than `distinct_pa_deg`, or inclination more than
// `distinct_inc_deg` from the best; and within `second_fit_margin` of its
// misfit) are returned, as the scouts' solutions
// (with the PA turned to the receding half), to start the full fits from.
//
// Units: arcsec (east, north) from the samples' reference, degrees, km/s.
#pragma once

#include <optional>
#include <vector>

#include "fulcrum/kinematics/first_guess.hpp"
#include "fulcrum/kinematics/global_fit.hpp"

namespace fulcrum::kinematics {

struct MultiStartOptions {
  bool enabled = true;
  int pa_starts = 8;
  bool pa_given = false;        // the user's PA: start there only
  bool centre_given = false;    // the user's centre: start there only
  int scout_samples = 2000;
  int scout_passes = 3;
  double distinct_centre_beams = 0.5;
  double distinct_pa_deg = 20.0;
  double distinct_inc_deg = 10.0;
  // The distinct scout is fitted in full only when its misfit is below
  // (1 + second_fit_margin) x the best one's: a clearly worse minimum is not
  // a rival (and costs a full fit).
  double second_fit_margin = 0.5;
};

struct ScoutResult {
  DiscGeometry start, solution;
  bool converged = false;
  double misfit = 0.0;              // median |v - model| / sigma over the thinned samples
  int n_used = 0;
};

struct MultiStartSummary {
  int starts = 0;               // scouts run
  int converged = 0;
  DiscGeometry best_start;
  std::optional<DiscGeometry> second_start;  // solution of the best distinct scout
  double best_misfit = 0.0;
  double second_misfit = 0.0;
  std::vector<ScoutResult> scouts;
};

// `guess` is the first guess (with the user's overrides applied); `fit`
// the options of the full global fit (its fix_* flags are kept);
// `beam_fwhm_arcsec` scales the distinctness test (0: the ring width).
MultiStartSummary scout_starts(const VelocitySamples& samples, const FirstGuess& guess,
                               const GlobalFitOptions& fit, const MultiStartOptions& options,
                               double beam_fwhm_arcsec);

// Whether two solutions are distinct in the sense above.
bool distinct_solutions(const DiscGeometry& a, const DiscGeometry& b,
                        const MultiStartOptions& options, double beam_fwhm_arcsec);

}  // namespace fulcrum::kinematics
