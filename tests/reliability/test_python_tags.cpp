// Every Catch2 test that runs Python carries the tag [python], so that the
// group can be skipped as one (`fulcrum_tests "~[python]"`, DEVELOPERS.md).
// This reads the test sources: a TEST_CASE whose body calls run_python or
// FULCRUM_PYTHON directly must name [python] in its tags. (Calls through a
// file-local helper are not seen here; tag those by hand.)
#include <catch2/catch.hpp>

#include <filesystem>
#include <string>
#include <vector>

#include "../support/test_support.hpp"

namespace fs = std::filesystem;

namespace {
// Test cases of one source file as (tags, body) pairs.
std::vector<std::pair<std::string, std::string>> test_cases(const std::string& text) {
  std::vector<std::pair<std::string, std::string>> out;
  const std::string key = "\nTEST_CASE(";
  for (std::size_t p = text.find(key); p != std::string::npos;) {
    const std::size_t next = text.find(key, p + key.size());
    const std::string block = text.substr(p, next == std::string::npos ? std::string::npos : next - p);
    const std::size_t brace = block.find('{');
    out.emplace_back(block.substr(0, brace), brace == std::string::npos ? "" : block.substr(brace));
    p = next;
  }
  return out;
}
}  // namespace

TEST_CASE("tests that call Python carry the python tag", "[reliability]") {
  const fs::path tests = fs::path(fulcrum::test::source_dir()) / "tests";
  int python_cases = 0;
  for (const auto& entry : fs::recursive_directory_iterator(tests)) {
    if (entry.path().extension() != ".cpp" || entry.path().filename() == "test_python_tags.cpp") continue;
    for (const auto& [head, body] : test_cases("\n" + fulcrum::test::slurp(entry.path()))) {
      if (body.find("run_python(") == std::string::npos && body.find("FULCRUM_PYTHON") == std::string::npos)
        continue;
      ++python_cases;
      INFO(entry.path().string() << ":" << head);
      CHECK(head.find("[python]") != std::string::npos);
    }
  }
  CHECK(python_cases > 20);  // the scan found the reference tests at all
}

// CTest registers each Catch2 test by name (catch_discover_tests); a ';' in a
// name splits it into two CTest entries that match no test and pass without
// running anything, and a '[' is read as the start of a tag.
TEST_CASE("test names have no semicolon and no bracket, so that CTest runs them", "[reliability]") {
  const fs::path tests = fs::path(fulcrum::test::source_dir()) / "tests";
  for (const auto& entry : fs::recursive_directory_iterator(tests)) {
    if (entry.path().extension() != ".cpp") continue;
    for (const auto& [head, body] : test_cases("\n" + fulcrum::test::slurp(entry.path()))) {
      const std::size_t open = head.find('"'), close = head.find('"', open + 1);
      if (open == std::string::npos || close == std::string::npos) continue;
      const std::string name = head.substr(open + 1, close - open - 1);
      INFO(entry.path().string() << ": " << name);
      CHECK(name.find(';') == std::string::npos);
      CHECK(name.find('[') == std::string::npos);
    }
  }
}
