// The one reader of a galaxy's report.json (schema_version 1 or 2): returns
// the typed GalaxySummary with the parts later steps use (the sample tables
// and statistics, the HTML pages, merge, and `calibrate --from`):
// verdict, statement and reason; every centre (sky/centre.hpp); the
// kinematic status, PA, inclination, vsys and ring table; the split at the
// adopted centre with its tail PA and aperture; the bootstrap, flip distance
// and plausible-centre numbers; the calibration rates; notes, figures and
// the sample position. Library internals that report.json does not hold
// (the prepared split problem, the fit's covariance matrix, ...) stay empty.
// A null number reads as NaN.
#pragma once

#include <string>

#include <nlohmann/json.hpp>

#include "fulcrum/pipeline/galaxy_summary.hpp"

namespace fulcrum::pipeline {

// Throws InputError (naming `where`) when the report has no galaxy name or
// a field has the wrong type.
GalaxySummary read_report(const nlohmann::json& report, const std::string& where);

// Parse and read DIR/<galaxy>/report.json (InputError naming the file when
// it cannot be read or is not JSON).
GalaxySummary read_report_file(const std::string& path);

}  // namespace fulcrum::pipeline
