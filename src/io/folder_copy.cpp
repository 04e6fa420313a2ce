// Copying a folder with errors that name the file (io/folder_copy.hpp).
#include "fulcrum/io/folder_copy.hpp"

#include <fcntl.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <string>
#include <vector>

#include "fulcrum/core/error.hpp"
#include "fulcrum/io/atomic_file.hpp"

namespace fulcrum {

namespace fs = std::filesystem;

namespace {

// The bytes of `from` copied into a new file `to`; a failed read or write
// names the file and says the system's reason (fs::copy says "Input/output
// error" for a full disk).
void copy_file_bytes(const fs::path& from, const fs::path& to) {
  const int in = ::open(from.c_str(), O_RDONLY | O_CLOEXEC);
  if (in < 0) throw InputError(from.string(), std::string("cannot be read: ") + std::strerror(errno));
  const int out = ::open(to.c_str(), O_WRONLY | O_CREAT | O_EXCL | O_CLOEXEC, 0644);
  if (out < 0) {
    const int e = errno;
    ::close(in);
    throw InputError(to.string(), std::string("cannot be made: ") + std::strerror(e));
  }
  std::vector<char> buf(1 << 16);
  std::string failed;
  for (;;) {
    const ssize_t n = ::read(in, buf.data(), buf.size());
    if (n < 0 && errno == EINTR) continue;
    if (n < 0) {
      failed = std::string("read failed: ") + std::strerror(errno);
      break;
    }
    if (n == 0) break;
    if (const int e = write_all(out, buf.data(), static_cast<std::size_t>(n)); e != 0) {
      failed = std::string("write failed: ") + std::strerror(e);
      break;
    }
  }
  ::close(in);
  if (::close(out) != 0 && failed.empty()) failed = std::string("write failed: ") + std::strerror(errno);
  if (!failed.empty()) throw InputError(to.string(), failed + " (copying " + from.string() + ")");
}

}  // namespace

void copy_folder(const fs::path& from, const fs::path& to) {
  std::error_code ec;
  fs::create_directory(to, ec);
  if (ec) throw InputError(to.string(), "cannot be made: " + ec.message());
  for (auto it = fs::recursive_directory_iterator(from, ec); !ec && it != fs::recursive_directory_iterator();
       it.increment(ec)) {
    const fs::path dest = to / fs::relative(it->path(), from);
    std::error_code k;
    if (it->is_symlink(k) && it->is_directory(k)) {
      fs::copy_symlink(it->path(), dest, k);
      if (k) throw InputError(dest.string(), "cannot be made: " + k.message());
    } else if (it->is_directory(k)) {
      fs::create_directory(dest, k);
      if (k) throw InputError(dest.string(), "cannot be made: " + k.message());
    } else if (it->is_regular_file(k)) {
      copy_file_bytes(it->path(), dest);
    } else {
      throw InputError(it->path().string(), "is neither a file nor a folder, so it cannot be copied");
    }
  }
  if (ec) throw InputError(from.string(), "cannot be read: " + ec.message());
}

}  // namespace fulcrum
