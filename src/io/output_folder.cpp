// Output folders: refuse to overwrite without --force, clean up after a
// failed run (see include/fulcrum/io/output_folder.hpp).
#include "fulcrum/core/settings_check.hpp"
#include "fulcrum/io/output_folder.hpp"

#include <fstream>
#include <functional>
#include <system_error>
#include <unistd.h>

#include "fulcrum/core/error.hpp"

namespace fulcrum {

namespace fs = std::filesystem;

namespace {

std::set<std::string> files_in(const fs::path& dir) {
  std::set<std::string> out;
  std::error_code ec;
  for (auto it = fs::recursive_directory_iterator(dir, ec); !ec && it != fs::recursive_directory_iterator();
       it.increment(ec))
    if (!it->is_directory(ec)) out.insert(fs::relative(it->path(), dir, ec).string());
  return out;
}

}  // namespace

PreparedFolder prepare_output_folder(const std::string& path, bool force) {
  if (path.empty()) throw InputError("", "the output folder name is empty");
  PreparedFolder out;
  out.path = fs::path(path);
  std::error_code ec;
  const auto st = fs::status(out.path, ec);
  if (fs::exists(st)) {
    if (!fs::is_directory(st))
      throw InputError(path, "exists and is not a folder: choose another output folder");
    auto files = files_in(out.path);
    const bool interrupted = files.count(kIncompleteMarker) > 0;
    if (!files.empty() && !interrupted && !force)
      throw InputError(path, "output folder exists and holds files; allow overwriting (" + setting_ref("overwrite") +
                                 ") or choose another folder");
    if (::access(path.c_str(), W_OK) != 0)
      throw InputError(path, "output folder is not writable");
    return out;
  }
  fs::create_directories(out.path, ec);
  if (ec) throw InputError(path, "cannot create the output folder: " + ec.message());
  out.created = true;
  return out;
}

OutputFolder::OutputFolder(const std::string& path, bool force)
    : folder_(prepare_output_folder(path, force)) {
  if (!folder_.created) before_ = files_in(folder_.path);
  before_.erase(kIncompleteMarker);
  std::ofstream marker(folder_.path / kIncompleteMarker);
  marker << "a fulcrum run writing here has not finished (process " << ::getpid() << ")\n";
  if (!marker) throw InputError(path, "cannot write in the output folder");
}

std::string OutputFolder::file(const std::string& name) const { return (folder_.path / name).string(); }

void OutputFolder::keep() {
  kept_ = true;
  std::error_code ec;
  fs::remove(folder_.path / kIncompleteMarker, ec);
}

OutputFolder::~OutputFolder() {
  if (kept_) return;
  std::error_code ec;
  if (folder_.created) {
    fs::remove_all(folder_.path, ec);
    return;
  }
  for (const auto& rel : files_in(folder_.path))
    if (!before_.count(rel)) fs::remove(folder_.path / rel, ec);
  // Folders left empty by the removal (deepest first).
  std::set<fs::path, std::greater<>> dirs;
  for (auto it = fs::recursive_directory_iterator(folder_.path, ec);
       !ec && it != fs::recursive_directory_iterator(); it.increment(ec))
    if (it->is_directory(ec)) dirs.insert(it->path());
  for (const auto& d : dirs)
    if (fs::is_empty(d, ec)) fs::remove(d, ec);
}

}  // namespace fulcrum
