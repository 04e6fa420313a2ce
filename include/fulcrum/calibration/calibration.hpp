// Matched-mock calibration of one galaxy's split/robustness analysis: how
// often would the analysis call a symmetric disc with these data robust?
//
// From the fitted kinematics (centre, PA, inclination, vsys, rotation curve),
// the azimuthally averaged line-intensity profile (mean over elliptical annuli
// of the disc geometry on the intensity map), the beam, the noise (rms or
// error map) and the masking (the blank pixels of the real maps), build
//   * n_mocks symmetric mocks (lopsided amplitude e = 0, so A = 0), and
//   * n_mocks lopsided mocks whose noise-free map has the measured A
//     (e tuned by secant steps through the split engine at the true centre),
// with intensity I(R, phi) = P(R) (1 + e cos(phi - phi_lead)) (P the measured,
// already beam-smeared profile; phi the PA on the sky about the centre,
// phi_lead = tail PA + 180), plus beam-correlated Gaussian noise (white noise
// smoothed by the beam times sqrt(k/2) in FWHM, k = noise_correlation_beams,
// so that its correlation function integrates to k beam areas — for k = 1 it
// is the beam; drawn by FFT with unit variance, imaging/correlated_noise.hpp;
// times the error map or rms)
// and, when the data were clipped (clip_snr > 0), the same clipping: pixels
// below clip_snr x their 1-sigma error set to 0 (or blanked, clip_blank).
// The velocity map is what a moment-1 map of a beam-convolved cube shows:
// the intensity-weighted beam average of vsys + vrot(R) sin i cos theta
// (tilted-ring model of Begeman 1989, vrot interpolated linearly in the ring
// table), (I v) * B / (I * B) with I the mock's line map, plus noise from the
// velocity error map with the SAME beam correlation as the line map (not
// white). Blank pixels of the real maps are blank in the mocks. The mocks'
// kinematic centre comes from re-fits with the kinematics library, with the
// beam-smearing correction of the real analysis, started from the truth
// (mock_refit.hpp): either a shared set of re-fitted mocks of the fitted disc
// made before (options.shared_refits, the centre bootstrap's; centre_refit.hpp),
// which the mocks adopt in turn, or, without one, a re-fit of the mock's own
// velocity map on every `refit_every`-th mock, the others adopting the truth
// moved by a draw from the real fit's covariance. The other centre
// estimates are placed at truth + their real offsets from the dynamical
// centre, each scattered by its own covariance. Everything the mocks share
// (noise-free maps, noise kernels, samples and smearing grids of the re-fit,
// the pixels' world positions) is made once per galaxy.
// Then the same robustness::analyse runs on the mock.
//
// Failed re-fits (and mocks whose analysis threw) are counted per set and
// reported separately; the rates (false secure, recovery) are over the mocks
// whose analysis ran, so a failure is never counted as "not robust".
//
// Determinism: mock k of set s (0 symmetric, 1 lopsided) uses the seed
// mock_seed(seed, s, k) (splitmix64, core/random.hpp), its parts draw from
// Random::stream(mock seed, id) (docs/calibration.md lists the ids), and
// results are stored per mock, so the numbers do not depend on the number of
// OpenMP threads.
//
// Units: angles in degrees (PA north through east), offsets and radii in
// arcsec, covariances in arcsec^2 (east, north), velocities in km/s, the
// intensity in the map's unit.
#pragma once

#include <Eigen/Core>
#include <cstdint>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "fulcrum/calibration/calibration_defaults.hpp"
#include "fulcrum/calibration/centre_refit.hpp"
#include "fulcrum/io/image.hpp"
#include "fulcrum/robustness/analysis.hpp"

