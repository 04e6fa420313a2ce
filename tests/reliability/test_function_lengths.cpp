// The contributor rule "no function in src/ is longer than 150 lines"
// (DEVELOPERS.md, Style), checked on the tree by tools/function_lengths.py.
#include <catch2/catch.hpp>

#include <string>

#include "../support/test_support.hpp"

TEST_CASE("no function in src is longer than 150 lines", "[reliability][python]") {
  const std::string src = fulcrum::test::source_dir();
  const auto r = fulcrum::test::run_shell(std::string(FULCRUM_PYTHON) + " " + src + "/tools/function_lengths.py --fail 150 " +
                                          src + "/src");
  INFO(r.out << r.err);
  CHECK(r.exit_code == 0);
  CHECK(r.out.find("0 longer than 150") != std::string::npos);
}
