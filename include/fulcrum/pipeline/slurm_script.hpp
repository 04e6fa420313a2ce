// A Slurm submission for a sample run: one bash script that, run on a login
// node, submits a job array over the shards of a manifest (one array task
// per shard: `fulcrum run --shard I/N`) and the merge (`fulcrum merge`),
// which Slurm starts only after every shard has succeeded
// (--dependency=afterok). docs/cluster.md shows its use.
//
// Layout of the output folder OUT:
//   OUT/shards/<I>/           the run folder of shard I (with shard.json once finished)
//   OUT/slurm/shard-<I>.log   Slurm's output of array task I (appended on requeue)
//   OUT/slurm/merge.log       the merge's output
//   OUT/<galaxy>/, OUT/sample.json, OUT/report.html, ...   the merged sample,
//                             the same files `fulcrum run MANIFEST --out OUT` writes
//
// `bash SCRIPT` submits everything; `bash SCRIPT I [J ...]` submits shards
// I, J, ... again with a new merge and cancels the merge left waiting by the
// earlier submission (a shard that failed makes Slurm keep that merge
// pending for ever). Shards may be requeued by Slurm (--requeue): a shard
// writes through a staging folder (io/staged_folder.hpp), so a restarted
// shard leaves the same files. Every job of one output folder runs with one
// SOURCE_DATE_EPOCH, the time of the first submission (kept in
// OUT/slurm/source-date-epoch), so the created_utc fields of a resubmitted
// shard equal those of the others and the merged sample equals an unsharded
// run made with that SOURCE_DATE_EPOCH byte for byte.
//
// Resources per shard come from pipeline/shard_resources.hpp; the merge asks
// for one core, 512 MB plus 4 MB per galaxy and 10 minutes plus 2 s per galaxy.
#pragma once

#include <cstdint>
#include <optional>
#include <string>

#include "fulcrum/pipeline/manifest.hpp"
#include "fulcrum/pipeline/shard_resources.hpp"

namespace fulcrum::pipeline {

struct SlurmJobOptions {
  std::string out_dir;            // OUT (made absolute)
  int shards = 0;                 // 0: ceil(galaxies / kGalaxiesPerShard)
  std::string partition;          // optional: Slurm partition (checked by check_plain_name)
  std::string account;            // optional: Slurm account
  std::string fulcrum_path;       // the executable the jobs run; empty: this process's own
  // Passed to every shard, as `fulcrum run` takes them:
  std::optional<int> draws;
  std::optional<int> calibrate;
  std::optional<std::uint64_t> seed;
  bool figures = true;
  bool bootstrap_from_estimates = false;
};

struct SlurmJobSet {
  std::string script;             // the submission script's text
  ShardResources resources;
};

// The script for `manifest` (its path is made absolute). Settings are
// checked here (SettingError naming `shards`, `slurm_partition`,
// `slurm_account`, `out`).
SlurmJobSet slurm_job_set(const SampleManifest& manifest, const SlurmJobOptions& options);
// The same, written (atomically, executable) to `path`; an existing file is
// replaced only with `overwrite`.
SlurmJobSet write_slurm_script(const SampleManifest& manifest, const SlurmJobOptions& options,
                               const std::string& path, bool overwrite);

// `text` in single quotes for bash ('it'\''s').
std::string shell_quote(const std::string& text);

}  // namespace fulcrum::pipeline
