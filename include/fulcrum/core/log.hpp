// Messages to the person at the terminal: warnings, notes and progress.
//
// Library code reports through these functions, never through std::cout, so
// that the CLI decides what is shown: `--quiet` silences notes and progress;
// warnings always go to stderr as "fulcrum: warning: ...". Progress lines are
// drawn only when stderr is a terminal. Everything here is thread-safe.
#pragma once

#include <cstddef>
#include <string>

namespace fulcrum {

void set_quiet(bool quiet);
// How warnings and notes are worded for this front end: the command line
// shows settings named with setting_ref() as its flags. Default: unchanged.
void set_message_wording(std::string (*reword)(const std::string&));
bool quiet();
void warn(const std::string& message);
void note(const std::string& message);  // a line of information on stderr

// A progress line "label: done/total" redrawn in place on a terminal.
class Progress {
 public:
  Progress(std::string label, std::size_t total);
  ~Progress();
  void advance(std::size_t n = 1);
  void finish();

 private:
  std::string label_;
  std::size_t total_;
  std::size_t done_ = 0;
  std::size_t last_shown_ = 0;
  bool active_;
  bool finished_ = false;
};

}  // namespace fulcrum
