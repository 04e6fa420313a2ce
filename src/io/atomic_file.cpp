#include "fulcrum/io/atomic_file.hpp"

#include <unistd.h>

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
    std::remove(tmp_.c_str());
    throw InputError(final_, "cannot write the output file (rename from temporary failed)");
  }
  committed_ = true;
}

void write_text_file(const std::string& path, const std::string& contents) {
  AtomicFile f(path);
  {
    std::ofstream out(f.temporary_path(), std::ios::binary);
    if (!out) throw InputError(path, "cannot open for writing");
    out << contents;
    out.flush();
    if (!out) throw InputError(path, "write failed (disk full?)");
  }
  f.commit();
}

void remove_pending_temporaries() {
  // Called from a signal handler: no locking, unlink only.
  for (const auto& t : pending()) ::unlink(t.c_str());
}

}  // namespace fulcrum
