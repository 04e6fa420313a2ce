// The record a finished shard leaves in its output folder (DIR/shard.json),
// and the check `merge` makes with it before combining shards.
//
// `fulcrum run --shard I/N --out DIR` writes it as its very last file into
// its staging folder, after every galaxy folder and sample product, and the
// whole folder is then renamed to DIR (io/staged_folder.hpp). A shard that
// was killed, failed or is still running has no DIR (or its older DIR,
// whole) and a staging folder beside it; merge refuses it.
//
//   {"shard": 2, "shards": 4, "manifest": "/data/sample.toml",
//    "sample": "...", "galaxies": ["ngc-a", "ngc-e"]}
#pragma once

#include <optional>
#include <string>
#include <vector>

namespace fulcrum::pipeline {

inline constexpr const char* kShardRecordFile = "shard.json";

struct ShardRecord {
  int index = 1;                      // I of "I/N", 1-based
  int count = 1;                      // N
  std::string manifest;               // the manifest path as the run was given it
  std::string sample;                 // the manifest's sample name
  std::vector<std::string> galaxies;  // the galaxies of this shard, manifest order
};

// Written atomically (write_text_file) to DIR/shard.json.
void write_shard_record(const std::string& dir, const ShardRecord& record);
// The record of DIR, or nothing when DIR has no shard.json. A shard.json
// that is not such a record is an InputError naming it.
std::optional<ShardRecord> read_shard_record(const std::string& dir);

// Refuse, with an InputError naming the folder or the shard, a set of run
// folders that is not a whole finished sample: a folder that is missing or
// holds an unfinished run (no shard.json and no sample.json, or a staging
// folder left by a killed run); a shard whose record lists a galaxy without
// report.json; shards of different manifests or shard counts; a shard given
// twice; and, when any folder is a shard, a shard I of N that none of the
// folders holds. Folders of plain (unsharded) runs are accepted as they are.
void check_shards_complete(const std::vector<std::string>& dirs);

}  // namespace fulcrum::pipeline
