// Sample manifests: paths relative to the manifest folder, errors that name
// the line, duplicate names, shards and --only, a galaxy given as a cube.
#include <catch2/catch.hpp>

#include <set>

#include "../support/test_support.hpp"
#include "fulcrum/core/error.hpp"
#include "fulcrum/pipeline/manifest.hpp"

using namespace fulcrum;
using namespace fulcrum::pipeline;

namespace {
const char* kGood = R"([sample]
name = "Test sample"
seed = 7
draws = 2000
co_line = "2-1"

[[galaxy]]
name = "a"
velocity = "a/vel.fits"
intensity = "a/mom0.fits"
intensity_error = "a/mom0_err.fits"
optical = "/abs/opt.fits"
tail_pa_deg = 300
tail_pa_err_deg = 12.5
distance_mpc = 95.0

[[galaxy]]
name = "b"
velocity = "b/vel.fits"
intensity = "b/mom0.fits"
rms = 0.01
tail_image = "b/tail.fits"
seed = 99
co_ratio_21 = 0.8
)";

std::string error_of(const std::string& text) {
  try {
    parse_manifest(text, "/data/run/sample.toml");
  } catch (const InputError& e) {
    return e.what();
  }
  return "";
}
}  // namespace

TEST_CASE("a manifest resolves paths against its folder", "[pipeline]") {
  auto m = parse_manifest(kGood, "/data/run/sample.toml");
  CHECK(m.name == "Test sample");
  CHECK(m.seed == 7);
  CHECK(m.draws == 2000);
  REQUIRE(m.galaxies.size() == 2);
  const auto& a = m.galaxies[0];
  CHECK(a.velocity == "/data/run/a/vel.fits");
  CHECK(a.optical == "/abs/opt.fits");
  CHECK(*a.tail_pa_deg == 300.0);  // an integer is accepted for a float key
  CHECK(a.tail_pa_err_deg == 12.5);
  CHECK(*a.distance_mpc == 95.0);
  CHECK(*a.molecular.co_line == "2-1");  // sample default
  CHECK(a.manifest_line == 7);
  const auto& b = m.galaxies[1];
  CHECK(*b.rms == 0.01);
  CHECK(b.tail_image == "/data/run/b/tail.fits");
  CHECK(galaxy_seed(7, b) == 99);
  CHECK(*b.molecular.co_ratio_21 == 0.8);
  // Derived seeds differ per galaxy, do not depend on the position, fit in 53 bits.
  CHECK(galaxy_seed(7, a) != galaxy_seed(8, a));
  CHECK(galaxy_seed(7, a) < (1ull << 53));
}

TEST_CASE("manifest errors name the file and the line", "[pipeline]") {
  std::string text = kGood;
  CHECK(error_of(text + "colour = \"red\"\n") ==
        "/data/run/sample.toml: line 25: unknown key 'colour' in [[galaxy]] (known keys: alpha_co, centre_from, clip_snr, co_line, "
        "co_ratio_21, cube, distance_mpc, intensity, intensity_error, kinematics, moments, name, optical, optical_mask, "
        "psf_fwhm_arcsec, redshift, rms, seed, tail_image, tail_pa_deg, tail_pa_err_deg, velocity, velocity_error)");
  std::string wrong = text;
  wrong.replace(wrong.find("distance_mpc = 95.0"), 19, "distance_mpc = \"95\"");
  CHECK(error_of(wrong) == "/data/run/sample.toml: line 15: 'distance_mpc' must be a number");
  std::string dup = text;
  dup.replace(dup.find("name = \"b\""), 10, "name = \"a\"");
  CHECK(error_of(dup) == "/data/run/sample.toml: line 17: duplicate galaxy name 'a'");
  CHECK(error_of("[sample]\nname = \"x\"\nsed = 3\n[[galaxy]]\nname=\"a\"\n").find("line 3: unknown key 'sed' in [sample]") !=
        std::string::npos);
  CHECK(error_of("[sample]\nname = \"x\"\n").find("lists no [[galaxy]]") != std::string::npos);
  CHECK(error_of("[sample\n").find("line 1:") != std::string::npos);  // a TOML syntax error
  CHECK(error_of("[[galaxy]]\nname = \"a\"\nvelocity = \"v.fits\"\nintensity = \"m.fits\"\n")
            .find("needs 'tail_pa_deg' or 'tail_image'") != std::string::npos);
  CHECK(error_of("[[galaxy]]\nname = \"a/b\"\nvelocity = \"v\"\nintensity = \"m\"\ntail_pa_deg = 1\n")
            .find("must not contain '/'") != std::string::npos);
  CHECK(error_of("[sample]\ndraws = 2.5\n[[galaxy]]\nname = \"a\"\n").find("line 2: 'draws' must be an integer") !=
        std::string::npos);
  CHECK(error_of("[[galaxy]]\nname = \"a\"\nvelocity = \"v\"\nintensity = \"m\"\nrms = 0.1\n"
                 "intensity_error = \"e\"\ntail_pa_deg = 1\n")
            .find("choose one") != std::string::npos);
  REQUIRE_THROWS_AS(read_manifest("/nonexistent/sample.toml"), InputError);
}

