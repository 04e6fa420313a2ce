// One galaxy, the whole chain, as a short sequence of typed stages
// (pipeline/galaxy_stages.hpp):
//
//   inputs -> kinematics -> photometry -> adopted centre -> robustness
//          -> molecular gas -> calibration -> figures
//
// Each stage takes typed inputs and returns a typed result; together they
// fill one GalaxySummary (pipeline/galaxy_summary.hpp). report.json is
// written from the summary at the edge (pipeline/report_json.hpp).
//
// Each stage has a status (stage_status.hpp): done, failed (with the reason)
// or skipped (its input is not given, or an earlier stage stopped the
// chain). A failed stage never produces numbers: the fields it would fill
// are null in report.json and the verdict becomes "undetermined" with the
// reason when the split cannot be judged.
//
// The adopted centre follows pipeline/adopted_centre.hpp (the kinematic
// tilted-ring centre when that fit succeeded, DESIGN.md section 5). The
// split, flip distance, bootstrap and verdict are robustness::analyse, the
// same chain the matched-mock calibration runs on every mock.
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

#include "fulcrum/pipeline/galaxy_summary.hpp"
#include "fulcrum/pipeline/manifest.hpp"
#include "fulcrum/report/canvas.hpp"
#include "fulcrum/report/table.hpp"

namespace fulcrum::pipeline {

struct AnalysisOptions {
  std::uint64_t seed = 1;
  int draws = 20000;
  bool figures = true;
  double error_ellipse_sigma = 2.0;   // figures draw centre errors at this many sigma
  int figure_grid = 160;              // resampled sky-map size (pixels per side, at most)
  int calibrate = calibration::kDefaultCalibrationMocks;  // matched mocks per set (0: no calibration)
  // Bootstrap centres drawn about the adopted centre only (default, DESIGN.md
  // section 5; the other estimates are the plausible centres of the verdict),
  // or, when true, from the mixture of the adopted centre and every
  // successful estimate (wider, and its interval can exclude A at c0).
  bool bootstrap_from_estimates = false;
};

// The value of --bootstrap-centres: "adopted" gives false, "all-estimates"
// true; anything else is an InputError naming the option.
bool bootstrap_centres_from_estimates(const std::string& name);

// The settings of the robustness chain for these options (seed, draws,
// bootstrap centres, default verdict thresholds, figure data when figures
// are drawn): what analyse_galaxy passes to robustness::analyse and to the
// calibration.
robustness::ChainSettings chain_settings(const AnalysisOptions& options);

struct FigureFile {
  std::string id;       // file stem under figures/, e.g. "intensity"
  std::string caption;
  report::Canvas canvas;  // written as figures/<id>.svg, .pdf and .png
};

struct GalaxyResult {
  std::string name;
  GalaxySummary summary;             // everything the stages found
  nlohmann::json report;             // report.json, written from the summary
  std::vector<FigureFile> figures;
  std::vector<report::Table> curves;  // A against angle and offset, as data (pipeline/centre_curves.hpp)
  std::vector<std::string> notes;    // stages failed, fallbacks, for the HTML page
};

// Never throws for bad input: an unreadable file or an impossible option
// gives verdict "undetermined" with the reason. Internal errors propagate.
GalaxyResult analyse_galaxy(const GalaxyInput& input, const AnalysisOptions& options);
// The same chain on maps already in memory (the Python module's arrays, or
// maps read by the caller): `maps` replaces reading the files of `input`,
// whose map fields then only name the maps in messages and the report.
// velocity and intensity must be given; the grids are checked as for files
// (check_galaxy_maps). The report's inputs hold, for each map, the SHA-256
// of its file when its path names one, else of its pixel values
// (maps_provenance in pipeline/report_json.hpp).
GalaxyResult analyse_galaxy(const GalaxyInput& input, GalaxyMaps maps, const AnalysisOptions& options);

// DIR/report.json and DIR/figures/<id>.svg, <id>.pdf and <id>.png (the same
// drawing in three formats, report/figure_files.hpp), each written atomically.
void write_galaxy_outputs(const GalaxyResult& result, const std::string& dir);

}  // namespace fulcrum::pipeline
