// A galaxy given as a line cube (`analyse --cube`, a manifest's `cube =`):
// the maps made on the fly are the maps `fulcrum moments` makes, so the
// dynamical centre and the asymmetry are the same numbers as `analyse` on
// those maps; the cube and the made maps are recorded with their SHA-256
// (checked against Python's hashlib); bad cubes and cube-plus-maps are
// one-line errors. The mock cube is invented (`fulcrum synth`).
#include <catch2/catch.hpp>

#include <algorithm>
#include <filesystem>
#include <fstream>
#include <sstream>

#include <nlohmann/json.hpp>

#include "../support/test_support.hpp"

namespace fs = std::filesystem;
using fulcrum::test::run_shell;
using nlohmann::json;

using fulcrum::test::slurp;

namespace {


fulcrum::test::CommandResult fulcrum_run(const std::string& args) {
  return run_shell(std::string("SOURCE_DATE_EPOCH=1700000000 OMP_NUM_THREADS=2 ") + FULCRUM_BINARY + " --quiet " +
                   args);
}

// One mock galaxy with a cube (default synth galaxy; invented), made once.
const fs::path& mock_dir() {
  static const fs::path dir = [] {
    auto d = fulcrum::test::temp_dir("cube-analysis");
    auto r = fulcrum_run("synth --out " + (d / "mock").string() + " --cube-enabled --optical-enabled=false");
    if (r.exit_code != 0) FAIL("synth failed: " << r.err);
    return d;
  }();
  return dir;
}

const json* centre(const json& rep, const std::string& id) {
  for (const auto& c : rep["centres"])
    if (c["id"] == id) return &c;
  return nullptr;
}

// The numbers the two routes must share.
void require_same_numbers(const json& a, const json& b) {
  REQUIRE(a["kinematics"]["status"] == "ok");
  REQUIRE(b["kinematics"]["status"] == "ok");
  for (const char* id : {"kinematic-rings", "kinematic-harmonic"}) {
    INFO("centre " << id);
    const json *ca = centre(a, id), *cb = centre(b, id);
    REQUIRE(ca != nullptr);
    REQUIRE(cb != nullptr);
    CHECK((*ca)["ra_deg"] == (*cb)["ra_deg"]);
    CHECK((*ca)["dec_deg"] == (*cb)["dec_deg"]);
    CHECK((*ca)["cov_arcsec2"] == (*cb)["cov_arcsec2"]);
  }
  CHECK(a["adopted_centre"] == b["adopted_centre"]);
  for (const char* k : {"asymmetry", "asymmetry_err", "leading_flux", "trailing_flux", "flux_unit"}) {
    INFO("split." << k);
    CHECK(a["split"][k] == b["split"][k]);
  }
  REQUIRE(a["split"]["asymmetry"].is_number());
  CHECK(a["robustness"]["p_leading"] == b["robustness"]["p_leading"]);
  CHECK(a["robustness"]["flip_distance_arcsec"] == b["robustness"]["flip_distance_arcsec"]);
  CHECK(a["verdict"] == b["verdict"]);
}

}  // namespace

TEST_CASE("analyse --cube gives the numbers of moments followed by analyse", "[pipeline][cube][python]") {
  const fs::path dir = mock_dir();
  const std::string cube = (dir / "mock" / "cube.fits").string();
  // Route 1: fulcrum moments, then analyse on the four maps.
  auto m = fulcrum_run("moments --cube " + cube + " --out " + (dir / "mom").string());
  INFO(m.err);
  REQUIRE(m.exit_code == 0);
  const std::string common = " --tail-pa 300 --draws 400 --calibrate 0 --no-figures --name cube-mock --out ";
  auto maps = fulcrum_run("analyse --velocity " + (dir / "mom" / "mom1.fits").string() + " --velocity-error " +
                          (dir / "mom" / "mom1_err.fits").string() + " --intensity " +
                          (dir / "mom" / "mom0.fits").string() + " --intensity-error " +
                          (dir / "mom" / "mom0_err.fits").string() + common + (dir / "from-maps").string());
  INFO(maps.err);
  REQUIRE(maps.exit_code == 0);
  // Route 2: analyse --cube.
  auto c = fulcrum_run("analyse --cube " + cube + common + (dir / "from-cube").string());
  INFO(c.err);
  REQUIRE(c.exit_code == 0);

  const json a = json::parse(slurp(dir / "from-maps" / "report.json"));
  const json b = json::parse(slurp(dir / "from-cube" / "report.json"));
  require_same_numbers(a, b);
  // The made maps are the maps of `fulcrum moments`, byte for byte.
  for (const char* f : {"mom0.fits", "mom0_err.fits", "mom1.fits", "mom1_err.fits", "mom2.fits", "peak.fits",
                        "nchan.fits", "mask.fits", "moments.json"}) {
    INFO("moments/" << f);
    REQUIRE(fs::exists(dir / "from-cube" / "moments" / f));
    CHECK(slurp(dir / "from-cube" / "moments" / f) == slurp(dir / "mom" / f));
  }
  // report.json records the cube and the four made maps, each with its
  // SHA-256 (compared with hashlib), and the moment settings used.
  const json& in = b["inputs"];
  REQUIRE(in.contains("cube"));
  CHECK(in["cube"]["path"] == cube);
  CHECK(in["cube"]["moment_settings"]["mask"] == "smooth-and-mask");
  CHECK(in["cube"]["moment_settings"]["threshold"] == 4.0);
  // Made maps: paths relative to the galaxy's folder (the report does not
  // depend on where the folder is).
  CHECK(in["cube"]["moments_summary"] == "moments/moments.json");
  CHECK(in["velocity"]["path"] == "moments/mom1.fits");
  CHECK(in["velocity_error"]["path"] == "moments/mom1_err.fits");
  CHECK(in["intensity"]["path"] == "moments/mom0.fits");
  CHECK(in["intensity_error"]["path"] == "moments/mom0_err.fits");
  {
    std::ofstream list(dir / "sha.txt");
    for (const char* k : {"cube", "velocity", "velocity_error", "intensity", "intensity_error"})
    {
      const fs::path p = in[k]["path"].get<std::string>();
      list << (p.is_relative() ? dir / "from-cube" / p : p).string() << " " << in[k]["sha256"].get<std::string>()
           << "\n";
    }
  }
  auto sha = fulcrum::test::run_python("check_sha256.py", (dir / "sha.txt").string());
  INFO(sha.out << sha.err);
  CHECK(sha.exit_code == 0);
}

