// Outputs that would overwrite an input or another output
// (io/distinct_paths.hpp): compared after resolving '.', '..' and links.
#include <catch2/catch.hpp>

#include <filesystem>
#include <fstream>

#include "fulcrum/core/error.hpp"
#include "fulcrum/io/distinct_paths.hpp"
#include "../support/test_support.hpp"

namespace fs = std::filesystem;
using namespace fulcrum;

TEST_CASE("distinct paths: an output equal to an input or to another output is refused", "[io][outputs]") {
  const fs::path d = test::temp_dir("distinct-paths");
  const std::string in = (d / "v.fits").string();
  std::ofstream(in) << "x";
  CHECK_NOTHROW(check_distinct_paths({{"velocity", in}}, {{"json", (d / "k.json").string()}, {"out", ""}}));
  CHECK_THROWS_WITH(check_distinct_paths({{"velocity", in}}, {{"json", (d / "." / "v.fits").string()}}),
                    Catch::Contains("`json` names the input `velocity`"));
  fs::create_symlink(in, d / "link.fits");
  CHECK_THROWS_AS(check_distinct_paths({{"velocity", in}}, {{"json", (d / "link.fits").string()}}), InputError);
  CHECK_THROWS_WITH(check_distinct_paths({}, {{"out", (d / "p.fits").string()}, {"json", (d / "sub" / ".." / "p.fits").string()}}),
                    Catch::Contains("`json` names the same file as `out`"));
  fs::remove_all(d);
}
