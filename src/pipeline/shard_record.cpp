// shard.json: what a finished shard records, and the completeness check of
// `merge` (see the header).
#include "fulcrum/pipeline/shard_record.hpp"

#include <filesystem>
#include <fstream>
#include <map>
#include <sstream>

#include <nlohmann/json.hpp>

#include "fulcrum/core/error.hpp"
#include "fulcrum/io/atomic_file.hpp"
#include "fulcrum/io/staged_folder.hpp"

namespace fulcrum::pipeline {

namespace fs = std::filesystem;
using nlohmann::json;

namespace {

std::string shard_name(int index, int count) { return "shard " + std::to_string(index) + "/" + std::to_string(count); }

ShardRecord parse_record(const std::string& file) {
  std::ifstream in(file, std::ios::binary);
  std::stringstream ss;
  ss << in.rdbuf();
  try {
    const json j = json::parse(ss.str());
    ShardRecord r;
    r.index = j.at("shard").get<int>();
    r.count = j.at("shards").get<int>();
    r.manifest = j.at("manifest").get<std::string>();
    r.sample = j.value("sample", "");
    r.galaxies = j.at("galaxies").get<std::vector<std::string>>();
    if (r.count < 1 || r.index < 1 || r.index > r.count) throw InputError(file, "shard number out of range");
    return r;
  } catch (const json::exception& e) {
    throw InputError(file, std::string("is not a shard record: ") + e.what());
  }
}

// A folder that holds no finished run is refused, naming it.
void check_finished(const std::string& dir, const std::optional<ShardRecord>& record) {
  if (!record && !fs::exists(fs::path(dir) / "sample.json"))
    throw InputError(dir, "holds no finished run (neither shard.json nor sample.json); run that shard again");
  if (!record) return;
  for (const auto& g : record->galaxies)
    if (!fs::exists(fs::path(dir) / g / "report.json"))
      throw InputError(dir, shard_name(record->index, record->count) + " lacks " + g +
                                "/report.json; run that shard again");
}

}  // namespace

void write_shard_record(const std::string& dir, const ShardRecord& r) {
  json j = {{"shard", r.index}, {"shards", r.count}, {"manifest", r.manifest}, {"sample", r.sample},
            {"galaxies", r.galaxies}};
  write_text_file((fs::path(dir) / kShardRecordFile).string(), j.dump(2) + "\n");
}

std::optional<ShardRecord> read_shard_record(const std::string& dir) {
  const fs::path file = fs::path(dir) / kShardRecordFile;
  if (!fs::exists(file)) return std::nullopt;
  return parse_record(file.string());
}

void check_shards_complete(const std::vector<std::string>& dirs) {
  std::map<int, std::string> held;  // shard index -> folder
  std::optional<ShardRecord> first;
  std::string first_dir;
  for (const auto& d : dirs) {
    if (has_unfinished_run(d))
      throw InputError(d, "holds an unfinished run (its staging folder is still there: killed, failed or still "
                          "running); run that shard again");
    if (!fs::is_directory(d)) throw InputError(d, "is not a folder (a shard that never ran?)");
    const auto record = read_shard_record(d);
    check_finished(d, record);
    if (!record) continue;
    if (!first) {
      first = record;
      first_dir = d;
    }
    if (record->count != first->count || record->manifest != first->manifest)
      throw InputError(d, "is " + shard_name(record->index, record->count) + " of " + record->manifest + ", but " +
                              first_dir + " is " + shard_name(first->index, first->count) + " of " + first->manifest);
    if (auto it = held.find(record->index); it != held.end())
      throw InputError(d, "is " + shard_name(record->index, record->count) + ", as is " + it->second);
    held[record->index] = d;
  }
  if (!first) return;
  for (int i = 1; i <= first->count; ++i)
    if (!held.count(i))
      throw InputError(first->manifest, shard_name(i, first->count) +
                                            " is missing: none of the folders given to merge holds it (its shard.json)");
}

}  // namespace fulcrum::pipeline
