// The sample manifest: a TOML file listing the galaxies of a sample and
// their input files (docs/pipeline.md describes the format).
//
//   [sample]
//   name = "..."          # free text
//   seed = 7              # optional; default 1
//   draws = 20000         # optional; bootstrap draws per galaxy
//   calibrate = 40        # optional; matched mocks per set for each galaxy
//                         # (default calibration::kDefaultCalibrationMocks; 0: none)
//   [[galaxy]]
//   name = "..."
//   velocity = "g1/vel.fits"
//   intensity = "g1/mom0.fits"
//   intensity_error = "g1/mom0_err.fits"   # or rms = 0.01
//   # or, instead of the maps and their errors, a line cube whose moment maps the
//   # run makes (pipeline/cube_maps.hpp), with optional settings:
//   # cube = "g1/cube.fits"
//   # moments = { mask = "moment-masking", moment_mask_threshold = 4.0 }
//   optical = "g1/opt.fits"                # optional
//   tail_pa_deg = 300.0                    # or tail_image = "g1/tail.fits"
//   tail_pa_err_deg = 10.0
//   distance_mpc = 95.0                    # optional
//
// Paths are relative to the manifest's folder (absolute paths are kept).
// Unknown keys, wrong types, missing required keys, duplicate galaxy names
// and impossible values are InputErrors naming the manifest and the line.
// Optional keys of a galaxy: velocity_error, optical_mask, psf_fwhm_arcsec,
// seed (overrides the derived per-galaxy seed), co_line ("1-0" or "2-1"),
// alpha_co (Msun / (K km/s pc^2)), co_ratio_21, redshift; the molecular-gas
// keys may also sit in [sample] as defaults for every galaxy. `cube` excludes
// velocity, velocity_error, intensity, intensity_error and rms (an error
// naming the line of the second key); `moments` (a table whose keys are the
// names of moments/moment_settings.hpp) needs `cube`. `kinematics` (a table
// whose keys are the names of kinematics/kinematic_settings.hpp, e.g.
// kinematics = { pa = 36.0, pa_err = 5.0, max_radius = 40.0 }) sets the
// kinematic fit.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "fulcrum/calibration/calibration_defaults.hpp"
#include "fulcrum/kinematics/kinematic_settings.hpp"
#include "fulcrum/moments/moment_settings.hpp"
#include "fulcrum/pipeline/input_settings.hpp"

namespace fulcrum::pipeline {

// Options of the optional molecular-gas mass (report/molecular_gas.hpp).
struct MolecularGasInput {
  std::optional<std::string> co_line;     // "1-0" or "2-1"
  std::optional<double> alpha_co;         // Msun (K km/s pc^2)^-1
  std::optional<double> co_ratio_21;      // CO(2-1)/CO(1-0) brightness ratio
  std::optional<double> redshift;
};

// Everything needed to analyse one galaxy. Paths are as the analysis opens
// them (resolved against the manifest folder for a sample).
struct GalaxyInput {
  std::string name;
  std::string cube;             // optional: make the four maps below from this line cube
  MomentSettings moments;       // how (with `cube`)
  std::string velocity;
  std::string velocity_error;   // optional
  std::string intensity;
  std::string intensity_error;  // optional (or rms)
  std::optional<double> rms;
  // The intensity map was clipped: pixels below clip_snr x their 1-sigma error
  // were set to 0 or blanked (split/clipped_error_map.hpp). Empty: not clipped.
  std::optional<double> clip_snr;
  std::string optical;          // optional
  std::string optical_mask;     // optional
  std::optional<double> psf_fwhm_arcsec;
  std::optional<double> tail_pa_deg;
  double tail_pa_err_deg = 10.0;
  std::string tail_image;       // optional, instead of tail_pa_deg
  std::optional<double> distance_mpc;
  std::optional<std::uint64_t> seed;
  std::vector<ExternalCentre> external_centres;  // `centre_from`
  MolecularGasInput molecular;
  kinematics::KinematicSettings kinematic;  // kinematic-fit settings (`kinematics` table)
  int manifest_line = 0;        // where the [[galaxy]] table starts (0: not from a manifest)
};

struct SampleManifest {
  std::string path;             // the manifest file
  std::string folder;           // its folder (paths were resolved against it)
  std::string name;
  std::uint64_t seed = 1;
  int draws = 20000;
  int calibrate = calibration::kDefaultCalibrationMocks;  // matched mocks per set (calibration/), 0: none
  std::vector<GalaxyInput> galaxies;
};

SampleManifest read_manifest(const std::string& path);
// Parse manifest text; `path` names it in errors and gives the folder.
SampleManifest parse_manifest(const std::string& text, const std::string& path);

// The per-galaxy seed: the galaxy's own seed when given, otherwise a mix
// (SplitMix64 finaliser, Steele, Lea & Flood 2014) of the sample seed and
// the FNV-1a hash of the galaxy name, so a galaxy gets the same seed
// whichever shard or subset it runs in. Derived seeds have 53 bits (exact
// as a double in any JSON reader).
std::uint64_t galaxy_seed(std::uint64_t sample_seed, const GalaxyInput& galaxy);

// A subset of the galaxies: shard I of N ("I/N", 1-based) takes every galaxy
// whose position p (0-based, manifest order) has p % N == I - 1; `only`
// keeps the named ones (error if a name is not in the manifest).
struct Selection {
  std::vector<std::string> only;
  int shard_index = 1;  // 1-based
  int shard_count = 1;
};
// Parse "I/N"; throws InputError on anything else.
Selection parse_shard(const std::string& text);
std::vector<GalaxyInput> select_galaxies(const SampleManifest& manifest, const Selection& s);

}  // namespace fulcrum::pipeline
