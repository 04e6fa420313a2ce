// Write-then-rename, so that no output is ever half written.
//
// AtomicFile gives a temporary path beside the final one; commit() renames it
// into place; if the object is destroyed without commit() (an exception), the
// temporary file is removed. write_text_file() does this for a string.
// Temporary names are registered so that a SIGINT/SIGTERM handler can remove
// them (remove_pending_temporaries()).
#pragma once

#include <cstddef>
#include <string>

namespace fulcrum {

class AtomicFile {
 public:
  explicit AtomicFile(std::string final_path);
  AtomicFile(const AtomicFile&) = delete;
  AtomicFile& operator=(const AtomicFile&) = delete;
  ~AtomicFile();
  const std::string& temporary_path() const { return tmp_; }
  const std::string& final_path() const { return final_; }
  void commit();  // throws InputError when the rename fails

 private:
  std::string final_;
  std::string tmp_;
  bool committed_ = false;
};

void write_text_file(const std::string& path, const std::string& contents);
// Writes all `n` bytes at `p` to the file descriptor `fd` (retrying
// interrupted and partial writes); 0, or the errno of the failure (ENOSPC
// when the system writes nothing without saying why).
int write_all(int fd, const char* p, std::size_t n);
// Remove every temporary file still registered (async-signal-safe enough for
// a termination handler: unlink only).
void remove_pending_temporaries();

}  // namespace fulcrum
