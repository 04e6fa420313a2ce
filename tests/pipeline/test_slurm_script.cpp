// The Slurm submission of a sample (pipeline/slurm_script.hpp) and its
// resource estimate (pipeline/shard_resources.hpp), without a cluster: the
// estimate against the formula worked by hand, map sizes read from FITS
// headers written by hand after the FITS standard, the script checked by
// bash itself, and the settings refused with one-line errors. The run on a
// real one-node Slurm cluster is tests/cluster/slurm_sample.py.
#include <catch2/catch.hpp>

#include <cstring>
#include <filesystem>
#include <fstream>

#include "../support/test_support.hpp"
#include "fulcrum/core/settings_check.hpp"
#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/pipeline/manifest.hpp"
#include "fulcrum/pipeline/shard_resources.hpp"
#include "fulcrum/pipeline/slurm_script.hpp"
#include "pipeline_fixtures.hpp"

using namespace fulcrum;
namespace fs = std::filesystem;

namespace {

// A FITS file of the given axes with float32 zeros, its header written card
// by card after the FITS standard 4.0, sections 3.3 and 4.4.1 (80-character
// cards in 2880-byte blocks; SIMPLE, BITPIX, NAXIS, NAXISn, END).
void write_fits_by_hand(const fs::path& path, const std::vector<long>& axes) {
  std::string h;
  auto card = [&](const std::string& key, const std::string& value) {
    std::string c = key;
    c.resize(8, ' ');
    c += "= ";
    c += std::string(20 - std::min<std::size_t>(20, value.size()), ' ') + value;
    c.resize(80, ' ');
    h += c;
  };
  card("SIMPLE", "T");
  card("BITPIX", "-32");
  card("NAXIS", std::to_string(axes.size()));
  long n = 1;
  for (std::size_t i = 0; i < axes.size(); ++i) {
    card("NAXIS" + std::to_string(i + 1), std::to_string(axes[i]));
    n *= axes[i];
  }
  std::string end = "END";
  end.resize(80, ' ');
  h += end;
  h.resize((h.size() + 2879) / 2880 * 2880, ' ');
  std::string data(static_cast<std::size_t>(n) * 4, '\0');
  data.resize((data.size() + 2879) / 2880 * 2880, '\0');
  std::ofstream(path, std::ios::binary) << h << data;
}

pipeline::GalaxyCost cost(const std::string& name, double seconds, double bytes) {
  pipeline::GalaxyCost c;
  c.name = name;
  c.cpu_seconds = seconds;
  c.bytes = bytes;
  c.pixels = 100;
  return c;
}

}  // namespace

TEST_CASE("map sizes come from the FITS headers alone", "[pipeline][cluster]") {
  auto dir = test::temp_dir("slurm-axes");
  write_fits_by_hand(dir / "cube.fits", {7, 5, 3});
  write_fits_by_hand(dir / "map.fits", {11, 13});
  CHECK(fits_image_axes((dir / "cube.fits").string()) == std::vector<long>{7, 5, 3});
  CHECK(fits_image_axes((dir / "map.fits").string()) == std::vector<long>{11, 13});
  CHECK_THROWS_AS(fits_image_axes((dir / "none.fits").string()), InputError);

  // A galaxy given by maps counts its largest map; one given by a cube one
  // plane and every voxel (pipeline/shard_resources.hpp).
  pipeline::SampleManifest m;
  m.galaxies.resize(2);
  m.galaxies[0].name = "maps";
  m.galaxies[0].velocity = (dir / "map.fits").string();
  m.galaxies[0].intensity = (dir / "map.fits").string();
  m.galaxies[1].name = "cube";
  m.galaxies[1].cube = (dir / "cube.fits").string();
  pipeline::CostModel model;
  const auto costs = pipeline::galaxy_costs(m, 1000, 10, model);
  REQUIRE(costs.size() == 2);
  CHECK(costs[0].pixels == 143);
  CHECK(costs[0].voxels == 0);
  CHECK(costs[1].pixels == 35);
  CHECK(costs[1].voxels == 105);
  // t = t0 + a P + b D + v V + c (2M + 8) P, worked by hand.
  const double t0 = model.start_seconds, a = model.seconds_per_pixel, b = model.seconds_per_draw,
               v = model.seconds_per_voxel, c = model.seconds_per_mock_pixel;
  CHECK(costs[0].cpu_seconds == Approx(t0 + a * 143 + b * 1000 + c * 28 * 143).epsilon(1e-12));
  CHECK(costs[1].cpu_seconds == Approx(t0 + a * 35 + b * 1000 + v * 105 + c * 28 * 35).epsilon(1e-12));
  CHECK(costs[1].bytes == Approx(model.bytes_per_pixel * 35 + model.bytes_per_voxel * 105));
}

