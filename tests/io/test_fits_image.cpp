// FITS round trips, beam keywords, cubes with a Stokes axis, and refusals of
// bad files. References: the FITS standard 4.0 (BSCALE/BZERO, BLANK, NaN as
// undefined IEEE value) and the Gaussian beam solid angle (common practice).
#include <catch2/catch.hpp>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <numbers>

#include <nlohmann/json.hpp>

#include "../support/test_support.hpp"
#include "fulcrum/core/error.hpp"
#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/io/fits_table.hpp"
#include "fulcrum/sky/pixel_offsets.hpp"

using namespace fulcrum;

namespace {
Image small_image() {
  double cd[2][2] = {{-0.5 / 3600 * std::cos(0.3), 0.5 / 3600 * std::sin(0.3)},
                     {0.5 / 3600 * std::sin(0.3), 0.5 / 3600 * std::cos(0.3)}};
  Image img;
  img.nx = 13;
  img.ny = 9;
  img.data.resize(img.size());
  for (std::size_t i = 0; i < img.size(); ++i) img.data[i] = 0.25 * static_cast<double>(i) - 3.0;
  img.data[5] = std::numeric_limits<double>::quiet_NaN();
  img.wcs = CelestialWcs::from_cd("SIN", {6.0, 4.0}, {150.0, 20.0}, cd);
  img.beam = Beam{1.5, 1.1, 33.0};
  img.unit = "Jy/beam.km/s";
  return img;
}
}  // namespace

TEST_CASE("FITS image round trip keeps data, WCS, beam and unit", "[io][fits]") {
  auto dir = test::temp_dir("fits");
  Image img = small_image();
  const std::string path = (dir / "a.fits").string();
  write_image(path, img, {{"OBJECT", "mock-1", "name", false}});
  Image back = read_image(path);
  REQUIRE(back.nx == img.nx);
  REQUIRE(back.ny == img.ny);
  for (std::size_t i = 0; i < img.size(); ++i) {
    if (std::isnan(img.data[i]))
      CHECK(std::isnan(back.data[i]));
    else
      CHECK(back.data[i] == img.data[i]);  // exact: float64 written and read
  }
  REQUIRE(back.beam);
  CHECK(back.beam->bmaj_arcsec == Approx(1.5).epsilon(1e-12));
  CHECK(back.beam->bmin_arcsec == Approx(1.1).epsilon(1e-12));
  CHECK(back.beam->bpa_deg == Approx(33.0).epsilon(1e-12));
  CHECK(back.unit == "Jy/beam.km/s");
  CHECK(header_value(back.header, "OBJECT").value() == "mock-1");
  for (double x : {0.0, 3.3, 12.0})
    for (double y : {0.0, 4.4, 8.0}) {
      WorldCoord a = img.wcs.pixel_to_world({x, y}), b = back.wcs.pixel_to_world({x, y});
      CHECK(separation_arcsec(a, b) < 1e-9);
    }
}

TEST_CASE("Gaussian beam solid angle", "[io][beam]") {
  // Omega = pi * bmaj * bmin / (4 ln 2) = 1.133 bmaj bmin (common practice,
  // the standard Gaussian-beam area; e.g. Wilson, Rohlfs & Huettemeister,
  // Tools of Radio Astronomy).
  Beam b{2.0, 1.0, 0.0};
  CHECK(b.solid_angle_arcsec2() == Approx(std::numbers::pi * 2.0 / (4 * std::log(2.0))).epsilon(1e-15));
  CHECK(b.solid_angle_arcsec2() == Approx(2.0 * 1.1330900354567985).epsilon(1e-12));
  // Direct numerical integral of the Gaussian of these FWHMs.
  const double sx = 2.0 / (2 * std::sqrt(2 * std::log(2.0))), sy = 1.0 / (2 * std::sqrt(2 * std::log(2.0)));
  double sum = 0, h = 0.005;
  for (double x = -6; x <= 6; x += h)
    for (double y = -4; y <= 4; y += h) sum += std::exp(-0.5 * (x * x / (sx * sx) + y * y / (sy * sy))) * h * h;
  CHECK(sum == Approx(b.solid_angle_arcsec2()).epsilon(1e-6));
}

TEST_CASE("BSCALE/BZERO and BLANK are applied on reading", "[io][fits][python]") {
  auto dir = test::temp_dir("scaled");
  auto r = test::run_python("make_scaled_fits.py", (dir / "s.fits").string());
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  Image img = read_image((dir / "s.fits").string());
  REQUIRE(img.nx == 4);
  REQUIRE(img.ny == 3);
  // The script stores raw int16 k = 0..11 with BSCALE = 0.5, BZERO = 10 and
  // BLANK = 7 (FITS standard 4.0, sect. 4.4.2.5): value = 10 + 0.5 k.
  for (int k = 0; k < 12; ++k) {
    if (k == 7)
      CHECK(std::isnan(img.data[k]));
    else
      CHECK(img.data[k] == Approx(10.0 + 0.5 * k).epsilon(1e-15));
  }
}

