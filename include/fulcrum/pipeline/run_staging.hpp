// A run's output folder written through a staging folder, so that a run
// killed at any moment (a Slurm time limit, a SIGKILL, a node that went
// away) and started again leaves exactly the files of a run that was never
// interrupted.
//
// Everything is written first into DIR/.partial/, which is wiped when a run
// starts: nothing a killed run left behind is reused. commit() then moves
// each entry of .partial into DIR, replacing an older entry of the same name
// whole (an old galaxy folder is removed, then the new one renamed in; a
// rename within one file system), with the entries named in `last` moved
// last, and removes .partial. Entries of DIR the run does not make are left
// alone. A folder that still holds .partial holds an unfinished run.
#pragma once

#include <string>
#include <vector>

namespace fulcrum::pipeline {

inline constexpr const char* kStagingFolder = ".partial";

class RunStaging {
 public:
  // Creates `out_dir` if needed and a fresh, empty `out_dir`/.partial.
  explicit RunStaging(std::string out_dir);
  // The folder to write into.
  const std::string& path() const { return staging_; }
  // Move everything into the output folder (see above).
  void commit(const std::vector<std::string>& last = {"sample.json"});

 private:
  std::string out_;
  std::string staging_;
};

// True when DIR holds a staging folder: a run there was stopped before its end.
bool has_unfinished_run(const std::string& out_dir);

}  // namespace fulcrum::pipeline