TEST_CASE("the shard estimate takes the slowest and largest shard", "[pipeline][cluster]") {
  // Five galaxies in two shards: shard 1 = positions 0, 2, 4; shard 2 = 1, 3.
  std::vector<pipeline::GalaxyCost> c = {cost("a", 100, 1e9), cost("b", 900, 1e8), cost("c", 200, 1e8),
                                         cost("d", 50, 3e9), cost("e", 300, 1e8)};
  const auto r = pipeline::shard_resources(c, 2, 500, 0);
  CHECK(r.largest_shard == 3);
  CHECK(r.cores == 3);
  // Shard 1: max(300, 600 / 3) = 300 s; shard 2: max(900, 950 / 2) = 900 s.
  CHECK(r.estimated_seconds == Approx(900));
  // 2 x 900 s = 30 min, plus 10 min of margin.
  CHECK(r.minutes == 40);
  CHECK(pipeline::slurm_time(r.minutes) == "0:40:00");
  CHECK(pipeline::slurm_time(135) == "2:15:00");
  // Memory: 256 MB + k x largest galaxy; shard 1: 256 MB + 3 x 1e9 B (3117 MB),
  // shard 2: 256 MB + 2 x 3e9 B (5978 MB) -> 6144 MB in 256 MB steps.
  CHECK(r.memory_mb == 6144);
  // Cores stop at kMaxCoresPerShard.
  std::vector<pipeline::GalaxyCost> many(20, cost("x", 10, 1e6));
  CHECK(pipeline::shard_resources(many, 1, 500, 0).cores == pipeline::kMaxCoresPerShard);
  CHECK(pipeline::shard_resources(many, 20, 500, 0).cores == 1);
}

TEST_CASE("the submission script passes bash's syntax check and quotes every path", "[pipeline][cluster]") {
  auto dir = test::temp_dir("slurm-script");
  // A folder name with a space and a quote, as a person might choose.
  const fs::path data = dir / "it's data";
  fs::create_directories(data);
  const std::string manifest = test::write_tiny_sample(data, 3);
  const auto m = pipeline::read_manifest(manifest);
  pipeline::SlurmJobOptions o;
  o.out_dir = (dir / "out put").string();
  o.shards = 2;
  o.partition = "short";
  o.draws = 600;
  o.fulcrum_path = "/opt/fulcrum/bin/fulcrum";
  const auto set = pipeline::write_slurm_script(m, o, (dir / "submit.sh").string(), false);
  auto syntax = test::run_shell("bash -n " + pipeline::shell_quote((dir / "submit.sh").string()));
  INFO(syntax.err);
  CHECK(syntax.exit_code == 0);
  const std::string& s = set.script;
  CHECK(s.find("--array=\"$array\"") != std::string::npos);
  CHECK(s.find("shards=2\n") != std::string::npos);
  CHECK(s.find("--cpus-per-task=" + std::to_string(set.resources.cores) + " --mem=" +
               std::to_string(set.resources.memory_mb) + "M --time=" + pipeline::slurm_time(set.resources.minutes)) !=
        std::string::npos);
  CHECK(s.find("--dependency=\"afterok:$array_job\"") != std::string::npos);
  CHECK(s.find("--partition=short") != std::string::npos);
  CHECK(s.find("--shard \"${SLURM_ARRAY_TASK_ID}/2\"") != std::string::npos);
  CHECK(s.find(" --draws 600") != std::string::npos);
  CHECK(s.find("--requeue") != std::string::npos);
  // Every quoted path reads back as itself through bash.
  for (const std::string p : {manifest, o.out_dir, std::string("a'b\"c $HOME `x` \\ d")}) {
    auto echo = test::run_shell("printf %s " + pipeline::shell_quote(p));
    CHECK(echo.out == p);
  }
  CHECK(s.find(pipeline::shell_quote(manifest)) != std::string::npos);
  // Refused without overwrite; replaced with it.
  CHECK_THROWS_AS(pipeline::write_slurm_script(m, o, (dir / "submit.sh").string(), false), InputError);
  CHECK_NOTHROW(pipeline::write_slurm_script(m, o, (dir / "submit.sh").string(), true));
}

TEST_CASE("bad Slurm settings are one-line errors naming the setting", "[pipeline][cluster]") {
  auto dir = test::temp_dir("slurm-settings");
  const auto m = pipeline::read_manifest(test::write_tiny_sample(dir, 3));
  pipeline::SlurmJobOptions o;
  o.out_dir = (dir / "out").string();
  o.fulcrum_path = "/usr/bin/fulcrum";
  auto refused = [&](pipeline::SlurmJobOptions x, const std::string& setting) {
    try {
      pipeline::slurm_job_set(m, x);
      FAIL("accepted");
    } catch (const SettingError& e) {
      CHECK(e.setting() == setting);
      CHECK(std::string(e.what()).find('\n') == std::string::npos);
    }
  };
  auto x = o;
  x.shards = 4;  // more shards than galaxies
  refused(x, "shards");
  x.shards = -1;
  refused(x, "shards");
  x = o;
  x.partition = "a b";
  refused(x, "slurm_partition");
  x = o;
  x.account = "acct;rm";
  refused(x, "slurm_account");
  x = o;
  x.out_dir = "line\nbreak";
  refused(x, "out");
  // Default: one shard per four galaxies.
  CHECK(pipeline::slurm_job_set(m, o).resources.shards == 1);
  // From the command line: the flag is named, one line, exit 2.
  auto r = test::run_fulcrum("run " + m.path + " --out " + (dir / "o").string() + " --slurm-script " +
                             (dir / "s.sh").string() + " --shards 9");
  CHECK(r.exit_code == 2);
  CHECK(r.err.find("--shards = 9") != std::string::npos);
  CHECK(!fs::exists(dir / "s.sh"));
  auto both = test::run_fulcrum("run " + m.path + " --out " + (dir / "o").string() + " --slurm-script " +
                                (dir / "s.sh").string() + " --shard 1/2");
  CHECK(both.exit_code != 0);
  CHECK(!fs::exists(dir / "s.sh"));
}
