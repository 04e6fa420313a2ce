// The stages of the single-galaxy analysis (pipeline/galaxy_analysis.hpp),
// each a function with typed inputs and a typed result. They throw
// InputError when their input is unusable; analyse_galaxy turns that into
// the stage's "failed" status.
//
// Units and conventions: as galaxy_summary.hpp.
#pragma once

#include <optional>
#include <vector>

#include "fulcrum/kinematics/kinematic_fit.hpp"
#include "fulcrum/pipeline/galaxy_analysis.hpp"
#include "fulcrum/pipeline/galaxy_summary.hpp"

namespace fulcrum::pipeline {

// inputs: every map named in `input` (the error map must match the intensity grid).
GalaxyMaps load_galaxy_maps(const GalaxyInput& input);
// What load_galaxy_maps checks once the maps are read: velocity and intensity
// present, the intensity error map on the intensity grid.
void check_galaxy_maps(const GalaxyInput& input, const GalaxyMaps& maps);

// kinematics: the settings the pipeline uses (both methods, defaults).
kinematics::KinematicOptions kinematic_options_for(const GalaxyInput& input);
// The tilted-ring and harmonic centres. The intensity map weights the
// beam-smearing correction; when it cannot, the fit falls back to uniform
// weight over the velocity footprint and says so in its notes.
KinematicsResult fit_kinematic_centres(const GalaxyMaps& maps, const kinematics::KinematicOptions& options);

// photometry: every photometric estimator on the optical image (seed of
// its own stream: galaxy seed XOR "photomet"); compared with the kinematic
// tilted-ring centre when that is given.
PhotometryResult measure_photometry(const GalaxyMaps& maps, const GalaxyInput& input, std::uint64_t seed,
                                    const Centre* kinematic_rings, std::optional<Beam> beam);

// The gas disc from the kinematic fit (PA, inclination, outer ring + half a
// beam); nullopt without an ok fit.
std::optional<DiscAperture> disc_aperture(const KinematicsResult* kinematics, std::optional<Beam> beam);

// robustness: robustness::analyse about the adopted centre, with every other
// centre estimate as a plausible centre.
robustness::AnalysisSummary measure_robustness(const GalaxyMaps& maps, const GalaxySummary& summary,
                                               const robustness::ChainSettings& settings);

// molecular gas masses of the halves (informative only); nullopt when no
// distance or CO line is given.
std::optional<MolecularGasResult> molecular_gas(const GalaxyInput& input, const split::SplitSummary& split,
                                                std::optional<double> vsys_kms);

// calibration: matched mocks of this galaxy (calibration/calibration.hpp)
// from the typed summary and the already-loaded maps.
calibration::MatchedInputs matched_inputs(const GalaxySummary& summary, const GalaxyMaps& maps);
// What a calibration asked for by name (`fulcrum calibrate`, the Python
// calibrate) takes from a finished analysis: whether its bootstrap drew the
// other estimates, and its centre re-fit bootstrap's covariance factor (the
// re-fitted mocks' covariances get the data's factor).
void take_summary_settings(const GalaxySummary& summary, calibration::CalibrationOptions& options);
CalibrationResult calibrate_verdict(const GalaxySummary& summary, const GalaxyMaps& maps,
                                    const AnalysisOptions& options);
// The parametric bootstrap of the tilted-ring centre's covariance
// (calibration::bootstrap_centre_covariance) on mocks of the fitted disc,
// seeded from `seed`; when applied, the fit's tilted-ring centre (and its
// adopted centre when that is the tilted-ring one) get the widened
// covariance. `intensity` gives the mocks' gas profile and beam. Used by the
// analysis and by the kinematics command alike.
calibration::CentreBootstrap widen_centre_covariance(kinematics::KinematicFit& fit, const Image& velocity,
                                                     const Image* velocity_error, const Image& intensity,
                                                     std::uint64_t seed,
                                                     std::size_t n_refits = calibration::kDefaultCentreRefits);

// figures: every figure of one galaxy (SVG text); notes when incomplete.
std::vector<FigureFile> galaxy_figures(const GalaxyMaps& maps, const GalaxySummary& summary,
                                       const AnalysisOptions& options, std::vector<std::string>& notes);

}  // namespace fulcrum::pipeline