TEST_CASE("a manifest galaxy with cube = gives the numbers of analyse --cube", "[pipeline][cube][python]") {
  const fs::path dir = mock_dir();
  // The same mask settings through both routes (a non-default mask, so that
  // they are seen to arrive), the same seed and draws.
  {
    std::ofstream m(dir / "sample.toml");
    m << "# invented test sample\n[sample]\nname = \"Cube sample\"\nseed = 7\ndraws = 400\ncalibrate = 0\n\n"
         "[[galaxy]]\nname = \"cube-mock\"\ncube = \"mock/cube.fits\"\ntail_pa_deg = 300\nseed = 1\n"
         "[galaxy.moments]\nmask = \"moment-masking\"\nmoment_mask_threshold = 5\n";
  }
  auto run = fulcrum_run("run " + (dir / "sample.toml").string() + " --no-figures --out " + (dir / "sample").string());
  INFO(run.err);
  REQUIRE(run.exit_code == 0);
  auto c = fulcrum_run("analyse --cube " + (dir / "mock" / "cube.fits").string() +
                       " --mask moment-masking --moment-mask-threshold 5 --seed 1 --tail-pa 300 --draws 400 --calibrate 0"
                       " --no-figures --name cube-mock --out " + (dir / "cube-dame").string());
  INFO(c.err);
  REQUIRE(c.exit_code == 0);
  const json a = json::parse(slurp(dir / "sample" / "cube-mock" / "report.json"));
  const json b = json::parse(slurp(dir / "cube-dame" / "report.json"));
  require_same_numbers(a, b);
  CHECK(a["inputs"]["cube"]["moment_settings"]["mask"] == "moment-masking");
  const json mj = json::parse(slurp(dir / "sample" / "cube-mock" / "moments" / "moments.json"));
  CHECK(mj["mask"]["method"] == "moment-masking");
  CHECK(slurp(dir / "sample" / "cube-mock" / "moments" / "mom1.fits") ==
        slurp(dir / "cube-dame" / "moments" / "mom1.fits"));
  // The report validates against the shipped JSON Schema.
  auto check = fulcrum::test::run_python(
      "check_sample_products.py", (dir / "sample").string() + " " + fulcrum::test::source_dir() + "/docs/report.schema.json");
  INFO(check.out << check.err);
  CHECK(check.exit_code == 0);
}

TEST_CASE("analyse --cube refusals are one-line errors that write nothing", "[pipeline][cube]") {
  const fs::path dir = mock_dir();
  const std::string cube = (dir / "mock" / "cube.fits").string();
  auto refused = [&](const std::string& args, const std::string& out, const std::string& expect) {
    auto r = fulcrum_run("analyse " + args + " --tail-pa 300 --draws 400 --out " + (dir / out).string());
    INFO("analyse " << args << "\n" << r.err);
    CHECK(r.exit_code == 2);
    CHECK(r.err.find(expect) != std::string::npos);
    CHECK(std::count(r.err.begin(), r.err.end(), '\n') == 1);
    CHECK_FALSE(fs::exists(dir / out));
  };
  // Cube and maps together.
  refused("--cube " + cube + " --velocity " + (dir / "mock" / "vel.fits").string(), "both",
          "give either --cube or the maps, not both (got --cube and --velocity)");
  refused("--cube " + cube + " --rms 0.1", "both-rms", "not both (got --cube and --rms)");
  // A moment-map setting without a cube.
  refused("--velocity " + (dir / "mock" / "vel.fits").string() + " --intensity " +
              (dir / "mock" / "mom0.fits").string() + " --threshold 3",
          "no-cube", "--threshold is a moment-map setting: it goes with --cube");
  refused("--name lonely", "nothing", "give the maps (--velocity and --intensity) or a line cube (--cube)");
  // A map is not a cube; a cube without a spectral axis.
  refused("--cube " + (dir / "mock" / "mom0.fits").string(), "map", "NAXIS = 2");
  {
    // The mock cube with its spectral axis renamed to a non-spectral type.
    std::string bytes = slurp(cube);
    const auto pos = bytes.find("CTYPE3  = '");
    REQUIRE(pos != std::string::npos);
    bytes.replace(pos + 11, 4, "LINE");
    std::ofstream(dir / "no_spectral.fits", std::ios::binary) << bytes;
  }
  refused("--cube " + (dir / "no_spectral.fits").string(), "no-spectral", "no spectral axis");
  refused("--cube " + cube + " --smooth-channels 4", "even", "--smooth-channels = 4 is not allowed: must be an odd number");
}
