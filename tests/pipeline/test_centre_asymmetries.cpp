// A at every kind of centre, external centres given as NAME=RA,DEC,ERR on
// the command line and in the manifest, and the sentence that quotes them
// (pipeline/centre_asymmetries.hpp, pipeline/input_settings.hpp). Invented
// discs (pipeline_fixtures.hpp), run end to end.
#include <catch2/catch.hpp>
#include <filesystem>
#include <fstream>
#include <nlohmann/json.hpp>

#include "../support/test_support.hpp"
#include "fulcrum/core/settings_check.hpp"
#include "fulcrum/pipeline/input_settings.hpp"
#include "pipeline_fixtures.hpp"

namespace fs = std::filesystem;
using namespace fulcrum;

namespace {

std::string centre_text(const test::TinyDisc& d, double east_arcsec, double err_arcsec, const std::string& name) {
  const WorldCoord w = OffsetFrame({d.ra, d.dec}).to_world({east_arcsec, 0.0});
  char b[160];
  std::snprintf(b, sizeof b, "%s=%.8f,%.8f,%g", name.c_str(), w.ra_deg, w.dec_deg, err_arcsec);
  return b;
}

const nlohmann::json* find_id(const nlohmann::json& list, const std::string& id) {
  for (const auto& c : list)
    if (c["id"] == id) return &c;
  return nullptr;
}

}  // namespace

TEST_CASE("centre_from: the text form and its refusals", "[pipeline][settings]") {
  const auto c = pipeline::setting::centre_from("catalogue=187.7059,-12.3911,0.5");
  CHECK(c.name == "catalogue");
  CHECK(c.ra_deg == 187.7059);
  CHECK(c.dec_deg == -12.3911);
  CHECK(c.err_arcsec == 0.5);
  for (const char* bad : {"catalogue", "=1,2,3", "c=1,2", "c=1,2,3,4", "c=x,2,3", "c=360,0,1", "c=1,91,1",
                          "c=1,2,0", "c=1,2,-1", "c=1,2,nan", "a b=1,2,3", "kinematic-rings=1,2,3"})
    CHECK_THROWS_AS(pipeline::setting::centre_from(bad), SettingError);
  CHECK_THROWS_WITH(pipeline::setting::centres_from({"a=1,2,3", "a=2,3,4"}), Catch::Contains("not given twice"));
}

TEST_CASE("analyse --centre-from: an external centre gets its own A and enters the sentence", "[pipeline]") {
  auto dir = test::temp_dir("external-centre");
  test::TinyDisc d;
  d.name = "solo";
  test::write_tiny_disc(dir / "solo", d);
  const std::string base = "analyse --velocity " + (dir / "solo" / "vel.fits").string() + " --intensity " +
                           (dir / "solo" / "mom0.fits").string() + " --intensity-error " +
                           (dir / "solo" / "mom0_err.fits").string() + " --draws 400 --tail-pa 300 ";
  // One centre on the disc, one far off the map.
  auto r = test::run_fulcrum(base + "--centre-from " + centre_text(d, 0.4, 0.3, "cat") + " --centre-from " +
                             centre_text(d, 3600.0, 1.0, "far") + " --out " + (dir / "res").string());
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  const auto rep = nlohmann::json::parse(test::slurp(dir / "res" / "report.json"));
  const auto* cat = find_id(rep["centres"], "cat");
  REQUIRE(cat);
  CHECK((*cat)["status"] == "ok");
  CHECK((*cat)["cov_arcsec2"][0][0].get<double>() == Approx(0.09));
  const auto* far = find_id(rep["centres"], "far");
  REQUIRE(far);
  CHECK((*far)["status"] == "failed");
  CHECK((*far)["reason"].get<std::string>().find("outside the line map") != std::string::npos);
  const auto* at = find_id(rep["split"]["at_centres"], "cat");
  REQUIRE(at);
  // Shifting the centre changes A (the disc is lopsided), and the sentence
  // quotes it with its error.
  CHECK((*at)["asymmetry"].get<double>() != rep["split"]["asymmetry"].get<double>());
  const std::string statement = rep["statement"];
  CHECK(statement.find("At the kinematic centre (kinematic-rings) A = ") != std::string::npos);
  CHECK(statement.find("at cat A = ") != std::string::npos);

  // A bad value: one line naming the flag and the value, nothing written.
  auto bad = test::run_fulcrum(base + "--centre-from cat=400,1,1 --out " + (dir / "bad").string());
  CHECK(bad.exit_code == 2);
  CHECK(bad.err.find("--centre-from = 'cat=400,1,1' is not allowed: must be an RA within [0, 360) deg") !=
        std::string::npos);
  CHECK(std::count(bad.err.begin(), bad.err.end(), '\n') == 1);
  CHECK(!fs::exists(dir / "bad" / "report.json"));
}

TEST_CASE("manifest centre_from: A at the external centre in the sample table, bad values name the line",
          "[pipeline]") {
  auto dir = test::temp_dir("external-manifest");
  test::TinyDisc d;
  d.name = "tiny-1";
  test::write_tiny_disc(dir / d.name, d);
  auto manifest = [&](const std::string& centre_from) {
    std::ofstream m(dir / "sample.toml");
    m << "[sample]\nname = \"invented\"\ndraws = 400\n\n[[galaxy]]\nname = \"tiny-1\"\nvelocity = \"tiny-1/vel.fits\"\n"
         "intensity = \"tiny-1/mom0.fits\"\nintensity_error = \"tiny-1/mom0_err.fits\"\ntail_pa_deg = 300\n"
         "centre_from = [\"" << centre_from << "\"]\n";
  };
  manifest(centre_text(d, -0.3, 0.2, "lit"));
  auto r = test::run_fulcrum("run " + (dir / "sample.toml").string() + " --out " + (dir / "out").string());
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  const std::string ecsv = test::slurp(dir / "out" / "robustness.ecsv");
  CHECK(ecsv.find("name: 'asymmetry_at_lit'") != std::string::npos);
  CHECK(ecsv.find("name: 'asymmetry_at_lit_err'") != std::string::npos);
  CHECK(ecsv.find("name: 'asymmetry_kinematic'") != std::string::npos);

  manifest("lit=10,95,1");
  auto bad = test::run_fulcrum("run " + (dir / "sample.toml").string() + " --out " + (dir / "out2").string());
  CHECK(bad.exit_code == 2);
  CHECK(bad.err.find("line 11") != std::string::npos);
  CHECK(bad.err.find("centre_from = 'lit=10,95,1' is not allowed: must be a Dec within [-90, 90] deg") !=
        std::string::npos);
  CHECK(!fs::exists(dir / "out2" / "sample.json"));
}
