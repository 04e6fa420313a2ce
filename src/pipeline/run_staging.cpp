// Staging folder of a run's outputs (see the header).
#include "fulcrum/pipeline/run_staging.hpp"

#include <algorithm>
#include <filesystem>
#include <system_error>

#include "fulcrum/core/error.hpp"

namespace fulcrum::pipeline {

namespace fs = std::filesystem;

namespace {

void remove_whole(const fs::path& p) {
  std::error_code ec;
  fs::remove_all(p, ec);
  if (ec) throw InputError(p.string(), "cannot be removed: " + ec.message());
}

}  // namespace

RunStaging::RunStaging(std::string out_dir) : out_(std::move(out_dir)) {
  const fs::path staging = fs::path(out_) / kStagingFolder;
  std::error_code ec;
  fs::create_directories(out_, ec);
  if (ec) throw InputError(out_, "cannot create the output folder: " + ec.message());
  // A killed run's leftovers are never reused.
  remove_whole(staging);
  fs::create_directories(staging, ec);
  if (ec) throw InputError(staging.string(), "cannot create the staging folder: " + ec.message());
  staging_ = staging.string();
}

void RunStaging::commit(const std::vector<std::string>& last) {
  std::vector<fs::path> found, entries;
  for (const auto& e : fs::directory_iterator(staging_)) found.push_back(e.path().filename());
  std::sort(found.begin(), found.end());
  auto is_last = [&](const fs::path& p) { return std::find(last.begin(), last.end(), p.string()) != last.end(); };
  for (const auto& p : found)
    if (!is_last(p)) entries.push_back(p);
  for (const auto& name : last)
    if (std::find(found.begin(), found.end(), fs::path(name)) != found.end()) entries.emplace_back(name);
  for (const auto& name : entries) {
    const fs::path from = fs::path(staging_) / name, to = fs::path(out_) / name;
    if (fs::exists(fs::symlink_status(to))) remove_whole(to);
    std::error_code ec;
    fs::rename(from, to, ec);
    if (ec) throw InputError(to.string(), "cannot be moved into place from " + from.string() + ": " + ec.message());
  }
  remove_whole(staging_);
}

bool has_unfinished_run(const std::string& out_dir) {
  std::error_code ec;
  return fs::exists(fs::path(out_dir) / kStagingFolder, ec);
}

}  // namespace fulcrum::pipeline
