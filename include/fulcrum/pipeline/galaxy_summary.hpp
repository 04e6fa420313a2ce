// Everything the single-galaxy analysis found, typed: the result of each
// stage (inputs -> kinematics -> photometry -> adopted centre -> robustness
// -> molecular gas -> calibration -> figures) filled into one GalaxySummary.
// report.json, the tables and the figures are written from it at the edge
// (pipeline/report_json.hpp), once.
//
// Units and conventions are those of the types it holds: centres RA/Dec
// degrees with covariances in arcsec^2 (east, north) (sky/centre.hpp), PA
// north through east in degrees, velocities km/s, fluxes in the split's
// flux unit.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "fulcrum/calibration/calibration.hpp"
#include "fulcrum/io/image.hpp"
#include "fulcrum/kinematics/kinematic_fit.hpp"
#include "fulcrum/photometry/dynamical_comparison.hpp"
#include "fulcrum/photometry/photometric_centres.hpp"
#include "fulcrum/pipeline/manifest.hpp"
#include "fulcrum/pipeline/stage_status.hpp"
#include "fulcrum/report/molecular_gas.hpp"
#include "fulcrum/robustness/analysis.hpp"
#include "fulcrum/sky/centre.hpp"

namespace fulcrum::pipeline {

// The maps of one galaxy, read once (the inputs stage).
struct GalaxyMaps {
  std::optional<Image> velocity, velocity_error, intensity, intensity_error, optical, optical_mask, tail_image;
};

// One ring of the global tilted-ring fit, as the figures and calibration use it.
struct RingPoint {
  double radius_arcsec = 0.0;
  double vrot_kms = 0.0, vrot_err_kms = 0.0;
};

struct KinematicsResult {
  kinematics::KinematicFit fit;          // status "ok", "refused" or "failed"
  std::vector<Centre> centres;           // kinematic-rings, kinematic-harmonic (ok or failed)
  std::vector<RingPoint> rings;          // when the fit is ok
  std::optional<Image> model, residual;  // velocity maps, when the fit is ok
  bool ok() const { return fit.status == "ok"; }
};

struct PhotometryResult {
  photometry::PhotometrySummary summary;
  std::vector<Centre> centres;           // every photometric estimator (ok or failed)
  std::optional<photometry::ComparisonSummary> comparison;  // with the kinematic-rings centre
};

// The analysis aperture of the halves (the gas disc of the kinematic fit).
struct DiscAperture {
  split::ApertureSpec spec;
  std::string source = "kinematic PA and inclination, outer ring + half a beam";
};

struct MolecularGasResult {
  std::optional<report::MolecularGasSummary> masses;   // nullopt: not computed (reason)
  report::MolecularGasOptions options;
  std::string reason;
  bool ratio_given = false, alpha_given = false;
};

struct CalibrationResult {
  std::optional<calibration::CalibrationSummary> summary;
  std::string failure;                   // why it failed (summary empty)
};

// A figure written beside report.json: `file` is figures/<id>.svg; the same
// figure is beside it as figures/<id>.pdf and figures/<id>.png.
struct FigureRef {
  std::string id, file, caption;
};

// Where a galaxy sits in a sample run (report.json "sample").
struct SampleRef {
  std::string name, manifest;
  std::int64_t index = 0;       // position in the manifest
  std::uint64_t seed = 0;       // the sample seed
};

struct GalaxySummary {
  GalaxyInput input;                     // as analysed (as the user gave it)
  // The line map's noise when neither an rms nor an error map was given:
  // estimated from the emission-free pixels (imaging/noise_estimate.hpp).
  std::optional<double> estimated_rms;
  std::uint64_t seed = 1;
  int draws = 20000;
  bool bootstrap_from_estimates = false;
  std::string created_utc;
  nlohmann::json provenance = nlohmann::json::object();  // input files and SHA-256 (input_provenance)
  std::optional<Beam> beam;              // of the intensity map
  std::vector<StageRecord> stages;
  std::optional<KinematicsResult> kinematics;
  // The re-fit scale of the tilted-ring centre's covariance (already applied
  // to the kinematic centres); nullopt when the calibration is off.
  std::optional<calibration::CentreBootstrap> centre_bootstrap;
  std::optional<PhotometryResult> photometry;
  std::vector<Centre> centres;           // every estimate, kinematic first, in report order
  std::optional<std::size_t> adopted;    // index into centres
  std::optional<DiscAperture> aperture;
  std::optional<robustness::AnalysisSummary> robustness;
  std::optional<MolecularGasResult> molecular_gas;
  std::optional<CalibrationResult> calibration;
  robustness::Verdict verdict = robustness::Verdict::undetermined;
  std::string statement;
  std::string undetermined_reason;       // set when the verdict is undetermined
  std::vector<std::string> failures;     // known problems that the verdict must take into account
  // An input file found unusable by a stage (an InputError naming one of the
  // galaxy's files: a velocity map in m/s labelled km/s, ...): the file and
  // the problem. Not written to report.json; `analyse` refuses such a galaxy
  // (exit 2, docs/reliability.md), a sample run lists it as undetermined.
  std::string unusable_file, unusable_problem;
  std::vector<std::string> notes;        // for the HTML page and the terminal
  std::vector<FigureRef> figures;        // the figure files written beside report.json
  std::optional<SampleRef> sample;       // set by a sample run

  const Centre* adopted_centre() const { return adopted ? &centres[*adopted] : nullptr; }
  // The rms of the line map per pixel (map units): given, else estimated,
  // else 0 (the intensity error map is used).
  double line_rms() const { return input.rms ? *input.rms : estimated_rms.value_or(0.0); }
};

}  // namespace fulcrum::pipeline
