// Output folders on file systems that refuse writes, made for real in a
// private mount namespace (`unshare -m`, util-linux): a read-only tmpfs
// (EROFS, which refuses root too, unlike file modes) and a tmpfs too small
// for the outputs (ENOSPC, a full disk). Each refusal is one line "fulcrum:
// PATH: reason" naming the folder or file and the system's reason, exit 2,
// and nothing is left on the file system (io/staged_folder.hpp). The mounts
// live only inside the shell that `unshare` starts, so nothing outside the
// test sees them. Where the machine gives no mount rights the cases warn and
// pass without checking (docs/reliability.md says which were run).
#include <catch2/catch.hpp>

#include <algorithm>
#include <sstream>

#include "../pipeline/pipeline_fixtures.hpp"
#include "../support/test_support.hpp"

namespace fs = std::filesystem;
using fulcrum::test::error_lines;
using fulcrum::test::run_shell;

namespace {

bool mounts_allowed() {
  static const bool ok = [] {
    const auto m = fulcrum::test::temp_dir("mount-probe");
    return run_shell("unshare -m sh -c 'mount -t tmpfs -o size=64k tmpfs " + m.string() + "' 2>/dev/null")
               .exit_code == 0;
  }();
  return ok;
}

// Runs `script` in a private mount namespace with a tmpfs of `size` at
// `mnt` (read-only when `read_only`); `script` sees it as $M.
fulcrum::test::CommandResult in_tmpfs(const fs::path& mnt, const std::string& size, bool read_only,
                                      const std::string& script) {
  std::string s = "M=" + mnt.string() + "; mount -t tmpfs -o size=" + size + " tmpfs \"$M\" || exit 90; ";
  if (read_only) s += "mount -o remount,ro \"$M\" || exit 91; ";
  s += script;
  std::string quoted;
  for (char c : s) quoted += c == '\'' ? std::string("'\\''") : std::string(1, c);
  return run_shell("unshare -m sh -c '" + quoted + "'");
}

std::string fulcrum_cmd(const std::string& args) {
  return std::string("OMP_NUM_THREADS=1 ") + FULCRUM_BINARY + " --quiet " + args;
}

// What the script prints after fulcrum: its status, then every name left
// under the mount (`find`), so the check sees the file system the test
// cannot see from outside the namespace.
const char* kAfter = "; echo \"status=$?\"; find \"$M\" -mindepth 1 | sed \"s|^$M/|left: |\"";

std::string analyse_args(const fs::path& disc, const std::string& out, const std::string& extra = "") {
  return "analyse --velocity " + (disc / "vel.fits").string() + " --intensity " + (disc / "mom0.fits").string() +
         " --rms 0.01 --tail-pa 300 --draws 200 --calibrate 0 " + extra + "--out " + out;
}

}  // namespace

TEST_CASE("read-only output file system: one line with the path and the reason, exit 2",
          "[reliability][output-safety][mounts]") {
  if (!mounts_allowed()) {
    WARN("no mount rights here (unshare -m): the read-only cases are not run");
    return;
  }
  const auto dir = fulcrum::test::temp_dir("mount-ro");
  fulcrum::test::TinyDisc d;
  d.name = "disc";
  fulcrum::test::write_tiny_disc(dir / "disc", d);
  const fs::path mnt = dir / "mnt";
  fs::create_directories(mnt);
  struct Case {
    std::string what, command, names;
  };
  const std::string manifest = fulcrum::test::write_tiny_sample(dir, 1);
  const std::vector<Case> cases{
      {"analyse into the read-only folder", analyse_args(dir / "disc", "$M/res"), mnt.string()},
      {"analyse into a missing folder under it", analyse_args(dir / "disc", "$M/a/b/res"), mnt.string()},
      {"run", "run " + manifest + " --no-figures --out $M/sample", mnt.string()},
      {"kinematics --json", "kinematics --velocity " + (dir / "disc" / "vel.fits").string() + " --json $M/k.json",
       "k.json"},
      {"synth", "synth --out $M/mock", mnt.string()},
  };
  for (const auto& c : cases) {
    INFO(c.what);
    const auto r = in_tmpfs(mnt, "1m", true, fulcrum_cmd(c.command) + kAfter);
    INFO(r.out << r.err);
    REQUIRE(r.exit_code == 0);  // the mount itself worked
    CHECK(r.out.find("status=2\n") != std::string::npos);
    const auto lines = error_lines(r.err);
    REQUIRE(lines.size() == 1);
    CHECK(lines[0].find(c.names) != std::string::npos);
    CHECK(lines[0].find("Read-only file system") != std::string::npos);
    CHECK(r.out.find("left: ") == std::string::npos);
  }
}

