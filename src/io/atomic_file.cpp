#include "fulcrum/io/atomic_file.hpp"

#include <fcntl.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>

#include <atomic>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <mutex>
#include <set>

#include "fulcrum/core/error.hpp"

namespace fulcrum {

namespace {
std::mutex g_mutex;
std::set<std::string>& pending() {
  static std::set<std::string> p;
  return p;
}
std::atomic<unsigned> g_counter{0};
}  // namespace

AtomicFile::AtomicFile(std::string final_path) : final_(std::move(final_path)) {
  namespace fs = std::filesystem;
  fs::path p(final_);
  tmp_ = (p.parent_path() / ("." + p.filename().string() + ".part-" + std::to_string(::getpid()) +
                             "-" + std::to_string(g_counter++)))
             .string();
  if (p.has_parent_path() && !fs::exists(p.parent_path()))
    throw InputError(final_, "output folder " + p.parent_path().string() + " does not exist");
  std::lock_guard<std::mutex> lock(g_mutex);
  pending().insert(tmp_);
}

AtomicFile::~AtomicFile() {
  if (!committed_) std::remove(tmp_.c_str());
  std::lock_guard<std::mutex> lock(g_mutex);
  pending().erase(tmp_);
}

void AtomicFile::commit() {
  if (std::rename(tmp_.c_str(), final_.c_str()) != 0) {
    const int e = errno;
    std::remove(tmp_.c_str());
    throw InputError(final_, std::string("cannot write the output file (rename from temporary failed): ") +
                                 std::strerror(e));
  }
  committed_ = true;
}

int write_all(int fd, const char* p, std::size_t n) {
  while (n > 0) {
    const ssize_t w = ::write(fd, p, n);
    if (w < 0 && errno == EINTR) continue;
    if (w <= 0) return w < 0 ? errno : ENOSPC;
    p += w;
    n -= static_cast<std::size_t>(w);
  }
  return 0;
}

void write_text_file(const std::string& path, const std::string& contents) {
  AtomicFile f(path);
  // POSIX calls, so that a failure is told with the system's reason
  // (EROFS, ENOSPC, EFBIG, ...), naming the file as the caller named it.
  const int fd = ::open(f.temporary_path().c_str(), O_WRONLY | O_CREAT | O_TRUNC | O_CLOEXEC, 0644);
  if (fd < 0) throw InputError(path, std::string("cannot open for writing: ") + std::strerror(errno));
  if (const int e = write_all(fd, contents.data(), contents.size()); e != 0) {
    ::close(fd);
    throw InputError(path, std::string("write failed: ") + std::strerror(e));
  }
  if (::close(fd) != 0) throw InputError(path, std::string("write failed: ") + std::strerror(errno));
  f.commit();
}

void remove_pending_temporaries() {
  // Called from a signal handler: no locking, unlink only.
  for (const auto& t : pending()) ::unlink(t.c_str());
}

}  // namespace fulcrum
