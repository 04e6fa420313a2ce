// A readable description of a FITS file: what `fulcrum inspect` prints.
//
// Summarises the first image HDU: axes, pixel scale in arcsec, where north
// points on the pixel grid, the beam, the unit, how many pixels are finite,
// the value range, and what fulcrum can use the file for (velocity field,
// line map, optical image, cube). Everything is also available as JSON.
#pragma once

#include <nlohmann/json.hpp>
#include <string>

namespace fulcrum {

// Throws InputError when the file cannot be read as a FITS image with WCS.
nlohmann::json inspect_fits(const std::string& path);
// The same, as aligned text lines for a person.
std::string format_inspection(const nlohmann::json& info);

}  // namespace fulcrum
