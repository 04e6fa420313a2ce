#include "fulcrum/core/log.hpp"

#include "fulcrum/core/progress_listener.hpp"

#include <unistd.h>

#include <atomic>
#include <cstdio>
#include <mutex>
#include <string>

namespace fulcrum {

namespace {
std::atomic<bool> g_quiet{false};
std::mutex g_mutex;
std::string (*g_reword)(const std::string&) = nullptr;

std::string worded(const std::string& message) { return g_reword ? g_reword(message) : message; }

std::mutex g_listener_mutex;
ProgressListener g_listener;

void tell_listener(const std::string& label, std::size_t done, std::size_t total) {
  ProgressListener listener;
  {
    std::lock_guard<std::mutex> lock(g_listener_mutex);
    listener = g_listener;
  }
  if (listener) listener(label, done, total);
}
}  // namespace

ProgressListener set_progress_listener(ProgressListener listener) {
  std::lock_guard<std::mutex> lock(g_listener_mutex);
  std::swap(g_listener, listener);
  return listener;
}

void set_message_wording(std::string (*reword)(const std::string&)) { g_reword = reword; }

void set_quiet(bool q) { g_quiet = q; }
bool quiet() { return g_quiet; }

void warn(const std::string& message) {
  std::lock_guard<std::mutex> lock(g_mutex);
  std::fprintf(stderr, "fulcrum: warning: %s\n", worded(message).c_str());
}

void note(const std::string& message) {
  if (g_quiet) return;
  std::lock_guard<std::mutex> lock(g_mutex);
  std::fprintf(stderr, "%s\n", worded(message).c_str());
}

Progress::Progress(std::string label, std::size_t total)
    : label_(std::move(label)), total_(total), active_(!g_quiet && isatty(2)) {}

Progress::~Progress() { finish(); }

void Progress::advance(std::size_t n) {
  std::size_t done = 0;
  {
    std::lock_guard<std::mutex> lock(g_mutex);
    done = done_ += n;
  }
  tell_listener(label_, done, total_);
  std::lock_guard<std::mutex> lock(g_mutex);
  if (!active_ || total_ == 0) return;
  if (done_ * 100 / total_ == last_shown_ * 100 / total_ && done_ != total_) return;
  last_shown_ = done_;
  std::fprintf(stderr, "\r%s: %zu/%zu (%zu%%)", label_.c_str(), done_, total_, done_ * 100 / total_);
  std::fflush(stderr);
}

void Progress::finish() {
  if (finished_) return;
  finished_ = true;
  if (active_) {
    std::lock_guard<std::mutex> lock(g_mutex);
    std::fprintf(stderr, "\r%s: %zu/%zu done\n", label_.c_str(), done_, total_);
  }
}

}  // namespace fulcrum
