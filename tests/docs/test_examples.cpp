// The worked examples in docs/examples/ show real output: their marked
// commands are run afresh by tools/update_examples.py --check (each file in
// its own temporary folder, fixed seeds and SOURCE_DATE_EPOCH), and this test
// fails when the text and the fresh run disagree. The script prints a diff
// naming the file and block; `python3 tools/update_examples.py --fulcrum
// build/fulcrum` rewrites the text, after which the prose around a changed
// block must be reread (DEVELOPERS.md, "Worked examples"). About 20 s: the
// examples use 2000 bootstrap draws and small mocks.
#include <catch2/catch.hpp>

#include <fstream>

#include "../support/test_support.hpp"

TEST_CASE("the worked examples in docs/examples match a fresh run", "[docs][python]") {
  const auto r = fulcrum::test::run_shell(std::string(FULCRUM_PYTHON) + " " + fulcrum::test::source_dir() +
                                          "/tools/update_examples.py --check --jobs 2 --fulcrum " FULCRUM_BINARY);
  INFO(r.out << r.err);
  CHECK(r.exit_code == 0);
}

TEST_CASE("the examples check refuses a missing binary and reports a changed block", "[docs][python]") {
  const auto dir = fulcrum::test::temp_dir("examples_check");
  const auto doc = dir / "stale.md";
  {
    std::ofstream out(doc);
    out << "Text.\n\n<!-- run -->\n```console\n$ echo fresh\nstale\n```\n";
  }
  const std::string script = std::string(FULCRUM_PYTHON) + " " + fulcrum::test::source_dir() + "/tools/update_examples.py";
  const auto missing = fulcrum::test::run_shell(script + " --check --fulcrum " + (dir / "none").string() + " " +
                                                doc.string());
  CHECK(missing.exit_code == 2);
  const auto stale = fulcrum::test::run_shell(script + " --check --fulcrum " FULCRUM_BINARY " " + doc.string());
  INFO(stale.out << stale.err);
  CHECK(stale.exit_code == 1);
  CHECK(stale.out.find("stale.md: block 1") != std::string::npos);
  CHECK(stale.out.find("+fresh") != std::string::npos);
  const auto rewrite = fulcrum::test::run_shell(script + " --fulcrum " FULCRUM_BINARY " " + doc.string());
  CHECK(rewrite.exit_code == 0);
  CHECK(fulcrum::test::slurp(doc) == "Text.\n\n<!-- run -->\n```console\n$ echo fresh\nfresh\n```\n");
}