TEST_CASE("cubes with a degenerate Stokes axis are read", "[io][fits]") {
  auto dir = test::temp_dir("cube");
  Cube c;
  c.nx = 5; c.ny = 4; c.nz = 3;
  c.data.resize(60);
  for (int i = 0; i < 60; ++i) c.data[i] = i;
  double cd[2][2] = {{-1.0 / 3600, 0}, {0, 1.0 / 3600}};
  c.wcs = CelestialWcs::from_cd("SIN", {2, 2}, {10, 10}, cd);
  c.unit = "Jy/beam";
  auto card = [](std::string k, std::string v) { k.resize(8, ' '); std::string s = k + "= " + v; s.resize(80, ' '); return s; };
  std::string spec = card("CTYPE3", "'VRAD    '") + card("CRVAL3", "7000000.0") + card("CDELT3", "10000.0") +
                     card("CRPIX3", "1.0") + card("CUNIT3", "'m/s     '");
  write_cube((dir / "c.fits").string(), c, spec);
  Cube back = read_cube((dir / "c.fits").string());
  CHECK(back.nz == 3);
  CHECK(back.at(4, 3, 2) == 59.0);
  CHECK(header_value(back.header, "CTYPE3").value() == "VRAD");
  // A 2-D reader refuses the cube with a hint.
  CHECK_THROWS_WITH(read_image((dir / "c.fits").string()), Catch::Contains("is this a cube"));
}

TEST_CASE("unreadable files give one-line errors naming the file", "[io][errors][python]") {
  auto dir = test::temp_dir("bad");
  const std::string missing = (dir / "nothere.fits").string();
  CHECK_THROWS_WITH(read_image(missing), Catch::Contains(missing) && Catch::Contains("no such file"));
  CHECK_THROWS_WITH(read_image(dir.string()), Catch::Contains("is a folder"));
  const std::string text = (dir / "notfits.fits").string();
  { std::ofstream(text) << std::string(4000, 'x'); }
  CHECK_THROWS_WITH(read_image(text), Catch::Contains(text) && Catch::Contains("FITS"));
  // Truncated: a valid image cut in its data part.
  Image img = small_image();
  img.nx = 100; img.ny = 100; img.data.assign(10000, 1.0);
  const std::string full = (dir / "full.fits").string(), cut = (dir / "cut.fits").string();
  write_image(full, img);
  {
    std::ifstream in(full, std::ios::binary);
    std::string bytes((std::istreambuf_iterator<char>(in)), {});
    std::ofstream(cut, std::ios::binary) << bytes.substr(0, bytes.size() / 2);
  }
  CHECK_THROWS_WITH(read_image(cut), Catch::Contains(cut) && Catch::Contains("truncated"));
  // No WCS at all.
  auto r = test::run_python("make_scaled_fits.py", (dir / "nowcs.fits").string() + " --no-wcs");
  REQUIRE(r.exit_code == 0);
  CHECK_THROWS_WITH(read_image((dir / "nowcs.fits").string()), Catch::Contains("no celestial WCS"));
  // Through the command line: one line on stderr, exit status 2.
  auto c = test::run_fulcrum("inspect " + cut);
  CHECK(c.exit_code == 2);
  CHECK(c.err.find(cut) != std::string::npos);
  CHECK(std::count(c.err.begin(), c.err.end(), '\n') == 1);
  c = test::run_fulcrum("inspect " + (dir / "nowcs.fits").string());
  CHECK(c.exit_code == 2);
  CHECK(std::count(c.err.begin(), c.err.end(), '\n') == 1);
  CHECK(!std::filesystem::exists(dir / ".cut.fits.part"));
}

TEST_CASE("inspect describes orientation, beam and use", "[io][inspect]") {
  auto dir = test::temp_dir("inspect");
  Image img = small_image();
  write_image((dir / "m.fits").string(), img);
  auto r = test::run_fulcrum("inspect " + (dir / "m.fits").string());
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
  CHECK(r.out.find("pixels per beam") != std::string::npos);
  CHECK(r.out.find("integrated-intensity map") != std::string::npos);
  CHECK(r.out.find("116 of 117") != std::string::npos);
  r = test::run_fulcrum("inspect --json " + (dir / "m.fits").string());
  auto j = nlohmann::json::parse(r.out);
  CHECK(j["pixel_scale_arcsec"][0].get<double>() == Approx(0.5).epsilon(1e-6));
}

TEST_CASE("FITS binary tables are written with units", "[io][fits][python]") {
  auto dir = test::temp_dir("table");
  std::vector<TableColumn> cols;
  cols.push_back({"name", "", "galaxy name", std::vector<std::string>{"alpha", "beta-two"}});
  cols.push_back({"flux", "Jy km/s", "total flux", std::vector<double>{1.5, -2.25}});
  cols.push_back({"n", "", "count", std::vector<std::int64_t>{3, 4}});
  const std::string path = (dir / "t.fits").string();
  write_fits_table(path, "SAMPLE", cols);
  auto r = test::run_python("check_fits_table.py", path);
  INFO(r.out << r.err);
  CHECK(r.exit_code == 0);
}
