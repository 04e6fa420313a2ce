// SIGKILL in the middle of the work (io/staged_folder.hpp): `analyse` and
// `run` are started as child processes on invented tiny discs and killed
// with SIGKILL once their private staging folder beside --out has appeared
// (polled in a bounded loop; nothing is timed). Afterwards --out is either
// missing (a first run) or the earlier folder whole (a --force run), never
// half-written, and the next run into the same --out succeeds without
// --force and leaves only --out beside the inputs.
#include <catch2/catch.hpp>

#include <csignal>
#include <spawn.h>
#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <functional>
#include <map>
#include <chrono>
#include <thread>

#include "../pipeline/pipeline_fixtures.hpp"
#include "../support/test_support.hpp"

extern char** environ;

namespace fs = std::filesystem;
using fulcrum::test::run_shell;

namespace {

std::vector<std::string> entries(const fs::path& dir) {
  std::vector<std::string> out;
  for (const auto& e : fs::directory_iterator(dir)) out.push_back(e.path().filename().string());
  std::sort(out.begin(), out.end());
  return out;
}

// Relative path -> bytes of every regular file under dir.
std::map<std::string, std::string> tree(const fs::path& dir) {
  std::map<std::string, std::string> t;
  for (const auto& e : fs::recursive_directory_iterator(dir))
    if (e.is_regular_file()) t[fs::relative(e.path(), dir).string()] = fulcrum::test::slurp(e.path());
  return t;
}

// The staging folder of a run into `out` (PARENT/.NAME.fulcrum-staging-PID),
// or an empty path while there is none.
fs::path staging_of(const fs::path& out) {
  const std::string prefix = "." + out.filename().string() + ".fulcrum-staging-";
  std::error_code ec;
  for (auto it = fs::directory_iterator(out.parent_path(), ec); !ec && it != fs::directory_iterator();
       it.increment(ec))
    if (it->path().filename().string().rfind(prefix, 0) == 0) return it->path();
  return {};
}

struct Killed {
  bool seen_staging = false;  // the staging folder appeared before the child ended
  bool by_sigkill = false;    // the child ended by our SIGKILL
};

// Start fulcrum with `args`, wait until `ready` (polled every millisecond,
// at most `max_polls` times, while the child lives), SIGKILL it, reap it.
Killed start_and_kill(const std::vector<std::string>& args, const std::function<bool()>& ready,
                      int max_polls = 60000) {
  std::vector<std::string> argv_s{FULCRUM_BINARY, "--quiet"};
  argv_s.insert(argv_s.end(), args.begin(), args.end());
  std::vector<char*> argv;
  for (auto& a : argv_s) argv.push_back(a.data());
  argv.push_back(nullptr);
  ::setenv("OMP_NUM_THREADS", "1", 1);
  pid_t pid = 0;
  REQUIRE(::posix_spawn(&pid, FULCRUM_BINARY, nullptr, nullptr, argv.data(), environ) == 0);
  Killed k;
  int status = 0;
  for (int i = 0; i < max_polls; ++i) {
    if (::waitpid(pid, &status, WNOHANG) == pid) return k;  // ended on its own: not killed mid-work
    if (ready()) {
      k.seen_staging = true;
      break;
    }
    std::this_thread::sleep_for(std::chrono::milliseconds(1));
  }
  ::kill(pid, SIGKILL);
  REQUIRE(::waitpid(pid, &status, 0) == pid);
  k.by_sigkill = WIFSIGNALED(status) && WTERMSIG(status) == SIGKILL;
  return k;
}

std::string fulcrum_cmd(const std::string& args) {
  return std::string("OMP_NUM_THREADS=1 ") + FULCRUM_BINARY + " --quiet " + args;
}

std::vector<std::string> analyse_args(const fs::path& dir, const fs::path& out) {
  // A calibration of a few mocks keeps the child busy well after its
  // staging folder appears (the kill must land mid-work, not after it).
  return {"analyse",  "--velocity", (dir / "disc" / "vel.fits").string(), "--intensity",
          (dir / "disc" / "mom0.fits").string(), "--rms", "0.01", "--tail-pa", "300", "--draws", "200",
          "--calibrate", "6", "--out", out.string()};
}

std::string joined(const std::vector<std::string>& v) {
  std::string s;
  for (const auto& a : v) s += " " + a;
  return s;
}

}  // namespace

TEST_CASE("analyse killed with SIGKILL mid-work leaves no output folder, and the next run needs no --force",
          "[reliability][output-safety][sigkill]") {
  const auto dir = fulcrum::test::temp_dir("sigkill-analyse");
  fulcrum::test::TinyDisc d;
  d.name = "disc";
  fulcrum::test::write_tiny_disc(dir / "disc", d);
  const auto out = dir / "res";
  const Killed k = start_and_kill(analyse_args(dir, out), [&] { return !staging_of(out).empty(); });
  REQUIRE(k.seen_staging);
  CHECK(k.by_sigkill);
  CHECK_FALSE(fs::exists(out));  // never a half-written --out
  // The next run: no --force needed, the killed run's staging folder removed.
  auto again = run_shell(fulcrum_cmd(joined(analyse_args(dir, out))));
  INFO(again.err);
  REQUIRE(again.exit_code == 0);
  CHECK(fs::exists(out / "report.json"));
  CHECK(entries(dir) == std::vector<std::string>{"disc", "res"});
}

TEST_CASE("run killed with SIGKILL mid-work: no folder or the old one whole, and the next run is clean",
          "[reliability][output-safety][sigkill]") {
  const auto dir = fulcrum::test::temp_dir("sigkill-run");
  const std::string manifest = fulcrum::test::write_tiny_sample(dir, 3, 7, 300, 4);
  const auto out = dir / "sample";
  const std::vector<std::string> run_args{"run", manifest, "--threads", "1", "--no-figures", "--out", out.string()};
  // Killed once its first galaxy is in the staging folder (mid-sample).
  auto first_galaxy_staged = [&] {
    const fs::path s = staging_of(out);
    return !s.empty() && fs::exists(s / "tiny-1" / "report.json");
  };
  Killed k = start_and_kill(run_args, first_galaxy_staged);
  REQUIRE(k.seen_staging);
  CHECK(k.by_sigkill);
  CHECK_FALSE(fs::exists(out));
  // A merge of the killed folder is refused: it names the unfinished run.
  auto merged = run_shell(fulcrum_cmd("merge " + out.string() + " --out " + (dir / "merged").string()));
  CHECK(merged.exit_code == 2);
  CHECK(merged.err.find("holds an unfinished run") != std::string::npos);
  // The next run needs no --force and leaves only its folder.
  auto again = run_shell(fulcrum_cmd(joined(run_args)));
  INFO(again.err);
  REQUIRE(again.exit_code == 0);
  CHECK(fs::exists(out / "sample.json"));
  const auto before = tree(out);
  CHECK(entries(dir) == std::vector<std::string>{"sample", "sample.toml", "tiny-1", "tiny-2", "tiny-3"});
  // A --force run killed mid-work leaves the earlier folder whole.
  std::vector<std::string> forced{"--force"};
  forced.insert(forced.end(), run_args.begin(), run_args.end());
  k = start_and_kill(forced, first_galaxy_staged);
  REQUIRE(k.seen_staging);
  CHECK(k.by_sigkill);
  CHECK(tree(out) == before);
}
