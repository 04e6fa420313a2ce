// Products staged inside their output folder and moved into place one entry
// at a time, the marker last (see include/fulcrum/io/staged_entries.hpp).
#include "fulcrum/io/staged_entries.hpp"

#include <algorithm>
#include <filesystem>
#include <system_error>
#include <unistd.h>
#include <utility>
#include <vector>

namespace fulcrum {

namespace fs = std::filesystem;

namespace {

const std::string kStaging = ".fulcrum-staging-", kOld = ".fulcrum-old-";

bool exists_here(const fs::path& p) {
  std::error_code ec;
  return fs::exists(fs::symlink_status(p, ec));
}

// What commit() has moved so far, to put it back when a later rename fails.
struct Moved {
  std::string name;
  bool had_old = false;
};

}  // namespace

bool is_staged_entries_leftover(const std::string& name) {
  return name.rfind(kStaging, 0) == 0 || name.rfind(kOld, 0) == 0;
}

StagedEntries::StagedEntries(const std::string& out, const std::string& marker)
    : lock_(out, true), given_(out), marker_(marker) {
  const fs::path dir(lock_.target());
  std::error_code ec;
  if (!fs::is_directory(dir, ec)) throw InputError(out, "is not a folder");
  // Leftovers of killed writers (we hold the lock).
  for (auto it = fs::directory_iterator(dir, ec); !ec && it != fs::directory_iterator(); it.increment(ec))
    if (is_staged_entries_leftover(it->path().filename().string())) {
      std::error_code rc;
      fs::remove_all(it->path(), rc);
    }
  const fs::path staging = dir / (kStaging + std::to_string(::getpid()));
  fs::create_directory(staging, ec);
  if (ec) throw InputError(staging.string(), "cannot create the staging folder: " + ec.message());
  staging_ = staging.string();
}

std::string StagedEntries::file(const std::string& name) const { return (fs::path(staging_) / name).string(); }

InputError StagedEntries::shown_in_target(const InputError& e) const { return shown_in(e, staging_, given_); }

void StagedEntries::rethrow_in_target(const InputError& e) const { rethrow_shown_in(e, staging_, given_); }

void StagedEntries::commit() {
  const fs::path out(lock_.target()), staging(staging_);
  const fs::path old = out / (kOld + std::to_string(::getpid()));
  FULCRUM_CHECK(exists_here(staging / marker_), "the marker in the staging folder", marker_ + " missing");
  std::vector<std::string> names;
  std::error_code ec;
  for (auto it = fs::directory_iterator(staging, ec); !ec && it != fs::directory_iterator(); it.increment(ec))
    if (it->path().filename() != marker_) names.push_back(it->path().filename().string());
  if (ec) throw InputError(staging_, "cannot be listed: " + ec.message());
  std::sort(names.begin(), names.end());
  fs::create_directory(old, ec);
  if (ec) throw InputError(old.string(), "cannot create the folder for the replaced entries: " + ec.message());

  bool marker_aside = false;
  std::vector<Moved> moved;
  // Puts back, in reverse, what was moved: the new entries into the staging
  // folder, the old ones and the old marker into OUT.
  auto undo = [&] {
    std::error_code back;
    for (auto m = moved.rbegin(); m != moved.rend(); ++m) {
      fs::rename(out / m->name, staging / m->name, back);
      if (m->had_old) fs::rename(old / m->name, out / m->name, back);
    }
    if (marker_aside) fs::rename(old / marker_, out / marker_, back);
    fs::remove_all(old, back);
  };
  auto fail = [&](const std::string& name, const std::string& what) {
    const std::string reason = ec.message();
    undo();
    throw InputError((fs::path(given_) / name).string(), what + ": " + reason);
  };
  // 1. The marker first out of the way: OUT is now incomplete.
  if (exists_here(out / marker_)) {
    fs::rename(out / marker_, old / marker_, ec);
    if (ec) fail(marker_, "cannot be moved aside to be replaced");
    marker_aside = true;
  }
  // 2. Every other entry, an existing one moved aside first.
  for (const auto& name : names) {
    Moved m{name, exists_here(out / name)};
    if (m.had_old) {
      fs::rename(out / name, old / name, ec);
      if (ec) fail(name, "cannot be moved aside to be replaced");
    }
    fs::rename(staging / name, out / name, ec);
    if (ec) {
      if (m.had_old) {
        std::error_code back;
        fs::rename(old / name, out / name, back);
      }
      fail(name, "cannot be moved into place from " + (staging / name).string());
    }
    moved.push_back(m);
  }
  // 3. The marker last: OUT is complete.
  fs::rename(staging / marker_, out / marker_, ec);
  if (ec) fail(marker_, "cannot be moved into place from " + (staging / marker_).string());
  committed_ = true;
  fs::remove_all(old, ec);  // a link inside is removed as a link
  fs::remove_all(staging, ec);
}

StagedEntries::~StagedEntries() {
  if (!committed_ && !staging_.empty()) {
    std::error_code ec;
    fs::remove_all(staging_, ec);
  }
}

}  // namespace fulcrum
