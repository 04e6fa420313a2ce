// Output safety of the folder-writing commands, end to end through the
// executable (io/staged_folder.hpp): an injected write failure (a file-size
// limit, `ulimit -f`, so that a write fails with EFBIG part way through the
// outputs) and a crash in the middle of writing (the same limit with SIGXFSZ
// at its default action, which kills the process like SIGKILL) leave no
// --out at all; a second run while one holds the folder's lock is refused; a
// folder with any content needs --force, which replaces it whole without
// following a link inside it. Invented tiny discs (pipeline_fixtures.hpp).
#include <catch2/catch.hpp>

#include <fstream>

#include "../pipeline/pipeline_fixtures.hpp"
#include "../support/test_support.hpp"
#include "fulcrum/io/staged_folder.hpp"

namespace fs = std::filesystem;
using fulcrum::test::run_shell;

namespace {

std::string fulcrum_cmd(const std::string& args) {
  return std::string("OMP_NUM_THREADS=1 ") + FULCRUM_BINARY + " --quiet " + args;
}

std::string analyse_args(const fs::path& dir, const fs::path& out) {
  return "analyse --velocity " + (dir / "disc" / "vel.fits").string() + " --intensity " +
         (dir / "disc" / "mom0.fits").string() + " --rms 0.01 --tail-pa 300 --draws 200 --calibrate 0 --out " +
         out.string();
}

std::vector<std::string> entries(const fs::path& dir) {
  std::vector<std::string> out;
  for (const auto& e : fs::directory_iterator(dir)) out.push_back(e.path().filename().string());
  std::sort(out.begin(), out.end());
  return out;
}

fs::path disc_dir(const std::string& tag) {
  auto dir = fulcrum::test::temp_dir(tag);
  fulcrum::test::TinyDisc d;
  d.name = "disc";
  fulcrum::test::write_tiny_disc(dir / "disc", d);
  return dir;
}

}  // namespace

TEST_CASE("analyse: a write that fails part way leaves no output folder", "[reliability][output-safety]") {
  const auto dir = disc_dir("safety-write-fail");
  const auto out = dir / "res";
  // The complete run, for the size of its files.
  auto full = run_shell(fulcrum_cmd(analyse_args(dir, dir / "full")));
  INFO(full.err);
  REQUIRE(full.exit_code == 0);
  std::uintmax_t largest = 0;
  int files = 0;
  for (const auto& e : fs::recursive_directory_iterator(dir / "full"))
    if (e.is_regular_file()) largest = std::max(largest, e.file_size()), ++files;
  REQUIRE(files > 3);
  REQUIRE(largest > 8192);
  // A limit of 8 kB: the small files are written, the first larger one fails.
  // SIGXFSZ ignored: write() returns EFBIG and the writer must notice.
  auto failed = run_shell("trap '' XFSZ; ulimit -f 8; " + fulcrum_cmd(analyse_args(dir, out)));
  INFO(failed.err);
  CHECK(failed.exit_code != 0);
  CHECK_FALSE(fs::exists(out));
  CHECK(entries(dir) == std::vector<std::string>{"disc", "full"});  // no staging left, no lock
}

TEST_CASE("analyse: killed while writing, it leaves no output folder and the next run is clean",
          "[reliability][output-safety]") {
  const auto dir = disc_dir("safety-killed");
  const auto out = dir / "res";
  // SIGXFSZ at its default action kills the process in the middle of a write.
  auto killed = run_shell("ulimit -f 8; " + fulcrum_cmd(analyse_args(dir, out)) + "; echo status=$?");
  INFO(killed.out << killed.err);
  CHECK(killed.out.find("status=153") != std::string::npos);  // 128 + SIGXFSZ (25)
  CHECK_FALSE(fs::exists(out));
  // The next run needs no --force (--out does not exist), removes the
  // leftovers and gives the complete folder.
  auto again = run_shell(fulcrum_cmd(analyse_args(dir, out)));
  INFO(again.err);
  REQUIRE(again.exit_code == 0);
  CHECK(fs::exists(out / "report.json"));
  CHECK(entries(dir) == std::vector<std::string>{"disc", "res"});
}

TEST_CASE("analyse: a second run into a folder being written is refused", "[reliability][output-safety]") {
  const auto dir = disc_dir("safety-lock");
  const auto out = dir / "res";
  fulcrum::StagedFolder first(out.string(), false);  // this process is the first writer
  auto second = run_shell(fulcrum_cmd(analyse_args(dir, out)) + " --force");
  CHECK(second.exit_code == 2);
  CHECK(second.err.find("another fulcrum run is writing into this folder") != std::string::npos);
  CHECK(second.err.find(out.string()) != std::string::npos);
}

