// The output folder of a run: refuse to overwrite without --force, and leave
// nothing of a failed run behind.
//
// prepare_output_folder(path, force) makes `path` ready for outputs:
//   * missing: created, with its parents;
//   * an existing empty folder, or one left by an interrupted run (it holds
//     the marker file kIncompleteMarker): used as it is;
//   * an existing folder with other files: an InputError naming it ("use
//     --force"), unless `force`, in which case the files a run writes are
//     replaced (each atomically, see atomic_file.hpp) and others are left;
//   * an existing file that is not a folder: an InputError.
//
// OutputFolder does the same and, while it is alive, marks the folder as
// incomplete (kIncompleteMarker, removed by keep()). If it is destroyed
// without keep() -- the run threw -- it removes what the run added: the
// whole folder when it created it, otherwise every file that was not there
// before. Each output file itself is still written through AtomicFile, so an
// interrupted run (SIGINT/SIGTERM) leaves complete files and the marker, never
// a half-written file; the next run may reuse that folder without --force.
//
//   OutputFolder out(options.out, cli::global_flags().force);
//   write_text_file(out.file("report.json"), text);
//   out.keep();
#pragma once

#include <filesystem>
#include <set>
#include <string>

namespace fulcrum {

inline constexpr const char* kIncompleteMarker = ".fulcrum-incomplete";

struct PreparedFolder {
  std::filesystem::path path;
  bool created = false;  // true when prepare_output_folder made it
};

PreparedFolder prepare_output_folder(const std::string& path, bool force);

class OutputFolder {
 public:
  OutputFolder(const std::string& path, bool force);
  OutputFolder(const OutputFolder&) = delete;
  OutputFolder& operator=(const OutputFolder&) = delete;
  ~OutputFolder();

  const std::filesystem::path& path() const { return folder_.path; }
  // path() / name, as a string for the writers.
  std::string file(const std::string& name) const;
  // The run succeeded: keep everything, remove the incomplete marker.
  void keep();

 private:
  PreparedFolder folder_;
  std::set<std::string> before_;  // files present before the run (relative)
  bool kept_ = false;
};

}  // namespace fulcrum
