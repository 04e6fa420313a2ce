// One writer for a command's output folder (--out): everything is written
// into a private staging folder next to it and renamed into place at the end.
//
// StagedFolder(out, force), for OUT = PARENT/NAME:
//   * OUT a symbolic link: followed to the folder it names when that exists;
//     a dangling one is refused (one line naming it and its target);
//   * PARENT made if missing; one that cannot be made or written (read-only)
//     refused with the path and the reason;
//   * a second writer into the same OUT is refused while the first runs: an
//     advisory lock (flock) on PARENT/.NAME.fulcrum-lock, which the kernel
//     releases when the process ends, however it ends;
//   * OUT holding anything at all needs `force`; OUT that is not a folder is
//     refused;
//   * leftovers of killed runs (PARENT/.NAME.fulcrum-staging-*, -old-*) are
//     removed, then the run writes into PARENT/.NAME.fulcrum-staging-PID
//     (path()).
// commit() moves the staging folder into place: an existing OUT is renamed
// aside, the staging folder renamed to OUT, and the old one removed (two
// renames within one file system), so OUT is always either the old folder
// whole or the new one whole. Nothing of the old OUT is reused or followed:
// a symbolic link inside it is removed as a link, never written through.
// Destroyed without commit() (the run threw), the staging folder is removed
// and OUT is untouched; a SIGKILL leaves only the hidden staging folder
// beside OUT, removed by the next run into OUT.
//
//   StagedFolder out(options.out, cli::global_flags().force);
//   write_text_file(out.file("report.json"), text);
//   out.commit();
#pragma once

#include <string>

#include "fulcrum/core/error.hpp"

namespace fulcrum {

class StagedFolder {
 public:
  StagedFolder(const std::string& out, bool force);
  StagedFolder(const StagedFolder&) = delete;
  StagedFolder& operator=(const StagedFolder&) = delete;
  ~StagedFolder();

  // The staging folder to write into.
  const std::string& path() const { return staging_; }
  // path() / name.
  std::string file(const std::string& name) const;
  // The output folder the run was asked for (after following a link).
  const std::string& target() const { return out_; }
  // Move the staging folder into place (see above); throws InputError naming
  // the path when a rename fails (the old OUT is then left as it was).
  void commit();
  // `e` with a path in the staging folder shown as the same path in the
  // output folder as given (a failed write names OUT/figures/x.svg, not the
  // hidden staging folder); other errors unchanged.
  InputError shown_in_target(const InputError& e) const;
  // Inside a handler of `e`: rethrows it, as shown_in_target(e) when it
  // names a path in the staging folder (see rethrow_shown_in).
  [[noreturn]] void rethrow_in_target(const InputError& e) const;

 private:
  std::string given_, out_, staging_, lock_;
  int lock_fd_ = -1;
  bool committed_ = false;
};

// Lock, link and content checks of StagedFolder without the staging, for a
// writer that stages inside OUT itself (`merge` into the folder holding its
// shards, io/staged_entries.hpp):
// holds the lock while alive and refuses OUT with content unless `force`
// (an entry named `ignored`, such as a killed run's own staging folder, does
// not count as content).
class OutputLock {
 public:
  OutputLock(const std::string& out, bool force, const std::string& ignored = "");
  OutputLock(const OutputLock&) = delete;
  OutputLock& operator=(const OutputLock&) = delete;
  ~OutputLock();
  const std::string& target() const { return out_; }

 private:
  std::string out_, lock_;
  int lock_fd_ = -1;
};

// True when a run into OUT stopped before its end or is still running: a
// staging folder PARENT/.NAME.fulcrum-staging-* is there (or, from older
// versions of `run`, OUT/.partial). `merge` refuses such a folder.
bool has_unfinished_run(const std::string& out);

// `e` with a path under `staging` shown as the same path under `shown`;
// other errors unchanged (the one mapping of StagedFolder and StagedEntries).
InputError shown_in(const InputError& e, const std::string& staging, const std::string& shown);

// Inside a handler of `e`: rethrows the error being handled as it is (its
// own type, e.g. a SettingError) unless it names a path under `staging`,
// then throws shown_in(e, staging, shown).
[[noreturn]] void rethrow_shown_in(const InputError& e, const std::string& staging, const std::string& shown);

}  // namespace fulcrum
