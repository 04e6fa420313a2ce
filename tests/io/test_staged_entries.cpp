// Products staged inside an output folder that holds other things
// (include/fulcrum/io/staged_entries.hpp): nothing changes in OUT before
// commit(); commit() replaces the staged entries, the marker last, and
// leaves every other entry of OUT alone; a writer that throws leaves OUT as
// it was; a killed writer's leftovers are removed by the next one; the lock
// is shared with StagedFolder.
#include <catch2/catch.hpp>

#include <fstream>
#include <map>
#include <unistd.h>

#include "../support/test_support.hpp"
#include "fulcrum/core/error.hpp"
#include "fulcrum/io/atomic_file.hpp"
#include "fulcrum/io/staged_entries.hpp"
#include "fulcrum/io/staged_folder.hpp"

namespace fs = std::filesystem;
using fulcrum::InputError;
using fulcrum::StagedEntries;

namespace {
void touch(const fs::path& p, const std::string& text = "x\n") {
  fs::create_directories(p.parent_path());
  std::ofstream(p) << text;
}
// Relative path -> bytes of every regular file under dir.
std::map<std::string, std::string> tree(const fs::path& dir) {
  std::map<std::string, std::string> t;
  for (const auto& e : fs::recursive_directory_iterator(dir))
    if (e.is_regular_file()) t[fs::relative(e.path(), dir).string()] = fulcrum::test::slurp(e.path());
  return t;
}
// OUT as the Slurm layout leaves it after an earlier merge: working folders
// beside the products.
fs::path earlier_layout(const std::string& tag) {
  const auto out = fulcrum::test::temp_dir(tag) / "out";
  touch(out / "shards" / "1" / "g1" / "report.json", "shard\n");
  touch(out / "slurm" / "merge.log", "log\n");
  touch(out / "g1" / "report.json", "old g1\n");
  touch(out / "g1" / "stray.txt", "only in the old g1\n");
  touch(out / "gone" / "report.json", "an entry the new products do not hold\n");
  touch(out / "table.csv", "old table\n");
  touch(out / "sample.json", "old marker\n");
  return out;
}
}  // namespace

TEST_CASE("staged entries replace theirs in OUT at commit, the marker last, and leave the others alone",
          "[io][staged-entries]") {
  const auto out = earlier_layout("entries-commit");
  auto expected = tree(out);
  {
    StagedEntries s(out.string(), "sample.json");
    CHECK(fs::path(s.path()).parent_path() == out);
    CHECK(fs::path(s.path()).filename().string().rfind(".fulcrum-staging-", 0) == 0);
    touch(fs::path(s.file("g1")) / "report.json", "new g1\n");
    touch(fs::path(s.file("g2")) / "report.json", "new g2\n");
    fulcrum::write_text_file(s.file("table.csv"), "new table\n");
    fulcrum::write_text_file(s.file("sample.json"), "new marker\n");
    CHECK(tree(out).count("sample.json"));  // nothing moved before commit
    CHECK(fulcrum::test::slurp(out / "table.csv") == "old table\n");
    s.commit();
  }
  expected.erase("g1/stray.txt");  // a replaced entry is replaced whole
  expected["g1/report.json"] = "new g1\n";
  expected["g2/report.json"] = "new g2\n";
  expected["table.csv"] = "new table\n";
  expected["sample.json"] = "new marker\n";
  CHECK(tree(out) == expected);  // shards/, slurm/ and gone/ untouched, no hidden folder left
  for (const auto& e : fs::directory_iterator(out)) CHECK(e.path().filename().string()[0] != '.');
}

TEST_CASE("a staged-entries writer that throws leaves OUT as it was", "[io][staged-entries]") {
  const auto out = earlier_layout("entries-throw");
  const auto before = tree(out);
  try {
    StagedEntries s(out.string(), "sample.json");
    fulcrum::write_text_file(s.file("table.csv"), "half\n");
    throw InputError(s.file("table.csv"), "write failed: No space left on device");
  } catch (const InputError&) {
  }
  CHECK(tree(out) == before);
  for (const auto& e : fs::directory_iterator(out)) CHECK(e.path().filename().string()[0] != '.');
}

TEST_CASE("a killed staged-entries writer's leftovers are removed by the next one", "[io][staged-entries]") {
  const auto out = earlier_layout("entries-leftovers");
  // What a writer killed in the middle of commit() leaves: no marker (moved
  // aside), table.csv moved aside and the new one not yet in place.
  fs::create_directories(out / ".fulcrum-old-999999");
  fs::rename(out / "sample.json", out / ".fulcrum-old-999999" / "sample.json");
  fs::rename(out / "table.csv", out / ".fulcrum-old-999999" / "table.csv");
  touch(out / ".fulcrum-staging-999999" / "table.csv", "new table\n");
  touch(out / ".fulcrum-staging-999999" / "sample.json", "new marker\n");
  StagedEntries s(out.string(), "sample.json");
  CHECK_FALSE(fs::exists(out / ".fulcrum-old-999999"));
  CHECK_FALSE(fs::exists(out / ".fulcrum-staging-999999"));
  fulcrum::write_text_file(s.file("table.csv"), "newer table\n");
  fulcrum::write_text_file(s.file("sample.json"), "newer marker\n");
  s.commit();
  CHECK(fulcrum::test::slurp(out / "table.csv") == "newer table\n");
  CHECK(fulcrum::test::slurp(out / "sample.json") == "newer marker\n");
  CHECK(fulcrum::test::slurp(out / "shards" / "1" / "g1" / "report.json") == "shard\n");
}

TEST_CASE("staged entries take the output folder's lock and show failed paths in OUT", "[io][staged-entries]") {
  const auto out = earlier_layout("entries-lock");
  StagedEntries s(out.string(), "sample.json");
  CHECK_THROWS_WITH(StagedEntries(out.string(), "sample.json"),
                    Catch::Contains("another fulcrum run is writing into this folder"));
  CHECK_THROWS_WITH(fulcrum::StagedFolder(out.string(), true),
                    Catch::Contains("another fulcrum run is writing into this folder"));
  const InputError e(s.file("g1/figures/a.png"), "write failed: No space left on device");
  CHECK(s.shown_in_target(e).file() == (out / "g1" / "figures" / "a.png").string());
  const InputError other("/elsewhere/x.fits", "bad");
  CHECK(s.shown_in_target(other).file() == "/elsewhere/x.fits");
  // A folder that is not there is refused.
  CHECK_THROWS_AS(StagedEntries((out / "missing").string(), "sample.json"), InputError);
}

TEST_CASE("a staged-entries commit that cannot start leaves OUT as it was", "[io][staged-entries]") {
  const auto out = earlier_layout("entries-no-aside");
  const auto before = tree(out);
  StagedEntries s(out.string(), "sample.json");
  fulcrum::write_text_file(s.file("table.csv"), "new table\n");
  fulcrum::write_text_file(s.file("sample.json"), "new marker\n");
  // A file where commit() makes its folder for the replaced entries.
  const fs::path blocker = out / (".fulcrum-old-" + std::to_string(::getpid()));
  touch(blocker, "in the way\n");
  CHECK_THROWS_AS(s.commit(), InputError);
  fs::remove(blocker);
  CHECK(tree(out).size() == before.size() + 2);  // the staged two files, still in the staging folder
  for (const auto& [f, text] : before) CHECK(fulcrum::test::slurp(out / f) == text);
}
