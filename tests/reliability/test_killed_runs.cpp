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
#include <fstream>
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

// Relative path -> bytes of every regular file under dir (a file above
// 1 MB, the merge tests' padding, by its size), hidden entries left out
// when `hidden` is false.
std::map<std::string, std::string> tree(const fs::path& dir, bool hidden = true) {
  std::map<std::string, std::string> t;
  for (auto it = fs::recursive_directory_iterator(dir); it != fs::recursive_directory_iterator(); ++it) {
    if (!hidden && it->path().filename().string()[0] == '.') {
      if (it->is_directory()) it.disable_recursion_pending();
      continue;
    }
    if (!it->is_regular_file()) continue;
    const std::string rel = fs::relative(it->path(), dir).string();
    t[rel] = it->file_size() > (1u << 20) ? std::to_string(it->file_size()) + " bytes"
                                          : fulcrum::test::slurp(it->path());
  }
  return t;
}

// The entry of `dir` whose name starts with `prefix`, or an empty path.
fs::path entry_starting(const fs::path& dir, const std::string& prefix) {
  std::error_code ec;
  for (auto it = fs::directory_iterator(dir, ec); !ec && it != fs::directory_iterator(); it.increment(ec))
    if (it->path().filename().string().rfind(prefix, 0) == 0) return it->path();
  return {};
}

// The staging folder of a run into `out` (PARENT/.NAME.fulcrum-staging-PID),
// or an empty path while there is none.
fs::path staging_of(const fs::path& out) {
  return entry_starting(out.parent_path(), "." + out.filename().string() + ".fulcrum-staging-");
}

// The staging folder of a merge into a folder that holds its shards
// (OUT/.fulcrum-staging-PID, io/staged_entries.hpp), or an empty path.
fs::path inner_staging_of(const fs::path& out) { return entry_starting(out, ".fulcrum-staging-"); }

// Two shard runs of a two-galaxy sample into `s1`, `s2`; a 64 MB file in
// one galaxy folder keeps a merge copying long after its staging folder
// appears (the kill must land mid-work).
void two_shards(const fs::path& dir, const fs::path& s1, const fs::path& s2) {
  const std::string manifest = fulcrum::test::write_tiny_sample(dir, 2, 7, 300);
  for (const auto& [i, s] : {std::pair{1, s1}, std::pair{2, s2}}) {
    auto r = run_shell(std::string("OMP_NUM_THREADS=1 ") + FULCRUM_BINARY + " --quiet run " + manifest +
                       " --shard " + std::to_string(i) + "/2 --no-figures --out " + s.string());
    INFO(r.err);
    REQUIRE(r.exit_code == 0);
  }
  std::ofstream pad(s1 / "tiny-1" / "padding.bin", std::ios::binary);
  const std::string block(1 << 20, '\0');
  for (int i = 0; i < 64; ++i) pad << block;
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

TEST_CASE("merge killed with SIGKILL mid-work leaves no output folder, and the next merge needs no --force",
          "[reliability][output-safety][sigkill][merge]") {
  const auto dir = fulcrum::test::temp_dir("sigkill-merge");
  const auto s1 = dir / "s1", s2 = dir / "s2", out = dir / "merged";
  two_shards(dir, s1, s2);
  const std::vector<std::string> merge_args{"merge", s1.string(), s2.string(), "--out", out.string()};
  const Killed k = start_and_kill(merge_args, [&] { return !staging_of(out).empty(); });
  REQUIRE(k.seen_staging);
  CHECK(k.by_sigkill);
  CHECK_FALSE(fs::exists(out));
  auto again = run_shell(fulcrum_cmd(joined(merge_args)));
  INFO(again.err);
  REQUIRE(again.exit_code == 0);
  CHECK(fs::exists(out / "sample.json"));
  CHECK(fs::file_size(out / "tiny-1" / "padding.bin") == 64u << 20);
  CHECK(entries(dir) == std::vector<std::string>{"merged", "s1", "s2", "sample.toml", "tiny-1", "tiny-2"});
}

TEST_CASE("merge into the folder that holds its shards, killed with SIGKILL, leaves no sample.json or the old one whole",
          "[reliability][output-safety][sigkill][merge][cluster]") {
  // The Slurm layout (docs/cluster.md): OUT/shards/I, merged into OUT.
  const auto dir = fulcrum::test::temp_dir("sigkill-merge-inside");
  const auto out = dir / "virgo", s1 = out / "shards" / "1", s2 = out / "shards" / "2";
  fs::create_directories(out / "shards");
  two_shards(dir, s1, s2);
  // One time stamp for every merge, so two merges write the same bytes.
  struct Epoch {
    Epoch() { ::setenv("SOURCE_DATE_EPOCH", "1700000000", 1); }
    ~Epoch() { ::unsetenv("SOURCE_DATE_EPOCH"); }
  } epoch;
  const auto shards_before = tree(out / "shards");
  const std::vector<std::string> merge_args{"--force", "merge", s1.string(), s2.string(), "--out", out.string()};
  auto staged = [&] { return !inner_staging_of(out).empty(); };
  // A first merge killed: no sample.json, the shards untouched.
  Killed k = start_and_kill(merge_args, staged);
  REQUIRE(k.seen_staging);
  CHECK(k.by_sigkill);
  CHECK_FALSE(fs::exists(out / "sample.json"));
  CHECK(tree(out / "shards") == shards_before);
  // The next merge succeeds, removes the leftover and writes what a merge
  // into a fresh folder writes.
  auto again = run_shell(fulcrum_cmd(joined(merge_args)));
  INFO(again.err);
  REQUIRE(again.exit_code == 0);
  CHECK(fs::exists(out / "sample.json"));
  CHECK(inner_staging_of(out).empty());
  auto fresh = run_shell(fulcrum_cmd("merge " + s1.string() + " " + s2.string() + " --out " + (dir / "fresh").string()));
  REQUIRE(fresh.exit_code == 0);
  auto products = tree(out, false);
  for (auto it = products.begin(); it != products.end();)
    it = it->first.rfind("shards/", 0) == 0 ? products.erase(it) : std::next(it);
  CHECK(products == tree(dir / "fresh"));
  CHECK(tree(out / "shards") == shards_before);
  // Without --force an earlier sample is not replaced.
  auto refused = run_shell(fulcrum_cmd(joined({"merge", s1.string(), s2.string(), "--out", out.string()})));
  CHECK(refused.exit_code == 2);
  CHECK(refused.err.find("already holds a sample run") != std::string::npos);
  // A merge killed over that one: the earlier sample whole (killed before
  // its commit) or no sample.json (killed during it), never a mix.
  const auto before = tree(out, false);
  k = start_and_kill(merge_args, staged);
  REQUIRE(k.seen_staging);
  CHECK(k.by_sigkill);
  if (fs::exists(out / "sample.json")) CHECK(tree(out, false) == before);
  CHECK(tree(out / "shards") == shards_before);
  auto last = run_shell(fulcrum_cmd(joined(merge_args)));
  INFO(last.err);
  REQUIRE(last.exit_code == 0);
  CHECK(tree(out, false) == before);  // the same products again
  for (const auto& e : fs::directory_iterator(out)) CHECK(e.path().filename().string()[0] != '.');
}