TEST_CASE("analyse: any content needs --force, which replaces the folder whole and follows no link",
          "[reliability][output-safety]") {
  const auto dir = disc_dir("safety-force");
  const auto out = dir / "res";
  fs::create_directories(dir / "elsewhere");
  std::ofstream(dir / "elsewhere" / "intensity.svg") << "mine\n";
  fs::create_directories(out);
  std::ofstream(out / "report.html") << "old page\n";
  fs::create_directory_symlink(dir / "elsewhere", out / "figures");  // figures/ is a link to a folder outside
  auto refused = run_shell(fulcrum_cmd(analyse_args(dir, out)));
  CHECK(refused.exit_code == 2);
  CHECK(refused.err.find("holds files") != std::string::npos);
  CHECK(fulcrum::test::slurp(out / "report.html") == "old page\n");
  auto forced = run_shell(fulcrum_cmd(analyse_args(dir, out)) + " --force");
  INFO(forced.err);
  REQUIRE(forced.exit_code == 0);
  CHECK(fs::is_directory(fs::symlink_status(out / "figures")));  // a real folder now
  CHECK(fs::exists(out / "figures" / "intensity.svg"));
  CHECK(fulcrum::test::slurp(dir / "elsewhere" / "intensity.svg") == "mine\n");  // untouched
  CHECK(entries(dir / "elsewhere") == std::vector<std::string>{"intensity.svg"});
  // An input inside --out: refused (a forced run would remove it).
  fs::copy_file(dir / "disc" / "vel.fits", out / "vel.fits");
  auto inside = run_shell(fulcrum_cmd("analyse --velocity " + (out / "vel.fits").string() + " --intensity " +
                                      (dir / "disc" / "mom0.fits").string() +
                                      " --rms 0.01 --tail-pa 300 --draws 200 --calibrate 0 --force --out " +
                                      out.string()));
  CHECK(inside.exit_code == 2);
  CHECK(inside.err.find("lies in the output folder --out") != std::string::npos);
}

TEST_CASE("run --force replaces the whole output folder: nothing of an earlier run or anyone else is left",
          "[reliability][output-safety]") {
  const auto dir = fulcrum::test::temp_dir("safety-run-force");
  const std::string manifest = fulcrum::test::write_tiny_sample(dir, 2);
  const auto out = dir / "sample";
  // What an earlier run of a larger sample and a person left there.
  fs::create_directories(out / "tiny-9" / "figures");
  std::ofstream(out / "tiny-9" / "report.json") << "{}\n";
  std::ofstream(out / "notes.txt") << "mine\n";
  std::ofstream(out / "robustness.csv") << "old table\n";
  const std::string run = "run " + manifest + " --no-figures --out " + out.string();
  auto refused = run_shell(fulcrum_cmd(run));
  CHECK(refused.exit_code == 2);
  CHECK(refused.err.find("holds files") != std::string::npos);
  CHECK(fulcrum::test::slurp(out / "robustness.csv") == "old table\n");
  auto forced = run_shell(fulcrum_cmd("--force " + run));
  INFO(forced.err);
  REQUIRE(forced.exit_code == 0);
  CHECK(entries(out) == std::vector<std::string>{"report.html", "robustness-wide.tex", "robustness.csv",
                                                 "robustness.ecsv", "robustness.fits", "robustness.md",
                                                 "robustness.tex", "sample.json", "tiny-1", "tiny-2"});
  CHECK(entries(dir) == std::vector<std::string>{"sample", "sample.toml", "tiny-1", "tiny-2"});
  // No report names the staging folder the run wrote into.
  for (const auto& e : fs::recursive_directory_iterator(out))
    if (e.is_regular_file()) CHECK(fulcrum::test::slurp(e.path()).find("fulcrum-staging") == std::string::npos);
  // The manifest inside --out would be removed by --force: refused.
  fs::copy_file(manifest, out / "inside.toml");
  auto inside = run_shell(fulcrum_cmd("--force run " + (out / "inside.toml").string() + " --out " + out.string()));
  CHECK(inside.exit_code == 2);
  CHECK(inside.err.find("lies in the output folder --out") != std::string::npos);
}
