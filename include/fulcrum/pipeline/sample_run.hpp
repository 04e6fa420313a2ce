// A sample: every galaxy of a manifest analysed in parallel, and the sample
// products built from the per-galaxy reports.
//
// Layout of an output folder DIR:
//   DIR/<galaxy>/report.json, DIR/<galaxy>/figures/*.{svg,pdf,png}   one per galaxy
//   DIR/robustness.ecsv .csv .fits .tex .md                the supplementary table
//   DIR/sample.json                                        sample statistics
//   DIR/report.html                                        the self-contained report
//
// Parallelism: OpenMP over galaxies (dynamic schedule); each galaxy has its
// own seeded generator (pipeline::galaxy_seed), so the outputs do not depend
// on the number of threads or on the order in which galaxies finish: the
// same manifest and seed give byte-identical report.json files and tables
// (the one timestamp field, created_utc, apart; fix it with
// SOURCE_DATE_EPOCH).
//
// Shards: `--shard I/N` runs every N-th galaxy; each shard writes its own
// DIR and, when finished, DIR/shard.json (pipeline/shard_record.hpp). Every
// run writes DIR whole through the one output-folder writer
// (io/staged_folder.hpp): a staging folder beside DIR, renamed to DIR at the
// end, so a run killed and started again leaves the same files, a failed
// run leaves DIR as it was, and `overwrite` (--force) replaces an old DIR
// whole: nothing of an earlier run is kept or reused. merge_outputs() refuses a
// set of folders with a missing or unfinished shard, naming it; it reads the
// per-galaxy reports of several DIRs and writes the sample products as if
// one run had made them: the rows are ordered by each galaxy's position in
// the manifest (recorded in its report.json), so a merged run equals an
// unsharded one. Run and merge both build the sample products from what
// each galaxy's report.json says, read by the one reader
// (pipeline/report_reader.hpp), so the two cannot differ.
#pragma once

#include <optional>
#include <string>
#include <utility>
#include <vector>

#include <nlohmann/json.hpp>

#include "fulcrum/pipeline/galaxy_analysis.hpp"
#include "fulcrum/pipeline/manifest.hpp"
#include "fulcrum/report/table.hpp"

namespace fulcrum::pipeline {

struct RunOptions {
  std::string out_dir;
  Selection selection;
  int threads = 0;            // 0: one per core; capped at the cores and the galaxies
  bool figures = true;
  bool overwrite = false;     // --force
  std::optional<int> draws;   // overrides the manifest
  std::optional<int> calibrate;  // matched mocks per set, overrides the manifest (0: off)
  std::optional<std::uint64_t> seed;
  bool bootstrap_from_estimates = false;  // AnalysisOptions::bootstrap_from_estimates
  // Write DIR/shard.json at the end (pipeline/shard_record.hpp): set when
  // the selection is a shard given as "I/N", so `merge` can check the set.
  bool record_shard = false;
  // Paths in each report.json that lie under `first` are written as lying
  // under `second` (`demo` reads its data from its own staging folder,
  // which is renamed to --out at the end). Empty: paths as read.
  std::pair<std::string, std::string> shown_paths;
};

struct RunSummary {
  std::vector<GalaxySummary> galaxies;  // manifest order, as their report.json says
  std::string out_dir;
  std::string html_path;
};

RunSummary run_sample(const SampleManifest& manifest, const RunOptions& options);

// Read DIR/<galaxy>/report.json from every folder in `dirs`, copy the galaxy
// folders into `out_dir` (unless they are there already: `out_dir` is one of
// `dirs`), and write the sample products there. A galaxy found twice is an
// error, and so is a missing or unfinished shard (check_shards_complete);
// both are found before anything is written. Written safely either way:
//   * `out_dir` holds none of `dirs`: the whole folder through StagedFolder
//     (io/staged_folder.hpp), as run_sample writes, so a folder with content
//     needs `overwrite`, which replaces it whole;
//   * `out_dir` holds some of them (the Slurm layout OUT/shards/I, or
//     `out_dir` is one of them), so it cannot be replaced whole: through
//     StagedEntries (io/staged_entries.hpp), staged inside it and moved into
//     place entry by entry with sample.json last, so a merge killed part way
//     leaves no sample.json; an earlier sample.json needs `overwrite` (unless
//     `out_dir` is one of `dirs`), and an entry that would replace a folder
//     holding one of `dirs` is refused.
RunSummary merge_outputs(const std::vector<std::string>& dirs, const std::string& out_dir, bool overwrite);

// The sample products from the galaxies (sorted by manifest position).
// Figures are read back from DIR/<galaxy>/figures/ for the HTML, or from
// `galaxies_elsewhere`/<galaxy>/figures/ for a galaxy whose folder is not in
// DIR (a merge into a folder that already holds some galaxies).
void write_sample_products(const std::string& out_dir, std::vector<GalaxySummary> galaxies,
                           const std::string& galaxies_elsewhere = "");

// The supplementary robustness table (one row per galaxy). Every numeric
// column's description ends with "[report.json: <path>]", the place of the
// same number in the galaxy's report.json.
report::Table robustness_table(const std::vector<GalaxySummary>& galaxies);
// The compact table for LaTeX, Markdown and the HTML page: one column of a
// two-column journal page; `wide`: the fuller table* over both columns.
report::Table paper_table(const std::vector<GalaxySummary>& galaxies, bool wide = false);
nlohmann::json sample_statistics(const std::vector<GalaxySummary>& galaxies);

// DIR/report.html for one galaxy analysed with `fulcrum analyse` (figures
// read from DIR/figures/).
void write_galaxy_html(const std::string& dir, const GalaxySummary& galaxy);

// The plain-text summary printed at the end of `run`, `merge` and `analyse`.
std::string summary_text(const std::vector<GalaxySummary>& galaxies);

}  // namespace fulcrum::pipeline
