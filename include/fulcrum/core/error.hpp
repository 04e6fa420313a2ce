// Errors in fulcrum.
//
// Two kinds of failure exist and they are kept apart:
//
//  * InputError: the user's input is unusable (an unreadable file, a map
//    without WCS, an absurd option). It carries a single line that names the
//    file (when there is one) and the problem; `main` prints it as
//    "fulcrum: <file>: <problem>" and exits with status 2. Library code throws
//    it; it never prints.
//  * InternalError: an invariant of the code itself failed. FULCRUM_CHECK
//    throws it with the expression, the expected and the actual value, the way
//    Ceres' CHECK macros do, so that a bug report carries the numbers.
#pragma once

#include <sstream>
#include <stdexcept>
#include <string>

namespace fulcrum {

class InputError : public std::runtime_error {
 public:
  // `file` may be empty when the problem is not tied to a file (an option).
  InputError(const std::string& file, const std::string& problem)
      : std::runtime_error(file.empty() ? problem : file + ": " + problem),
        file_(file),
        problem_(problem) {}
  const std::string& file() const { return file_; }
  const std::string& problem() const { return problem_; }

 private:
  std::string file_;
  std::string problem_;
};

class InternalError : public std::logic_error {
 public:
  explicit InternalError(const std::string& what) : std::logic_error(what) {}
};

namespace detail {
template <typename A, typename B>
[[noreturn]] void check_failed(const char* file, int line, const char* expr, const A& expected,
                               const B& actual) {
  std::ostringstream os;
  os << "internal check failed at " << file << ":" << line << ": " << expr << " (expected "
     << expected << ", got " << actual << ")";
  throw InternalError(os.str());
}
}  // namespace detail

}  // namespace fulcrum

// FULCRUM_CHECK(cond, expected, actual): throw InternalError unless cond holds.
#define FULCRUM_CHECK(cond, expected, actual)                                        \
  do {                                                                              \
    if (!(cond)) ::fulcrum::detail::check_failed(__FILE__, __LINE__, #cond, (expected), (actual)); \
  } while (0)