TEST_CASE("manifest clip_snr: the clip level of the intensity map, checked", "[pipeline][clip]") {
  const std::string head = "[[galaxy]]\nname = \"a\"\nvelocity = \"v\"\nintensity = \"m\"\ntail_pa_deg = 1\n";
  auto m = parse_manifest(head + "clip_snr = 3\n", "s.toml");
  REQUIRE(m.galaxies.size() == 1);
  REQUIRE(m.galaxies[0].clip_snr);
  CHECK(*m.galaxies[0].clip_snr == 3.0);
  CHECK_FALSE(parse_manifest(head, "s.toml").galaxies[0].clip_snr);  // absent: not clipped
  for (const char* bad : {"clip_snr = 0\n", "clip_snr = -3\n", "clip_snr = 25\n", "clip_snr = nan\n"})
    CHECK(error_of(head + bad).find("line 6: clip_snr = ") != std::string::npos);
  CHECK(error_of(head + "clip_snr = \"3\"\n").find("'clip_snr' must be a number") != std::string::npos);
  CHECK(error_of("[[galaxy]]\nname = \"c\"\ncube = \"c.fits\"\ntail_pa_deg = 1\nclip_snr = 3\n")
            .find("gives both 'cube'") != std::string::npos);
}

TEST_CASE("shards partition the sample and --only selects by name", "[pipeline]") {
  std::string text = "[sample]\nname = \"s\"\n";
  for (int i = 0; i < 10; ++i)
    text += "[[galaxy]]\nname = \"g" + std::to_string(i) + "\"\nvelocity = \"v\"\nintensity = \"m\"\ntail_pa_deg = 1\n";
  auto m = parse_manifest(text, "s.toml");
  CHECK(m.folder == ".");
  std::multiset<std::string> all;
  for (int i = 1; i <= 3; ++i) {
    auto part = select_galaxies(m, parse_shard(std::to_string(i) + "/3"));
    for (const auto& g : part) all.insert(g.name);
  }
  CHECK(all.size() == 10);
  CHECK(std::set<std::string>(all.begin(), all.end()).size() == 10);
  Selection only;
  only.only = {"g3", "g7"};
  CHECK(select_galaxies(m, only).size() == 2);
  only.only = {"nope"};
  CHECK_THROWS_AS(select_galaxies(m, only), InputError);
  for (const char* bad : {"0/3", "4/3", "1/0", "a/b", "1-3", "1/3x", ""})
    CHECK_THROWS_AS(parse_shard(bad), InputError);
}

TEST_CASE("a galaxy given as a cube, with its moment-map settings", "[pipeline][cube]") {
  const std::string head = "[sample]\nname = \"x\"\n\n[[galaxy]]\nname = \"c\"\n";
  auto m = parse_manifest(head + "cube = \"c/cube.fits\"\ntail_pa_deg = 300\n"
                                 "[galaxy.moments]\nmoment_mask_threshold = 4\n"
                                 "grow_pixels = 3\nnoise_per_pixel = true\nmask_cube = \"c/mask.fits\"\n"
                                 "mask = \"external\"\n",
                          "/data/run/sample.toml");
  REQUIRE(m.galaxies.size() == 1);
  const auto& g = m.galaxies[0];
  CHECK(g.cube == "/data/run/c/cube.fits");
  CHECK(g.velocity.empty());
  CHECK(g.intensity.empty());
  CHECK(g.moments.mask == "external");
  CHECK(g.moments.mask_cube == "/data/run/c/mask.fits");  // resolved like every path
  CHECK(g.moments.options.dame_threshold_sigma == 4.0);
  CHECK(g.moments.options.grow_pixels == 3);
  CHECK(g.moments.options.noise.per_pixel);
  // An inline table works too; defaults stay where nothing is given.
  auto m2 = parse_manifest(head + "cube = \"c/cube.fits\"\ntail_pa_deg = 300\nmoments = { threshold = 5.5 }\n",
                           "/data/run/sample.toml");
  CHECK(m2.galaxies[0].moments.options.threshold_sigma == 5.5);
  CHECK(m2.galaxies[0].moments.mask == "smooth-and-mask");
}

