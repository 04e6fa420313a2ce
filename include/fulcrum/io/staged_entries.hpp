// Products written into an output folder that cannot be replaced whole
// because it holds other things too (the Slurm layout: OUT/shards/ and
// OUT/slurm/ beside the merged sample), staged inside it and moved into
// place one entry at a time, with a marker file (sample.json) last.
//
// StagedEntries(out, marker), OUT an existing folder:
//   * takes the lock of OUT, as StagedFolder does (io/staged_folder.hpp,
//     PARENT/.NAME.fulcrum-lock), so one writer at a time;
//   * removes what killed writers left (OUT/.fulcrum-staging-*,
//     OUT/.fulcrum-old-*), then writes into OUT/.fulcrum-staging-PID
//     (path()); every entry whose name starts with '.' is hidden from
//     readers of OUT (merge skips them).
// commit() moves every entry of the staging folder into OUT:
//   1. OUT/marker, if there, is moved aside into OUT/.fulcrum-old-PID (from
//      here on OUT has no marker: it is incomplete);
//   2. each other entry, in name order, is renamed to OUT/<entry>; an
//      existing OUT/<entry> is first moved aside into the same folder;
//   3. the marker is renamed into OUT last;
//   4. the folder of old entries is removed (a link inside is removed as a
//      link), and the empty staging folder.
// Killed at any moment, OUT holds either its old marker with its old
// entries, or no marker; the leftovers are removed by the next writer,
// which writes every entry again. A rename that fails in 1-3 puts back what
// was moved (the old entries and marker) and throws InputError naming the
// entry in OUT. Entries of OUT that the staging folder does not hold are
// left as they are. Destroyed without commit() (the writer threw), the
// staging folder is removed and OUT is untouched.
//
//   StagedEntries s(out, "sample.json");
//   write_text_file(s.file("table.csv"), text);
//   write_text_file(s.file("sample.json"), marker_text);
//   s.commit();
#pragma once

#include <string>

#include "fulcrum/core/error.hpp"
#include "fulcrum/io/staged_folder.hpp"

namespace fulcrum {

class StagedEntries {
 public:
  StagedEntries(const std::string& out, const std::string& marker);
  StagedEntries(const StagedEntries&) = delete;
  StagedEntries& operator=(const StagedEntries&) = delete;
  ~StagedEntries();

  // The staging folder to write into.
  const std::string& path() const { return staging_; }
  // path() / name.
  std::string file(const std::string& name) const;
  // The output folder (after following a link).
  const std::string& target() const { return lock_.target(); }
  // Move the entries into place (see above). The marker must be in the
  // staging folder.
  void commit();
  // `e` with a path in the staging folder shown as the same path in the
  // output folder as given; other errors unchanged.
  InputError shown_in_target(const InputError& e) const;
  // Inside a handler of `e`: rethrows it, as shown_in_target(e) when it
  // names a path in the staging folder (io/staged_folder.hpp, rethrow_shown_in).
  [[noreturn]] void rethrow_in_target(const InputError& e) const;

 private:
  OutputLock lock_;
  std::string given_, marker_, staging_;
  bool committed_ = false;
};

// Names of the hidden folders StagedEntries makes inside OUT: true for
// ".fulcrum-staging-*" and ".fulcrum-old-*".
bool is_staged_entries_leftover(const std::string& name);

}  // namespace fulcrum
