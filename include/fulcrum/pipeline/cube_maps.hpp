// The maps of one galaxy made from its line cube, on the fly: when a galaxy
// is given as a cube (`analyse --cube`, a manifest's `cube = "..."`), its
// moment maps (moments/moment_maps.hpp, with the galaxy's moment settings)
// are written into the galaxy's output folder, DIR/moments/ (mom0.fits,
// mom0_err.fits, mom1.fits, mom1_err.fits, mom2.fits, peak.fits, nchan.fits,
// mask.fits, moments.json), and the analysis reads them from there as
//   velocity        = mom1.fits       (km/s, intensity-weighted velocity)
//   velocity_error  = mom1_err.fits
//   intensity       = mom0.fits       (BUNIT km/s)
//   intensity_error = mom0_err.fits
// so that report.json lists each made map with its SHA-256 beside the cube's
// (inputs.cube), and `analyse --cube C` gives the same numbers as `moments
// --cube C` followed by `analyse` on those four maps.
#pragma once

#include <string>

#include "fulcrum/pipeline/manifest.hpp"

namespace fulcrum::pipeline {

inline constexpr const char* kMomentsFolder = "moments";

// Make and write the maps of `input.cube` into galaxy_dir/moments/ and
// return `input` pointed at them (velocity, velocity_error, intensity,
// intensity_error; rms cleared). An input without a cube is returned as it
// is. Nothing is written when the cube or the settings are refused
// (InputError naming the cube or the setting).
GalaxyInput make_maps_from_cube(const GalaxyInput& input, const std::string& galaxy_dir);

}  // namespace fulcrum::pipeline