TEST_CASE("cube and maps together, and bad moment settings, are errors naming the line", "[pipeline][cube]") {
  const std::string head = "[sample]\nname = \"x\"\n\n[[galaxy]]\nname = \"c\"\ntail_pa_deg = 300\n";
  // Lines: 1 [sample], 2 name, 3 blank, 4 [[galaxy]], 5 name, 6 tail_pa_deg, 7 ...
  CHECK(error_of(head + "cube = \"c.fits\"\nvelocity = \"v.fits\"\n") ==
        "/data/run/sample.toml: line 8: galaxy 'c' gives both 'cube' (line 7) and 'velocity' (line 8): the cube makes "
        "the velocity and intensity maps and their error maps; give one or the other");
  CHECK(error_of(head + "intensity = \"m.fits\"\ncube = \"c.fits\"\n")
            .find("line 8: galaxy 'c' gives both 'cube' (line 8) and 'intensity' (line 7)") != std::string::npos);
  CHECK(error_of(head + "cube = \"c.fits\"\nrms = 0.1\n").find("line 8:") != std::string::npos);
  CHECK(error_of(head + "velocity = \"v\"\nintensity = \"m\"\nmoments = { threshold = 3 }\n") ==
        "/data/run/sample.toml: line 9: galaxy 'c' gives 'moments' settings but no 'cube'");
  CHECK(error_of(head + "cube = \"c.fits\"\nmoments = { treshold = 3 }\n")
            .find("line 8: unknown key 'treshold' in 'moments' (known keys: clip, convention, grow_channels") !=
        std::string::npos);
  CHECK(error_of(head + "cube = \"c.fits\"\n[galaxy.moments]\nthreshold = \"high\"\n") ==
        "/data/run/sample.toml: line 9: 'threshold' must be a number");
  CHECK(error_of(head + "cube = \"c.fits\"\n[galaxy.moments]\nsmooth_channels = 4\n") ==
        "/data/run/sample.toml: line 8: moments: 'smooth_channels' = 4 is not allowed: must be an odd number of "
        "channels >= 1");
  CHECK(error_of(head + "cube = \"c.fits\"\nmoments = { mask = \"external\" }\n") ==
        "/data/run/sample.toml: line 8: moments: 'mask' external needs 'mask_cube'");
  CHECK(error_of(head + "cube = \"c.fits\"\nmoments = \"dame\"\n").find("line 8: 'moments' must be a table") !=
        std::string::npos);
}

TEST_CASE("a galaxy's kinematic settings are read by name and checked", "[pipeline][kinematics]") {
  const std::string head = "[sample]\nname = \"s\"\n[[galaxy]]\nname = \"g\"\nvelocity = \"v.fits\"\n"
                           "intensity = \"i.fits\"\ntail_pa_deg = 10\n";
  auto m = parse_manifest(head + "kinematics = { pa = 36.0, pa_err = 5.0, max_radius = 40.0, "
                                 "smearing_correction = false, fix = \"vsys\", vsys = 1600.0 }\n",
                          "/d/s.toml");
  const auto& k = m.galaxies[0].kinematic;
  CHECK(*k.pa == 36.0);
  CHECK(*k.pa_err == 5.0);
  CHECK(*k.max_radius == 40.0);
  CHECK(!k.smearing_correction);
  CHECK(k.fix == "vsys");
  auto message = [&](const std::string& extra) {
    try {
      parse_manifest(head + extra, "/d/s.toml");
    } catch (const InputError& e) {
      return std::string(e.what());
    }
    return std::string();
  };
  CHECK(message("kinematics = { spin = 1 }\n").find("unknown key 'spin' in 'kinematics'") != std::string::npos);
  CHECK(message("kinematics = { inc_err = 3.0 }\n").find("line 8") != std::string::npos);
  CHECK(message("kinematics = { inc_err = 3.0 }\n").find("'inc_err' needs 'inc'") != std::string::npos);
  CHECK(message("kinematics = { smearing_correction = 1 }\n").find("must be true or false") != std::string::npos);
}
