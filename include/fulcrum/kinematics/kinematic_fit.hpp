// The dynamical centre of a disc from its velocity map: the library entry
// point behind `fulcrum kinematics` and the whole-galaxy pipeline.
//
//   KinematicOptions opt;                  // defaults: both methods
//   KinematicFit fit = fit_kinematics(velocity, &velocity_error, opt, &intensity);
//   if (fit.status == "ok") use(fit.centre.world, fit.centre.covariance);
//   nlohmann::json j = to_json(fit);
//
// Steps: samples on the sky (velocity_samples.hpp), first guesses
// (first_guess.hpp, overridable), the global tilted-ring fit (global_fit.hpp,
// the dynamical centre), the beam-smearing correction of the global fit
// (beam_smearing.hpp: refits to the velocities minus what the beam does to
// the fitted model, on by default when the map has a beam; the line-intensity
// map weights the smearing when given), the ring-by-ring fit (ring_fit.hpp,
// on the corrected velocities), the harmonic centre (harmonic_centre.hpp, on
// the observed velocities with the corrected PA and inclination). Rings are `ring_width_beams` beam FWHM wide
// (half a beam by default).
//
// Before any fit, the footprint is cleaned (footprint.hpp: neighbour
// outliers, isolated pixels, islands smaller than a beam) and, when the user
// gives a centre and a maximum radius, limited to that radius on the sky.
// The global fit starts from several places (multi_start.hpp); a second
// distinct solution that fits almost as well makes the answer "ambiguous"
// (solution_ambiguity.hpp), a note, and widens the centre covariance.
//
// fit_kinematics throws InputError only for unusable input (grids that do not
// match, a non-velocity unit, no WCS). When the data cannot constrain a
// centre it returns status "refused" with the reason (too few pixels, a
// nearly face-on disc, no measurable rotation); a fit that fails to converge,
// or converges to a degenerate answer (rank-deficient or near-singular
// covariance, a parameter at its limit, a beam-smearing correction larger
// than the rotation; fit_health.hpp) gives status "failed" with the reason.
// Only "ok" carries a centre.
//
// Conventions: the centre is reported as RA/Dec (degrees), as FITS pixels
// (1-based, through the map's WCS) and as (east, north) arcsec offsets from
// `reference` (the world position of the first-guess centre, or the given
// centre guess); its covariance is 2x2 in arcsec^2 on (east, north). PA of
// the receding half, north through east, in [0, 360) deg; km/s.
#pragma once

#include <Eigen/Core>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <vector>

#include "fulcrum/io/image.hpp"
#include "fulcrum/kinematics/beam_smearing.hpp"
#include "fulcrum/kinematics/centre_error_terms.hpp"
#include "fulcrum/kinematics/first_guess.hpp"
#include "fulcrum/kinematics/footprint.hpp"
#include "fulcrum/kinematics/global_fit.hpp"
#include "fulcrum/kinematics/multi_start.hpp"
#include "fulcrum/kinematics/solution_ambiguity.hpp"
#include "fulcrum/kinematics/harmonic_centre.hpp"
#include "fulcrum/kinematics/ring_fit.hpp"
#include "fulcrum/kinematics/velocity_scatter.hpp"
#include "fulcrum/sky/centre.hpp"

