// Output folders: no overwrite without --force, nothing left after a failed
// run, an interrupted run's folder reusable (include/fulcrum/io/output_folder.hpp).
#include <catch2/catch.hpp>

#include <fstream>

#include "../support/test_support.hpp"
#include "fulcrum/core/error.hpp"
#include "fulcrum/io/atomic_file.hpp"
#include "fulcrum/io/output_folder.hpp"

namespace fs = std::filesystem;
using fulcrum::InputError;

namespace {
void touch(const fs::path& p, const std::string& text = "x\n") {
  fs::create_directories(p.parent_path());
  std::ofstream(p) << text;
}
std::string slurp(const fs::path& p) {
  std::ifstream in(p);
  return std::string(std::istreambuf_iterator<char>(in), {});
}
}  // namespace

TEST_CASE("prepare_output_folder refuses to overwrite without force", "[io][output-folder]") {
  const auto dir = fulcrum::test::temp_dir("outfolder");
  // Missing: created with parents.
  auto made = fulcrum::prepare_output_folder((dir / "a" / "b").string(), false);
  CHECK(made.created);
  CHECK(fs::is_directory(dir / "a" / "b"));
  // Existing and empty: used.
  CHECK_FALSE(fulcrum::prepare_output_folder((dir / "a" / "b").string(), false).created);
  // Holding files: refused without force, naming the folder and the flag.
  touch(dir / "a" / "b" / "report.json");
  CHECK_THROWS_WITH(fulcrum::prepare_output_folder((dir / "a" / "b").string(), false),
                    Catch::Contains((dir / "a" / "b").string()) && Catch::Contains("`overwrite`"));
  CHECK_NOTHROW(fulcrum::prepare_output_folder((dir / "a" / "b").string(), true));
  // A file where the folder should be.
  touch(dir / "plain");
  CHECK_THROWS_WITH(fulcrum::prepare_output_folder((dir / "plain").string(), true),
                    Catch::Contains("is not a folder"));
}

TEST_CASE("a failed run leaves nothing behind, a kept run keeps everything", "[io][output-folder]") {
  const auto dir = fulcrum::test::temp_dir("outfolder-guard");
  const auto fresh = dir / "fresh";
  try {
    fulcrum::OutputFolder out(fresh.string(), false);
    fulcrum::write_text_file(out.file("half.json"), "{}\n");
    CHECK(fs::exists(fresh / fulcrum::kIncompleteMarker));
    throw InputError("input.fits", "bad input discovered half way");
  } catch (const InputError&) {
  }
  CHECK_FALSE(fs::exists(fresh));  // it made the folder, so it removes it

  // An existing folder (with --force): only what the failed run added goes.
  const auto old = dir / "old";
  touch(old / "notes.txt", "mine\n");
  try {
    fulcrum::OutputFolder out(old.string(), true);
    fs::create_directories(old / "figures");
    fulcrum::write_text_file(out.file("figures/a.svg"), "<svg/>\n");
    throw InputError("input.fits", "bad");
  } catch (const InputError&) {
  }
  CHECK(fs::exists(old / "notes.txt"));
  CHECK(slurp(old / "notes.txt") == "mine\n");
  CHECK_FALSE(fs::exists(old / "figures"));
  CHECK_FALSE(fs::exists(old / fulcrum::kIncompleteMarker));

  {
    fulcrum::OutputFolder out(fresh.string(), false);
    fulcrum::write_text_file(out.file("report.json"), "{}\n");
    out.keep();
  }
  CHECK(fs::exists(fresh / "report.json"));
  CHECK_FALSE(fs::exists(fresh / fulcrum::kIncompleteMarker));
}

TEST_CASE("an interrupted run's folder may be reused without force", "[io][output-folder]") {
  const auto dir = fulcrum::test::temp_dir("outfolder-interrupted") / "run";
  touch(dir / "report.json");
  touch(dir / fulcrum::kIncompleteMarker);
  CHECK_NOTHROW(fulcrum::prepare_output_folder(dir.string(), false));
}