TEST_CASE("a full output file system (a small tmpfs): one line naming the file, exit 2, nothing left",
          "[reliability][output-safety][mounts]") {
  if (!mounts_allowed()) {
    WARN("no mount rights here (unshare -m): the full-disk cases are not run");
    return;
  }
  const auto dir = fulcrum::test::temp_dir("mount-full");
  fulcrum::test::TinyDisc d;
  d.name = "disc";
  fulcrum::test::write_tiny_disc(dir / "disc", d);
  const std::string manifest = fulcrum::test::write_tiny_sample(dir, 2);
  const fs::path mnt = dir / "mnt";
  fs::create_directories(mnt);
  // 64 kB: the small files fit, the figures and tables do not.
  const std::vector<std::pair<std::string, std::string>> cases{
      {"analyse", analyse_args(dir / "disc", "$M/res")},
      {"run", "run " + manifest + " --out $M/sample"},
      {"demo", "demo --draws 200 --out $M/demo"},
  };
  for (const auto& [what, command] : cases) {
    INFO(what);
    const auto r = in_tmpfs(mnt, "64k", false, fulcrum_cmd(command) + kAfter);
    INFO(r.out << r.err);
    REQUIRE(r.exit_code == 0);
    CHECK(r.out.find("status=2\n") != std::string::npos);
    const auto lines = error_lines(r.err);
    REQUIRE(lines.size() == 1);
    CHECK(lines[0].find(mnt.string()) != std::string::npos);
    CHECK(lines[0].find("No space left on device") != std::string::npos);
    CHECK(lines[0].find("fulcrum-staging") == std::string::npos);  // the path in --out, not the staging folder
    CHECK(r.out.find("left: ") == std::string::npos);
  }
}

TEST_CASE("merge into a full output file system: one line naming the file, exit 2, --out as it was",
          "[reliability][output-safety][mounts][merge]") {
  if (!mounts_allowed()) {
    WARN("no mount rights here (unshare -m): the full-disk merge cases are not run");
    return;
  }
  const auto dir = fulcrum::test::temp_dir("mount-full-merge");
  const std::string manifest = fulcrum::test::write_tiny_sample(dir, 2, 7, 300);
  for (int i = 1; i <= 2; ++i) {
    auto r = run_shell(fulcrum_cmd("run " + manifest + " --shard " + std::to_string(i) + "/2 --out " +
                                   (dir / ("s" + std::to_string(i))).string()));
    INFO(r.err);
    REQUIRE(r.exit_code == 0);
  }
  const std::string s1 = (dir / "s1").string(), s2 = (dir / "s2").string();
  const fs::path mnt = dir / "mnt";
  fs::create_directories(mnt);
  auto check_one_line = [&](const fulcrum::test::CommandResult& r) {
    INFO(r.out << r.err);
    REQUIRE(r.exit_code == 0);  // the mount and the set-up worked
    CHECK(r.out.find("status=2\n") != std::string::npos);
    const auto lines = error_lines(r.err);
    REQUIRE(lines.size() == 1);
    CHECK(lines[0].find(mnt.string()) != std::string::npos);
    CHECK(lines[0].find("No space left on device") != std::string::npos);
    CHECK(lines[0].find("fulcrum-staging") == std::string::npos);
  };
  {
    INFO("a fresh --out on a 64 kB file system");
    const auto r = in_tmpfs(mnt, "64k", false, fulcrum_cmd("merge " + s1 + " " + s2 + " --out $M/merged") + kAfter);
    check_one_line(r);
    CHECK(r.out.find("left: ") == std::string::npos);
  }
  // An earlier merge, then the disk filled but for 16 kB and the merge run
  // again with --force: --out keeps every file of the earlier merge, and no
  // hidden folder is left. Listings with digests go to files outside the
  // mount (the namespace's mounts vanish with its shell).
  const std::string listing = "(cd \"$OUT\" && find . | LC_ALL=C sort && find . -type f -exec md5sum {} + | LC_ALL=C sort -k2)";
  const std::string fill = "dd if=/dev/zero of=$M/fill bs=4096 2>/dev/null; truncate -s -16K $M/fill || exit 93; ";
  struct Layout {
    std::string what, setup, merge;
  };
  const std::vector<Layout> layouts{
      {"--out replaced whole (it holds no shard)", "OUT=$M/merged; ",
       "merge " + s1 + " " + s2 + " --out $OUT"},
      {"--out holding the shards (the Slurm layout)",
       "OUT=$M/virgo; mkdir -p $OUT/shards && cp -a " + s1 + " $OUT/shards/1 && cp -a " + s2 +
           " $OUT/shards/2 || exit 94; ",
       "merge $OUT/shards/1 $OUT/shards/2 --out $OUT"},
  };
  for (const auto& l : layouts) {
    INFO(l.what);
    const fs::path before = dir / "before.txt", after = dir / "after.txt";
    const std::string script = l.setup + fulcrum_cmd("--force " + l.merge) + " >/dev/null || exit 95; " + listing +
                               " > " + before.string() + "; " + fill + fulcrum_cmd("--force " + l.merge) +
                               "; echo \"status=$?\"; " + listing + " > " + after.string();
    const auto r = in_tmpfs(mnt, "32m", false, script);
    check_one_line(r);
    const std::string b = fulcrum::test::slurp(before), a = fulcrum::test::slurp(after);
    CHECK(b.find("./sample.json\n") != std::string::npos);
    CHECK(a == b);
  }
}
