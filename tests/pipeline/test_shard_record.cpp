// Shards safe to run again (io/staged_folder.hpp) and merge's refusal
// of a missing or unfinished shard (pipeline/shard_record.hpp): a shard
// whose earlier run was killed (its staging folder left with partial
// files, an old galaxy folder with a stray file) gives, run again, the same
// files as a shard run once; merge names the shard that is missing or did
// not finish, in one line with exit 2.
#include <catch2/catch.hpp>

#include <filesystem>
#include <fstream>

#include "../support/test_support.hpp"
#include "fulcrum/pipeline/shard_record.hpp"
#include "pipeline_fixtures.hpp"

using namespace fulcrum;
namespace fs = std::filesystem;

namespace {

const char* kEnv = "SOURCE_DATE_EPOCH=1700000000 OMP_NUM_THREADS=1 ";

test::CommandResult run_cmd(const std::string& args) {
  return test::run_shell(std::string(kEnv) + FULCRUM_BINARY + " --quiet " + args);
}

std::vector<std::string> files_of(const fs::path& dir) {
  std::vector<std::string> f;
  for (const auto& e : fs::recursive_directory_iterator(dir))
    if (e.is_regular_file()) f.push_back(fs::relative(e.path(), dir).string());
  std::sort(f.begin(), f.end());
  return f;
}

}  // namespace

TEST_CASE("a shard run again after a kill leaves the files of a shard run once", "[pipeline][cluster]") {
  auto dir = test::temp_dir("requeue");
  const std::string manifest = test::write_tiny_sample(dir, 3);
  const std::string shard = " --shard 1/2 --draws 300 --calibrate 0 --no-figures";
  REQUIRE(run_cmd("run " + manifest + shard + " --out " + (dir / "once").string()).exit_code == 0);
  // What a run killed mid-way leaves: its staging folder beside the output
  // folder (io/staged_folder.hpp) with part of a galaxy, and (from an
  // earlier complete run) a galaxy folder with a stray file and a shard
  // record that must not survive.
  const fs::path again = dir / "again", staging = dir / ".again.fulcrum-staging-999999";
  fs::create_directories(staging / "tiny-1");
  std::ofstream(staging / "tiny-1" / "report.json") << "{\"trunc";
  fs::create_directories(again / "tiny-3");
  std::ofstream(again / "tiny-3" / "stray.txt") << "left by an older run\n";
  std::ofstream(again / "shard.json") << "{}";
  auto refused = run_cmd("merge " + again.string() + " --out " + (dir / "m0").string());
  CHECK(refused.exit_code == 2);
  CHECK(refused.err.find(again.string() + ": holds an unfinished run") != std::string::npos);
  REQUIRE(run_cmd("--force run " + manifest + shard + " --out " + again.string()).exit_code == 0);
  CHECK_FALSE(fs::exists(staging));
  const auto a = files_of(dir / "once"), b = files_of(again);
  REQUIRE(a == b);
  for (const auto& f : a) {
    INFO(f);
    CHECK(test::slurp(dir / "once" / f) == test::slurp(again / f));
  }
  const auto rec = pipeline::read_shard_record(again.string());
  REQUIRE(rec);
  CHECK(rec->index == 1);
  CHECK(rec->count == 2);
  CHECK(rec->galaxies == std::vector<std::string>{"tiny-1", "tiny-3"});
}

TEST_CASE("merge refuses a missing or unfinished shard, naming it", "[pipeline][cluster]") {
  auto dir = test::temp_dir("merge-refusal");
  const std::string manifest = test::write_tiny_sample(dir, 4);
  for (int i = 1; i <= 3; ++i)
    REQUIRE(run_cmd("run " + manifest + " --shard " + std::to_string(i) + "/3 --draws 300 --calibrate 0 "
                    "--no-figures --out " + (dir / ("s" + std::to_string(i))).string()).exit_code == 0);
  const std::string s1 = (dir / "s1").string(), s2 = (dir / "s2").string(), s3 = (dir / "s3").string();
  auto one_line = [](const test::CommandResult& r) {
    return r.exit_code == 2 && std::count(r.err.begin(), r.err.end(), '\n') == 1;
  };
  auto missing = run_cmd("merge " + s1 + " " + s3 + " --out " + (dir / "m1").string());
  CHECK(one_line(missing));
  CHECK(missing.err.find("shard 2/3 is missing") != std::string::npos);
  CHECK(!fs::exists(dir / "m1" / "sample.json"));
  // Shard 2 lost a galaxy's report after it finished.
  fs::remove(dir / "s2" / "tiny-2" / "report.json");
  auto lacking = run_cmd("merge " + s1 + " " + s2 + " " + s3 + " --out " + (dir / "m2").string());
  CHECK(one_line(lacking));
  CHECK(lacking.err.find(s2 + ": shard 2/3 lacks tiny-2/report.json") != std::string::npos);
  // Shard 3 never ran: no folder.
  fs::remove_all(dir / "s3");
  auto never = run_cmd("merge " + s1 + " " + s3 + " --out " + (dir / "m3").string());
  CHECK(one_line(never));
  CHECK(never.err.find(s3 + ": is not a folder") != std::string::npos);
  // The same shard twice.
  auto twice = run_cmd("merge " + s1 + " " + s1 + " --out " + (dir / "m4").string());
  CHECK(one_line(twice));
  CHECK(twice.err.find("is shard 1/3, as is") != std::string::npos);
}