namespace fulcrum::kinematics {

enum class Method { rings, harmonic, both };
Method parse_method(const std::string& name);  // throws InputError
std::string method_name(Method m);

struct KinematicOptions {
  Method method = Method::both;
  // First-guess overrides (unset: from the data).
  std::optional<WorldCoord> centre_guess;
  std::optional<double> pa_guess_deg, inc_guess_deg, vsys_guess_kms;
  std::optional<double> max_radius_arcsec;
  std::optional<double> ring_width_arcsec;  // overrides ring_width_beams
  double ring_width_beams = 0.5;
  // The global fit leaves out pixels closer to the centre than this many
  // beam FWHM, where beam smearing flattens the velocity gradient and biases
  // the inclination (the centre stays unbiased by symmetry either way).
  double inner_exclusion_beams = 0.0;
  // Gaussian priors (1 sigma) about the given guesses (global_fit.hpp
  // GeometryPrior); each needs its guess (centre_guess, pa_guess_deg, ...).
  struct Prior {
    std::optional<double> centre_err_arcsec, pa_err_deg, inc_err_deg, vsys_err_kms;
  } prior;
  // Hold parameters at their guesses.
  bool fix_centre = false, fix_pa = false, fix_inc = false, fix_vsys = false;
  double weight_power = 1.0;                // |cos theta|^k
  double wedge_deg = 15.0;                  // excluded about the minor axis
  bool fit_radial = false;
  RobustLoss loss = RobustLoss::none;
  double loss_scale = 2.0;
  bool ring_free_vsys = false;              // ring-by-ring: fit vsys per ring
  bool ring_by_ring = true;                 // run the ring-by-ring fit
  double noise_correlation = 0.0;           // eta; 0: 2 x pixels per beam
  // The adopted centre, PA, inclination and vsys errors from the residuals
  // (sandwich with the measured residual correlation) plus the spread
  // between centre methods (centre_error_terms.hpp); off: the formal
  // covariance scaled by reduced chi^2 and eta.
  bool residual_covariance = true;
  // E0[sum z^2] / N of the residual scale, when shared from another fit of
  // the same disc (calibration mocks); 0: computed (centre_covariance.hpp).
  double expected_residual_fraction = 0.0;
  // Refusal thresholds.
  int min_pixels = 60;
  double min_pixels_per_parameter = 5.0;
  double min_inc_deg = 15.0;                // more face-on: refused
  double min_rotation_snr = 5.0;            // peak vrot sin i over its error
  double harmonic_min_radius_beams = 1.0;
  // Beam-smearing correction (beam_smearing.hpp, docs/kinematics.md §2a):
  // applied when this is set and a beam is known (the velocity map's, else
  // the intensity map's). The global fit is repeated on the corrected
  // velocities until no geometry parameter (centre, PA, inclination, vsys)
  // moves by more than `smearing_tolerance_sigma` of its 1-sigma error, at
  // most `smearing_max_refits` times.
  bool correct_beam_smearing = true;
  int smearing_max_refits = 4;
  double smearing_tolerance_sigma = 0.1;
  // A correction larger than this fraction of the projected rotation
  // amplitude makes the fit fail (fit_health.hpp).
  double max_smearing_fraction = 1.0;
  // Footprint cleaning (footprint.hpp) before anything else sees the pixels.
  FootprintOptions footprint;
  // Several starts (multi_start.hpp); the user's PA/centre, when given, are
  // the only PA/centre starts.
  MultiStartOptions starts;
  // A second distinct solution within this scaled chi^2 difference makes the
  // solution "ambiguous" (solution_ambiguity.hpp).
  double ambiguity_delta_chi2 = 4.0;
  // Add the velocity scatter the error map does not describe (non-circular
  // motions) to every pixel's error in quadrature and refit
  // (velocity_scatter.hpp); off: pixels weighted by the error map alone.
  bool scatter_term = true;
  bool record_problem = false;              // keep the global problem (tests)
};

// What the beam-smearing correction did.
struct BeamSmearingSummary {
  bool requested = false;
  bool applied = false;             // the adopted fit is the corrected one
  std::string reason;               // why it was not applied (empty when applied)
  std::string weighting;            // what weighted the smearing (intensity map or footprint)
  double beam_fwhm_arcsec = 0.0;
  int refits = 0;
  bool converged = false;           // the geometry settled within the tolerance
  double last_change_sigma = 0.0;   // largest geometry move of the last refit, in sigma
  double max_abs_correction_kms = 0.0;  // max |Delta| over the samples
  double rms_correction_kms = 0.0;
  DiscGeometry uncorrected;         // the geometry fitted without the correction
  // Delta (km/s) at each velocity-map pixel it was applied to (0-based x, y).
  std::vector<int> x, y;
  std::vector<double> correction;
};

struct KinematicDiagnostics {
  int pixels_input = 0;             // finite velocity pixels
  int pixels_used = 0;              // in the last global pass
  int rings_used = 0;
  int parameters = 0;
  double chi2 = 0.0;
  double reduced_chi2 = 0.0;
  double residual_rms_kms = 0.0;
  bool converged = false;
  std::string termination;
  int passes = 0;
  int iterations = 0;
  double pixel_scale_arcsec = 0.0;
  double pixels_per_beam = 1.0;
  double correlation_factor = 1.0;
  double ring_width_arcsec = 0.0;
  double max_radius_arcsec = 0.0;
  bool has_error_map = false;
};

struct RingRow {
  RingNode node;                    // global fit (vrot at the node)
  std::optional<RingFit> free;      // ring-by-ring
  std::optional<HarmonicRing> harmonic;
};

struct KinematicFit {
  std::string status = "refused";   // "ok", "refused", "failed"
  std::string reason;
  Method method = Method::both;
  std::string source;               // velocity map path
  WorldCoord reference;
  OffsetFrame frame;
  FirstGuess guess;                 // relative to `reference`
  // Centres in the one centre type (sky/centre.hpp): RA/Dec, covariance in
  // arcsec^2 on (east, north), FITS pixel on the velocity map; their offsets
  // in the fit's frame are frame.to_offset(position).
  std::optional<Centre> centre;           // adopted (rings or harmonic)
  std::optional<Centre> ring_centre;      // global tilted-ring fit
  std::optional<Centre> harmonic_centre;  // harmonic method
  std::string harmonic_status;      // "ok", "not run", or the reason it failed
  double pa_deg = 0.0, pa_err_deg = 0.0;
  double inc_deg = 0.0, inc_err_deg = 0.0;
  double vsys_kms = 0.0, vsys_err_kms = 0.0;
  std::vector<RingRow> rings;
  KinematicDiagnostics diagnostics;
  std::vector<std::string> notes;   // e.g. unit conversion
  GlobalFitSummary global;          // the full global-fit summary (the adopted fit)
  BeamSmearingSummary beam_smearing;
  CentreErrorTerms centre_errors;   // the adopted centre's error budget
  FootprintSummary footprint;       // what the footprint cleaning removed
  MultiStartSummary starts;         // the scouts
  SolutionAmbiguity ambiguity;      // a second distinct solution, if one was fitted
  VelocityScatter scatter;          // the scatter added to the pixel errors
};

// `intensity` (optional, may be null) is the line-intensity (moment-0) map
// that weights the beam-smearing correction, on any celestial grid; without
// it the smearing is weighted uniformly over the velocity map's footprint.
KinematicFit fit_kinematics(const Image& velocity, const Image* velocity_error,
                            const KinematicOptions& options, const Image* intensity = nullptr);

// The same on prepared samples (tests); `wcs` turns offsets into pixels and
// may be invalid (pixels then NaN). `smearing` (may be null: no correction)
// is the grid of beam_smearing.hpp built for these samples.
KinematicFit fit_kinematics_samples(const VelocitySamples& samples, const OffsetFrame& frame,
                                    const CelestialWcs& wcs, const KinematicOptions& options,
                                    const SmearingGrid* smearing = nullptr);

// The JSON block described in docs/kinematics.md (centre with ra_deg,
// dec_deg, x_pix, y_pix, cov_arcsec2; pa_deg, inc_deg, vsys_kms, rings,
// method, status, reason, harmonic_centre, diagnostics, beam_smearing).
nlohmann::json to_json(const KinematicFit& fit);

// Model and residual velocity maps on the input grid, in km/s. The model is
// the intrinsic (unsmeared) tilted-ring field, NaN beyond the outer ring. The
// residual is observed minus the model as the beam sees it: minus model +
// Delta where the beam-smearing correction was applied, minus the model
// elsewhere; NaN where the data are missing.
Image model_velocity_map(const KinematicFit& fit, const Image& velocity);
// The model as the beam sees it: model + Delta at the pixels the beam-smearing
// correction was applied to, the model itself elsewhere (and everywhere when
// the correction was not applied).
Image smeared_model_velocity_map(const KinematicFit& fit, const Image& model);
Image residual_velocity_map(const KinematicFit& fit, const Image& velocity, const Image& model);

}  // namespace fulcrum::kinematics