namespace fulcrum::calibration {

struct MatchedInputs {
  std::string galaxy = "the galaxy";
  const Image* intensity = nullptr;        // the real line map (grid, WCS, beam, unit, blanks)
  const Image* intensity_error = nullptr;  // optional per-pixel 1-sigma; else rms
  double rms = 0.0;
  const Image* velocity = nullptr;         // optional: the real velocity map (grid and blanks)
  const Image* velocity_error = nullptr;   // optional per-pixel 1-sigma (km/s)
  // 1-sigma velocity noise (km/s) of every pixel when no velocity error map
  // is given; the pipeline puts the data fit's residual rms here.
  double velocity_noise_kms = 5.0;
  // The velocity scatter the error map does not describe, as the real fit
  // measured it (kinematics/velocity_scatter.hpp; km/s): added to the mock
  // velocities as a field of its own with the noise's beam correlation, so
  // that the re-fits see what the real fit saw.
  double velocity_scatter_kms = 0.0;
  // E0[sum z^2] / N of the data fit's residual scale (centre_covariance.hpp),
  // shared by the re-fitted mocks (same footprint and disc); 0: each re-fit
  // computes its own.
  double expected_residual_fraction = 0.0;
  // The fitted kinematics: the kinematic tilted-ring centre (position and
  // covariance in arcsec^2 (east, north); the mocks' true centre).
  Centre centre;
  double pa_deg = 0.0, inc_deg = 45.0, vsys_kms = 0.0;
  std::vector<double> ring_radius_arcsec, ring_vrot_kms;
  // The split.
  double tail_pa_deg = 0.0, tail_pa_err_deg = 10.0;
  double measured_asymmetry = 0.0;         // A at the adopted centre on the real map
  std::optional<split::ApertureSpec> aperture;
  // Every other successful centre estimate: placed in the mocks at its real
  // (east, north) offset from `centre`, scattered by its own covariance.
  std::vector<Centre> estimates;
  // How the real line map was clipped (0: not clipped): pixels below
  // clip_snr x 1-sigma were set to 0, or blanked when clip_blank.
  double clip_snr = 0.0;
  bool clip_blank = false;
  // Integral of the noise correlation function in beam areas (half_split.hpp):
  // the mocks' line and velocity noise are drawn with it, and their analysis
  // uses it, as the real analysis does.
  double noise_correlation_beams = 2.0;
};

// How close the noise-free lopsided mock's A must come to the measured A for
// the amplitude tuning to count as converged (absolute, in A units).
inline constexpr double kTuningTolerance = 1e-3;

// The most bootstrap draws all mocks together may take (2 sets x mocks x
// draws per mock): 2500 times the default 2 x 100 x 2000 (core/work_limit.hpp).
inline constexpr double kMaxMockDraws = 1e9;
// Refuses, before any work, a mock count outside [1, 100000] (SettingError
// naming `mocks_setting`: "mocks" on the command line, "calibrate" in a
// manifest), draws per mock outside [100, 1e7] ("mock_draws"), or a product
// beyond kMaxMockDraws.
void check_mock_work(std::string_view mocks_setting, std::int64_t n_mocks, std::int64_t n_draws);

struct CalibrationOptions {
  std::size_t n_mocks = 100;        // per set (symmetric and lopsided)
  std::uint64_t seed = 1;           // the galaxy seed (mock seeds derive from it)
  std::size_t n_draws = 2000;       // bootstrap draws per mock analysis (replaces chain.n_draws)
  bool refit_centre = true;         // re-fit the kinematic centre on the mocks
  // Re-fitted mocks of the fitted disc made before (the centre bootstrap's
  // outcomes): when any succeeded, mock k of either set adopts the
  // (k mod n)-th of the n successful ones (truth + its offset, its covariance
  // x centre_covariance_scale2) and no mock re-fits its own velocity map; the
  // failed ones are counted in centre_fit_failures. Needs refit_centre and
  // the velocity map, like the mocks' own re-fits.
  std::vector<CentreRefit> shared_refits;
  // Without shared re-fits: re-fit on mocks with index % refit_every == 0;
  // the others adopt the true centre moved by a draw from the real fit's
  // covariance. Without re-fits (refit_centre false, or no velocity map)
  // every mock adopts the truth itself, with the real covariance.
  std::size_t refit_every = kDefaultRefitEvery;
  double profile_bin_beams = 0.5;   // annulus width for the gas profile
  int secant_steps = 6;
  // The settings of the analysis being calibrated (bootstrap centres,
  // verdict thresholds); chain.seed and chain.n_draws are replaced per mock.
  robustness::ChainSettings chain;
  bool correct_beam_smearing = true;      // in the mock centre re-fits, as in the real analysis
  // The factor the galaxy's kinematic centre covariance was scaled by
  // (CentreBootstrap::scale2): a re-fitted mock centre gets the same factor,
  // so data and mocks carry errors made the same way.
  double centre_covariance_scale2 = 1.0;
  bool progress = true;
};

// What happened on one mock.
struct MockOutcome {
  std::uint64_t seed = 0;
  std::string verdict;
  double true_asymmetry = 0.0;      // noise-free map at the true centre
  double measured_asymmetry = 0.0;  // the analysis' A at its adopted centre
  double lo68 = 0.0, hi68 = 0.0, lo95 = 0.0, hi95 = 0.0;
  bool centre_refitted = false;
  bool centre_fit_ok = false;
  double centre_mahalanobis = 0.0;  // of the truth from the fitted centre
};

struct Rate {
  std::size_t k = 0, n = 0;
  double rate = 0.0, err = 0.0;     // k/n and sqrt(p(1-p)/n) (binomial)
  double lo95 = 0.0, hi95 = 1.0;    // Wilson 95% interval (core/binomial_interval.hpp)
};

struct CalibrationSummary {
  std::string galaxy;
  std::size_t n_mocks = 0;
  std::uint64_t seed = 0;
  double lopsided_amplitude = 0.0;  // e giving the measured A
  double target_asymmetry = 0.0, achieved_asymmetry = 0.0;
  int tuning_steps = 0;             // secant steps taken (at most secant_steps)
  bool tuning_converged = true;     // |achieved - target| <= kTuningTolerance
  Rate false_robust;                // valid symmetric mocks called robust or reversed
  Rate recovery;                    // valid lopsided mocks called robust (reversed when the measured A < 0)
  std::size_t symmetric_failures = 0, lopsided_failures = 0;  // re-fit failed or analysis threw
  double bias = 0.0, bias_err = 0.0;          // lopsided set: mean(measured - true)
  double bias_symmetric = 0.0, bias_symmetric_err = 0.0;
  Rate coverage68, coverage95;      // both sets: truth inside the interval
  // Truth inside the fitted centre's 2-sigma ellipse: over the re-fitted
  // mocks, or over the shared re-fits (each counted once) when the mocks
  // adopted those (centre_refits_shared).
  Rate centre_coverage;
  bool centre_refits_shared = false;
  double centre_coverage_expected = 0.0;  // 1 - exp(-2) for a Gaussian
  std::size_t centre_fit_failures = 0;
  std::string statement;            // "a symmetric disc with these data is called robust in ..."
  std::vector<MockOutcome> symmetric, lopsided;
  double seconds = 0.0;
};

// The mean intensity in elliptical annuli of the disc geometry (radius in
// the disc plane); bins of `bin_arcsec`. Blank pixels are skipped; empty
// bins are filled from their neighbours.
struct RadialProfile {
  std::vector<double> radius_arcsec;  // bin centres
  std::vector<double> mean;
  double bin_arcsec = 0.0;
  double value(double r) const;       // linear interpolation, 0 beyond the last bin
};
RadialProfile gas_profile(const Image& intensity, WorldCoord centre, double pa_deg, double inc_deg,
                          double bin_arcsec);

// One noise-free mock line map with lopsided amplitude e.
Image mock_intensity_model(const MatchedInputs& in, const RadialProfile& profile, double e);

// Seed of mock k of set s (splitmix64 of the galaxy seed, s and k).
std::uint64_t mock_seed(std::uint64_t seed, int set, std::size_t k);

// The centres one mock analysis uses: the adopted (the re-fitted kinematic
// centre, or the truth with the real covariance), the other estimates, and
// the failures known before the split (a re-fit that failed).
struct MockCentres {
  Centre adopted;
  std::vector<Centre> estimates;
  std::vector<std::string> failures;
};

// The per-mock step of calibrate(): robustness::analyse on `map` with the
// real tail PA, aperture and noise of `in`, the given centres, and
// options.chain with seed `chain_seed` and options.n_draws draws.
robustness::AnalysisSummary analyse_mock(const Image& map, const MatchedInputs& in, const MockCentres& centres,
                                         const CalibrationOptions& options, std::uint64_t chain_seed);

// Throws InputError when the inputs are unusable (no intensity map, no beam,
// no noise, an empty rotation curve).
CalibrationSummary calibrate(const MatchedInputs& inputs, const CalibrationOptions& options);

// A parametric bootstrap of the kinematic centre's covariance (Efron &
// Tibshirani 1993, ch. 6: simulate the fitted model with the measured noise,
// re-fit, look at the scatter). n_refits symmetric mocks with the velocity
// field of the fitted model (smeared as above) plus the velocity noise of
// the error map and the measured extra scatter, both beam-correlated, on the
// real velocity map's grid and blanks, are re-fitted (mock_refit.hpp). For
// each successful re-fit m^2 = d^T C^-1 d with d the truth minus the
// re-fitted centre and C that re-fit's own covariance; for honest errors
// m^2 follows chi^2 with 2 degrees of freedom, mean 2. The covariance scale
//   scale2 = mean(m^2) / 2, clamped to [1, 16],
// multiplies the galaxy's kinematic (tilted-ring) centre covariance: its
// size is then at least what the re-fits show, its shape the residual-based
// one. It only widens: the mocks keep the data's velocity footprint and
// weight the smearing correction by their noise-free line model, so they
// lack two sources of scatter that real data have (a footprint that moves
// with the noise, noisy weights), and their scatter is a lower bound. On
// independent mocks (tools/coverage_study.py) they show about 0.5-0.7 of
// the true centre variance, while the residual-based covariance is then
// already wide enough (docs/uncertainties.md). With n refits scale2 has a
// relative error of about 1/sqrt(n).
// Needs the velocity map and at least min_refits successful re-fits;
// otherwise applied = false with the reason and scale2 = 1.
struct CentreBootstrapOptions {
  std::size_t n_refits = kDefaultCentreRefits;
  std::size_t min_refits = 8;
  std::uint64_t seed = 1;
  bool correct_beam_smearing = true;
  double min_scale2 = 1.0, max_scale2 = 16.0;
};
struct CentreBootstrap {
  bool applied = false;
  std::string reason;               // when not applied
  std::size_t refits = 0, failed = 0;
  // Every re-fit, failed or not, in mock order: the calibration's mocks of
  // the same galaxy adopt them (CalibrationOptions::shared_refits).
  std::vector<CentreRefit> outcomes;
  double mean_m2 = 0.0;             // over the successful re-fits
  double scale2 = 1.0;              // the factor applied to the covariance
  // The same check for the PA and the inclination: the mean squared pull
  // ((fit - truth) / error)^2 over the re-fits (1 expected) and the factor
  // applied to each variance, max(1, mean) clamped like scale2.
  double mean_pa_pull2 = 0.0, mean_inc_pull2 = 0.0;
  double pa_scale2 = 1.0, inc_scale2 = 1.0;
};
CentreBootstrap bootstrap_centre_covariance(const MatchedInputs& inputs, const CentreBootstrapOptions& options);
nlohmann::json to_json(const CentreBootstrap& b);

nlohmann::json to_json(const CalibrationSummary& s, bool per_mock = false);

// What the verdict needs from a calibration (robustness::apply_calibration).
robustness::CalibrationEvidence verdict_evidence(const CalibrationSummary& s);

}  // namespace fulcrum::calibration
