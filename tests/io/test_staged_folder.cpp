// One writer for an output folder (include/fulcrum/io/staged_folder.hpp):
// nothing appears in --out before commit(), a failed run leaves --out as it
// was, a second writer is refused by the lock, any content needs force and
// force replaces the folder whole, links inside the old folder are never
// written through, a dangling --out link is one line.
#include <catch2/catch.hpp>

#include <fstream>

#include "../support/test_support.hpp"
#include "fulcrum/core/error.hpp"
#include "fulcrum/io/atomic_file.hpp"
#include "fulcrum/io/distinct_paths.hpp"
#include "fulcrum/io/staged_folder.hpp"

namespace fs = std::filesystem;
using fulcrum::InputError;
using fulcrum::StagedFolder;

namespace {
void touch(const fs::path& p, const std::string& text = "x\n") {
  fs::create_directories(p.parent_path());
  std::ofstream(p) << text;
}
std::vector<std::string> entries(const fs::path& dir) {
  std::vector<std::string> out;
  for (const auto& e : fs::directory_iterator(dir)) out.push_back(e.path().filename().string());
  std::sort(out.begin(), out.end());
  return out;
}
}  // namespace

TEST_CASE("a staged folder appears whole at commit and not at all after a failure", "[io][staged-folder]") {
  const auto dir = fulcrum::test::temp_dir("staged");
  const auto out = dir / "res";
  {
    StagedFolder s(out.string(), false);
    fulcrum::write_text_file(s.file("report.json"), "{}\n");
    fs::create_directories(fs::path(s.path()) / "figures");
    fulcrum::write_text_file(s.file("figures/a.svg"), "<svg/>\n");
    CHECK_FALSE(fs::exists(out));  // nothing in --out before commit
    s.commit();
  }
  CHECK(fs::exists(out / "report.json"));
  CHECK(fs::exists(out / "figures" / "a.svg"));
  CHECK(entries(dir) == std::vector<std::string>{"res"});  // no lock, no staging left

  // A run that fails half way (an exception, as a failed write throws).
  const auto other = dir / "other";
  try {
    StagedFolder s(other.string(), false);
    fulcrum::write_text_file(s.file("report.json"), "{}\n");
    throw InputError("vel.fits", "bad input discovered half way");
  } catch (const InputError&) {
  }
  CHECK_FALSE(fs::exists(other));
  CHECK(entries(dir) == std::vector<std::string>{"res"});
}

TEST_CASE("any content needs force, and force replaces the whole folder", "[io][staged-folder]") {
  const auto dir = fulcrum::test::temp_dir("staged-force");
  const auto out = dir / "res";
  // Not only report.json: any file (here a page and figures) counts.
  touch(out / "report.html");
  touch(out / "figures" / "old.svg");
  CHECK_THROWS_WITH(StagedFolder(out.string(), false),
                    Catch::Contains(out.string()) && Catch::Contains("holds files") && Catch::Contains("`overwrite`"));
  // A link inside --out to a file outside: never written through.
  touch(dir / "outside.txt", "precious\n");
  fs::create_directory_symlink(dir, out / "link-out");
  {
    StagedFolder s(out.string(), true);
    fs::create_directories(fs::path(s.path()) / "figures");
    fulcrum::write_text_file(s.file("report.json"), "{\"new\": 1}\n");
    // A failed forced run leaves the old folder as it was.
  }
  CHECK(fs::exists(out / "report.html"));
  CHECK_FALSE(fs::exists(out / "report.json"));
  {
    StagedFolder s(out.string(), true);
    fulcrum::write_text_file(s.file("report.json"), "{\"new\": 1}\n");
    s.commit();
  }
  CHECK(entries(out) == std::vector<std::string>{"report.json"});  // old page, figures and link gone
  CHECK(fulcrum::test::slurp(dir / "outside.txt") == "precious\n");
  CHECK(entries(dir) == std::vector<std::string>{"outside.txt", "res"});
  // A file where the folder should be.
  touch(dir / "plain");
  CHECK_THROWS_WITH(StagedFolder((dir / "plain").string(), true), Catch::Contains("is not a folder"));
}

TEST_CASE("a second writer into the same folder is refused while the first runs", "[io][staged-folder]") {
  const auto dir = fulcrum::test::temp_dir("staged-lock");
  const auto out = dir / "res";
  {
    StagedFolder first(out.string(), false);
    CHECK_THROWS_WITH(StagedFolder(out.string(), true), Catch::Contains("another fulcrum run is writing"));
    CHECK_THROWS_WITH(fulcrum::OutputLock(out.string(), true), Catch::Contains("another fulcrum run is writing"));
    // The same folder named another way is the same lock.
    CHECK_THROWS_WITH(StagedFolder((dir / "." / "res").string(), true), Catch::Contains("another fulcrum run"));
    first.commit();
  }
  CHECK_NOTHROW(StagedFolder(out.string(), true));  // released at commit
}

TEST_CASE("leftovers of a killed run are removed, a dangling --out link is one line", "[io][staged-folder]") {
  const auto dir = fulcrum::test::temp_dir("staged-left");
  // What a SIGKILL leaves: the hidden staging folder beside --out, never --out.
  touch(dir / ".res.fulcrum-staging-999999" / "report.json");
  touch(dir / ".res.fulcrum-old-999999" / "report.json");
  {
    StagedFolder s((dir / "res").string(), false);
    s.commit();
  }
  CHECK(entries(dir) == std::vector<std::string>{"res"});

  fs::create_directory_symlink(dir / "nowhere", dir / "dangling");
  CHECK_THROWS_WITH(StagedFolder((dir / "dangling").string(), false),
                    Catch::Contains("dangling") && Catch::Contains("symbolic link to") &&
                        Catch::Contains("which does not exist"));
  // A link to an existing folder is followed: the folder is written, the link stays.
  fs::create_directories(dir / "real");
  fs::create_directory_symlink(dir / "real", dir / "alias");
  {
    StagedFolder s((dir / "alias").string(), false);
    fulcrum::write_text_file(s.file("a.json"), "{}\n");
    s.commit();
  }
  CHECK(fs::is_symlink(dir / "alias"));
  CHECK(fs::exists(dir / "real" / "a.json"));
}

TEST_CASE("an input inside the output folder is refused", "[io][staged-folder]") {
  const auto dir = fulcrum::test::temp_dir("staged-inputs");
  touch(dir / "res" / "vel.fits");
  CHECK_THROWS_WITH(fulcrum::check_inputs_outside_folder({{"velocity", (dir / "res" / "vel.fits").string()}},
                                                         {"out", (dir / "res/").string()}),
                    Catch::Contains("vel.fits") && Catch::Contains("lies in the output folder `out`"));
  CHECK_THROWS_WITH(fulcrum::check_inputs_outside_folder({{"from", (dir / "res").string()}}, {"out", (dir / "res").string()}),
                    Catch::Contains("`from` lies in the output folder"));
  CHECK_NOTHROW(fulcrum::check_inputs_outside_folder({{"velocity", (dir / "res2" / "v.fits").string()}},
                                                     {"out", (dir / "res").string()}));
}
