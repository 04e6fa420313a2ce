// Helpers shared by the tests: temporary folders, running the fulcrum binary
// and the Python reference scripts (which use Debian's python3-astropy,
// -scipy, -shapely and -numpy as outside references).
#pragma once

#include <filesystem>
#include <string>
#include <vector>

namespace fulcrum::test {

// A fresh empty folder under the build tree's temporary area, unique per call.
std::filesystem::path temp_dir(const std::string& tag);

struct CommandResult {
  int exit_code = 0;
  std::string out;  // stdout
  std::string err;  // stderr
};

// Run the fulcrum executable with `args` (a shell-quoted string).
CommandResult run_fulcrum(const std::string& args);
// Run tests/python/<script> with `args`; exit code 0 means the reference
// check passed (scripts print what they compared).
CommandResult run_python(const std::string& script, const std::string& args);
// Run any shell command.
CommandResult run_shell(const std::string& command);

std::string source_dir();

// The whole content of a file as bytes (empty when it cannot be read).
std::string slurp(const std::filesystem::path& p);

// The error lines of a run's standard error: lines starting "fulcrum: "
// that are not warnings ("fulcrum: warning...").
std::vector<std::string> error_lines(const std::string& err);

}  // namespace fulcrum::test
