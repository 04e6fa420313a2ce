// One writer for an output folder: lock, staging folder, rename into place
// (see include/fulcrum/io/staged_folder.hpp).
#include "fulcrum/io/staged_folder.hpp"

#include <cerrno>
#include <cstring>
#include <fcntl.h>
#include <filesystem>
#include <sys/file.h>
#include <sys/stat.h>
#include <system_error>
#include <unistd.h>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/settings_check.hpp"

namespace fulcrum {

namespace fs = std::filesystem;

namespace {

struct Names {
  fs::path out, parent;
  std::string name;
};

// OUT resolved: a link followed to an existing folder, a dangling one refused.
Names resolve(const std::string& out) {
  if (out.empty()) throw InputError("", "the output folder name is empty");
  std::error_code ec;
  fs::path p = fs::absolute(fs::path(out), ec).lexically_normal();
  if (ec) throw InputError(out, "cannot be resolved: " + ec.message());
  if (p.has_filename() == false) p = p.parent_path();  // a trailing '/'
  const auto link = fs::symlink_status(p, ec);
  if (fs::is_symlink(link)) {
    const fs::path target = fs::read_symlink(p, ec);
    if (!fs::exists(fs::status(p, ec)))
      throw InputError(out, "is a symbolic link to " + target.string() +
                                ", which does not exist: remove the link or choose another folder");
    p = fs::canonical(p, ec);
    if (ec) throw InputError(out, "cannot be resolved: " + ec.message());
  }
  Names n;
  n.out = p;
  n.parent = p.parent_path();
  n.name = p.filename().string();
  if (n.name.empty() || n.name == "." || n.name == "..")
    throw InputError(out, "is not a folder name fulcrum can replace: name the folder itself");
  return n;
}

void make_parent(const Names& n, const std::string& shown) {
  std::error_code ec;
  if (!fs::exists(n.parent, ec)) {
    fs::create_directories(n.parent, ec);
    if (ec) throw InputError(n.parent.string(), "cannot create the folder that holds " + shown + ": " + ec.message());
  } else if (!fs::is_directory(n.parent, ec)) {
    throw InputError(n.parent.string(), "is not a folder, so " + shown + " cannot be made in it");
  }
  if (::access(n.parent.c_str(), W_OK | X_OK) != 0)
    throw InputError(n.parent.string(), std::string("cannot write the output folder here: ") + std::strerror(errno));
}

// flock on PARENT/.NAME.fulcrum-lock; returns the descriptor.
int take_lock(const Names& n, const std::string& shown, std::string& lock_path) {
  lock_path = (n.parent / ("." + n.name + ".fulcrum-lock")).string();
  for (int attempt = 0; attempt < 5; ++attempt) {
    const int fd = ::open(lock_path.c_str(), O_RDWR | O_CREAT | O_CLOEXEC, 0644);
    if (fd < 0) throw InputError(lock_path, std::string("cannot make the lock file: ") + std::strerror(errno));
    if (::flock(fd, LOCK_EX | LOCK_NB) != 0) {
      ::close(fd);
      throw InputError(shown, "another fulcrum run is writing into this folder (lock " + lock_path +
                                  "); wait for it to end or choose another folder");
    }
    // The lock file may have been removed by a run that just ended: lock the
    // file that is there now.
    struct stat a {}, b {};
    if (::fstat(fd, &a) == 0 && ::stat(lock_path.c_str(), &b) == 0 && a.st_ino == b.st_ino && a.st_dev == b.st_dev)
      return fd;
    ::close(fd);
  }
  throw InputError(lock_path, "cannot take the lock of the output folder");
}

void release_lock(int& fd, const std::string& lock_path) {
  if (fd < 0) return;
  ::unlink(lock_path.c_str());
  ::close(fd);
  fd = -1;
}

// OUT must be missing, an empty folder, or (with force) any folder.
void check_content(const Names& n, const std::string& shown, bool force, const std::string& ignored = "") {
  std::error_code ec;
  const auto st = fs::symlink_status(n.out, ec);
  if (!fs::exists(st)) return;
  if (!fs::is_directory(st)) throw InputError(shown, "exists and is not a folder: choose another output folder");
  if (::access(n.out.c_str(), W_OK | X_OK) != 0)
    throw InputError(shown, std::string("output folder is not writable: ") + std::strerror(errno));
  bool empty = true;
  for (auto it = fs::directory_iterator(n.out, ec); !ec && it != fs::directory_iterator(); it.increment(ec))
    if (ignored.empty() || it->path().filename() != ignored) empty = false;
  if (!force && !empty)
    throw InputError(shown, "output folder exists and holds files; allow replacing it (" + setting_ref("overwrite") +
                                ") or choose another folder");
}

// Leftovers of killed runs into the same OUT (we hold the lock).
void remove_leftovers(const Names& n) {
  std::error_code ec;
  const std::string a = "." + n.name + ".fulcrum-staging-", b = "." + n.name + ".fulcrum-old-";
  for (auto it = fs::directory_iterator(n.parent, ec); !ec && it != fs::directory_iterator(); it.increment(ec)) {
    const std::string f = it->path().filename().string();
    if (f.rfind(a, 0) == 0 || f.rfind(b, 0) == 0) {
      std::error_code rc;
      fs::remove_all(it->path(), rc);
    }
  }
}

}  // namespace

StagedFolder::StagedFolder(const std::string& out, bool force) : given_(out) {
  const Names n = resolve(out);
  make_parent(n, out);
  lock_fd_ = take_lock(n, out, lock_);
  try {
    check_content(n, out, force);
    remove_leftovers(n);
    out_ = n.out.string();
    const fs::path staging = n.parent / ("." + n.name + ".fulcrum-staging-" + std::to_string(::getpid()));
    std::error_code ec;
    fs::create_directory(staging, ec);
    if (ec) throw InputError(staging.string(), "cannot create the staging folder: " + ec.message());
    staging_ = staging.string();
  } catch (...) {
    release_lock(lock_fd_, lock_);
    throw;
  }
}

InputError shown_in(const InputError& e, const std::string& staging, const std::string& shown) {
  const std::string& f = e.file();
  if (staging.empty() || f.compare(0, staging.size(), staging) != 0) return e;
  return InputError((fs::path(shown) / fs::path(f.substr(staging.size())).relative_path()).string(), e.problem());
}

void rethrow_shown_in(const InputError& e, const std::string& staging, const std::string& shown) {
  InputError s = shown_in(e, staging, shown);
  if (s.file() == e.file()) throw;  // as it is, keeping its own type
  throw s;
}

InputError StagedFolder::shown_in_target(const InputError& e) const { return shown_in(e, staging_, given_); }

void StagedFolder::rethrow_in_target(const InputError& e) const { rethrow_shown_in(e, staging_, given_); }

std::string StagedFolder::file(const std::string& name) const { return (fs::path(staging_) / name).string(); }

void StagedFolder::commit() {
  const fs::path out(out_), staging(staging_);
  const fs::path old = out.parent_path() / ("." + out.filename().string() + ".fulcrum-old-" + std::to_string(::getpid()));
  std::error_code ec;
  const bool replace = fs::exists(fs::symlink_status(out, ec));
  if (replace) {
    fs::rename(out, old, ec);
    if (ec) throw InputError(out_, "cannot be moved aside to be replaced: " + ec.message());
  }
  fs::rename(staging, out, ec);
  if (ec) {
    std::error_code back;
    if (replace) fs::rename(old, out, back);
    throw InputError(out_, "cannot be moved into place from " + staging_ + ": " + ec.message());
  }
  committed_ = true;
  if (replace) fs::remove_all(old, ec);  // a link inside is removed as a link
  release_lock(lock_fd_, lock_);
}

StagedFolder::~StagedFolder() {
  if (!committed_ && !staging_.empty()) {
    std::error_code ec;
    fs::remove_all(staging_, ec);
  }
  release_lock(lock_fd_, lock_);
}

OutputLock::OutputLock(const std::string& out, bool force, const std::string& ignored) {
  const Names n = resolve(out);
  make_parent(n, out);
  lock_fd_ = take_lock(n, out, lock_);
  try {
    check_content(n, out, force, ignored);
  } catch (...) {
    release_lock(lock_fd_, lock_);
    throw;
  }
  out_ = n.out.string();
}

OutputLock::~OutputLock() { release_lock(lock_fd_, lock_); }

bool has_unfinished_run(const std::string& out) {
  std::error_code ec;
  fs::path p = fs::absolute(fs::path(out), ec).lexically_normal();
  if (ec) return false;
  if (!p.has_filename()) p = p.parent_path();
  if (fs::exists(p / ".partial", ec)) return true;
  const std::string staging = "." + p.filename().string() + ".fulcrum-staging-";
  for (auto it = fs::directory_iterator(p.parent_path(), ec); !ec && it != fs::directory_iterator(); it.increment(ec))
    if (it->path().filename().string().rfind(staging, 0) == 0) return true;
  return false;
}

}  // namespace fulcrum
