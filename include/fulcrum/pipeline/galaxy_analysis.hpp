// One galaxy, the whole chain: read the maps, find the dynamical centre
// (tilted rings and harmonic expansion), measure photometric centres on an
// optical image when one is given, compare them, split the line map at
// every centre estimate, compute the flip distance and the bootstrap, reach
// the verdict and its sentence, and draw the figures.
//
// Each step is a stage with a status: "done", "failed" (with the reason),
// "skipped" (its input is not given) or "missing" (the library for it is not
// part of this build). A failed or missing stage never produces numbers: the
// fields it would fill are null in report.json and the verdict becomes
// "undetermined" with the reason when the split cannot be judged.
//
// The adopted centre is the kinematic tilted-ring centre when that fit
// succeeded (DESIGN.md §5); otherwise the harmonic centre; otherwise the
// first successful photometric centre (profile fit, centroid, peak, ...),
// and the report says so.
//
// Determinism: one seed per galaxy drives every random draw; report.json is
// written with sorted keys and shortest round-trip numbers, and carries one
// timestamp, `created_utc` (from SOURCE_DATE_EPOCH when that is set, the
// reproducible-builds convention, so that even it can be fixed).
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "fulcrum/pipeline/manifest.hpp"

namespace fulcrum::pipeline {

struct AnalysisOptions {
  std::uint64_t seed = 1;
  int draws = 20000;
  bool figures = true;
  double error_ellipse_sigma = 2.0;   // figures draw centre errors at this many sigma
  int figure_grid = 160;              // resampled sky-map size (pixels per side, at most)
  int calibrate = 0;                  // matched mocks per set for calibration/ (0: none)
  // Bootstrap centres drawn about the adopted centre only (default, DESIGN.md
  // section 5; the other estimates are the plausible centres of the verdict),
  // or, when true, from the mixture of the adopted centre and every
  // successful estimate (wider, and its interval can exclude A at c0).
  bool bootstrap_from_estimates = false;
};

// The value of --bootstrap-centres: "adopted" gives false, "all-estimates"
// true; anything else is an InputError naming the option.
bool bootstrap_centres_from_estimates(const std::string& name);

struct FigureFile {
  std::string id;       // file stem under figures/, e.g. "intensity"
  std::string caption;
  std::string svg;
};

struct GalaxyResult {
  std::string name;
  nlohmann::json report;             // the content of report.json
  std::vector<FigureFile> figures;
  std::vector<std::string> notes;    // stages missing or failed, for the HTML page
};

// Never throws for bad input: an unreadable file or an impossible option
// gives verdict "undetermined" with the reason. Internal errors propagate.
GalaxyResult analyse_galaxy(const GalaxyInput& input, const AnalysisOptions& options);

// DIR/report.json and DIR/figures/<id>.svg, each written atomically.
void write_galaxy_outputs(const GalaxyResult& result, const std::string& dir);

// {"velocity": {"path", "sha256"}, ...} for every input file that exists.
nlohmann::json input_provenance(const GalaxyInput& input);

// The single timestamp field (ISO 8601 UTC), honouring SOURCE_DATE_EPOCH.
std::string created_utc();

// Which stages this build contains: {"kinematics": true, ...}.
nlohmann::json built_stages();

// The JSON dump used for every report file: 2-space indent, sorted keys,
// NaN/inf written as null, trailing newline.
std::string dump_json(const nlohmann::json& j);

}  // namespace fulcrum::pipeline
