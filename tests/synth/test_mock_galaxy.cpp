// Truth tests of the mock galaxies: the velocity field against the
// tilted-ring formula (Begeman 1989, A&A 223, 47: v = vsys + vrot sin i cos
// theta, so vsys +/- vrot sin i on the major axis), the line-map flux
// against the stated total with the Gaussian beam solid angle
// Omega = pi bmaj bmin / (4 ln 2) (common practice), noise levels,
// determinism, orientation on rotated and flipped grids, and parameter input.
#include <catch2/catch.hpp>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <numbers>
#include <set>
#include <sstream>

#include <Eigen/LU>
#include <nlohmann/json.hpp>

#include "../support/test_support.hpp"
#include "fulcrum/core/error.hpp"
#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/sky/offset_frame.hpp"
#include "fulcrum/sky/pixel_offsets.hpp"
#include "fulcrum/synth/mock_galaxy.hpp"
#include "fulcrum/core/random.hpp"

using namespace fulcrum;
using namespace fulcrum::synth;

using fulcrum::test::slurp;

namespace {

// Tolerances, each with its source.
constexpr double kVelocityTolKms = 1e-6;   // exact formula; limited by double rounding and tan(r) ~ r
constexpr double kFluxRelTol = 1e-3;       // issue requirement for the noise-free map
constexpr double kPaTolDeg = 0.5;          // pixel sampling of a symmetric disc in a round aperture

MockGalaxy small_mock() {
  MockGalaxy g;
  g.name = "test-disc";
  g.grid.nx = 96;
  g.grid.ny = 96;
  g.grid.pixel_arcsec = 0.6;
  g.disc_radius_arcsec = 14.0;
  g.scale_length_arcsec = 4.0;
  g.tail_length_arcsec = 16.0;
  g.optical.enabled = false;
  return g;
}

double map_flux(const Image& im) {
  PixelOffsets off(im, im.wcs.pixel_to_world({0.5 * (im.nx - 1), 0.5 * (im.ny - 1)}));
  double s = 0.0;
  for (double v : im.data) s += v;
  return s * off.pixel_area_arcsec2() / im.beam->solid_angle_arcsec2();
}


}  // namespace

TEST_CASE("mock velocity field on the major axis is vsys +/- vrot sin i", "[synth]") {
  // The +y pixel axis points to PA = rotation, so with an odd grid centred on
  // the galaxy the central column is the major axis when pa = rotation.
  for (double rot : {0.0, 35.0, 200.0}) {
    for (bool flip : {false, true}) {
      MockGalaxy g = small_mock();
      g.grid.nx = 61;
      g.grid.ny = 61;
      g.grid.rotation_deg = rot;
      g.grid.flip = flip;
      g.pa_deg = rot;
      g.intensity_rms = 0.0;
      auto p = make_mock(g);
      const int c = 30;
      const double sini = std::sin(g.inc_deg * std::numbers::pi / 180.0);
      for (int k = -25; k <= 25; ++k) {
        if (k == 0) continue;
        const double r = std::abs(k) * g.grid.pixel_arcsec;
        const double vrot = g.vflat_kms * (2.0 / std::numbers::pi) * std::atan(r / g.r_turn_arcsec);
        const double expected = g.vsys_kms + (k > 0 ? 1.0 : -1.0) * vrot * sini;
        INFO("rotation " << rot << " flip " << flip << " k " << k);
        CHECK(std::abs(p.velocity_model.at(c, c + k) - expected) < kVelocityTolKms);
      }
      CHECK(std::abs(p.velocity_model.at(c, c) - g.vsys_kms) < kVelocityTolKms);
    }
  }
}

TEST_CASE("receding side lies at the kinematic PA on rotated and flipped grids", "[synth][sky]") {
  struct Case { double rot; bool flip; double pa; std::string proj; };
  for (const auto& cs : {Case{0.0, false, 60.0, "SIN"}, Case{35.0, true, 60.0, "SIN"},
                         Case{-120.0, false, 250.0, "TAN"}, Case{200.0, true, 310.0, "TAN"}}) {
    MockGalaxy g = small_mock();
    g.grid.rotation_deg = cs.rot;
    g.grid.flip = cs.flip;
    g.grid.projection = cs.proj;
    g.pa_deg = cs.pa;
    g.grid.centre_east_arcsec = 0.31;
    g.grid.centre_north_arcsec = -0.17;
    auto p = make_mock(g);
    // (v - vsys)-weighted mean sky offset within 10 arcsec of the centre,
    // with offsets from the WCS and sky/offset_frame (not from pixel axes).
    OffsetFrame frame({g.ra_deg, g.dec_deg});
    double se = 0.0, sn = 0.0;
    for (int y = 0; y < p.velocity_model.ny; ++y)
      for (int x = 0; x < p.velocity_model.nx; ++x) {
        SkyOffset o = frame.to_offset(p.velocity_model.wcs.pixel_to_world({double(x), double(y)}));
        if (o.norm() > 10.0) continue;
        const double w = p.velocity_model.at(x, y) - g.vsys_kms;
        se += w * o.east;
        sn += w * o.north;
      }
    const double pa = SkyOffset{se, sn}.pa_deg();
    INFO("rotation " << cs.rot << " flip " << cs.flip << " receding PA " << pa);
    CHECK(std::abs(angle_diff_deg(pa, cs.pa)) < kPaTolDeg);
    // The truth file says the same, and the tail lies at its PA: the
    // brightest model pixel beyond the disc is along the tail.
    CHECK(p.truth["truth"]["receding_direction_pa_deg"].get<double>() == Approx(wrap_pa_deg(cs.pa)));
    // The centre's FITS pixel in the truth file is where the WCS puts the centre.
    PixelCoord pc = p.velocity_model.wcs.world_to_pixel({g.ra_deg, g.dec_deg});
    CHECK(p.truth["truth"]["centre"]["fits_pixel_line_grid"]["x"].get<double>() == Approx(pc.x + 1.0));
  }
}

TEST_CASE("the tail and the leading excess lie on the right sides", "[synth][sky]") {
  MockGalaxy g = small_mock();
  g.grid.rotation_deg = 140.0;
  g.grid.flip = true;
  g.tail_pa_deg = 300.0;
  g.leading_excess = 0.5;
  g.tail_flux_fraction = 0.0;
  g.intensity_rms = 0.0;
  auto p = make_mock(g);
  OffsetFrame frame({g.ra_deg, g.dec_deg});
  SkyOffset lead = direction_of(120.0 * degrees);
  double l = 0.0, t = 0.0;
  for (int y = 0; y < p.intensity_model.ny; ++y)
    for (int x = 0; x < p.intensity_model.nx; ++x) {
      SkyOffset o = frame.to_offset(p.intensity_model.wcs.pixel_to_world({double(x), double(y)}));
      (o.east * lead.east + o.north * lead.north > 0 ? l : t) += p.intensity_model.at(x, y);
    }
  CHECK(l > 1.3 * t);
  CHECK(p.truth["truth"]["intrinsic_asymmetry"].get<double>() > 0.2);
  // A tail only: all extra flux on the trailing side.
  g.leading_excess = 0.0;
  g.tail_flux_fraction = 0.3;
  auto q = make_mock(g);
  CHECK(q.truth["truth"]["intrinsic_asymmetry"].get<double>() == Approx(-0.3).margin(2e-3));
}

TEST_CASE("noise-free line map integrates to the stated total flux", "[synth][flux]") {
  struct Case { double rot; bool flip; double strip; double excess; std::string proj; double pix; };
  for (const auto& cs : {Case{0.0, false, 0.0, 0.0, "SIN", 0.6}, Case{35.0, true, 0.3, 0.4, "TAN", 0.6},
                         Case{-70.0, false, 0.9, -0.3, "SIN", 0.45}, Case{10.0, true, 0.0, 1.0, "ARC", 0.8}}) {
    MockGalaxy g = small_mock();
    g.grid.rotation_deg = cs.rot;
    g.grid.flip = cs.flip;
    g.grid.projection = cs.proj;
    g.grid.pixel_arcsec = cs.pix;
    g.grid.nx = g.grid.ny = static_cast<int>(60.0 / cs.pix);
    g.stripped_fraction = cs.strip;
    g.leading_excess = cs.excess;
    g.total_flux_jykms = 12.5;
    auto p = make_mock(g);
    const double f = map_flux(p.intensity_model);
    INFO("case rotation " << cs.rot << " strip " << cs.strip << ": map flux " << f);
    CHECK(std::abs(f / g.total_flux_jykms - 1.0) < kFluxRelTol);
    CHECK(p.truth["truth"]["flux_in_map_jykms"].get<double>() == Approx(f).epsilon(1e-9));
    // The rendering integrates the analytic profile (independent normalisation).
    CHECK(std::abs(p.truth["truth"]["render_ratio_disc"].get<double>() - 1.0) < kFluxRelTol);
  }
  SECTION("a map edge that cuts the galaxy is recorded in the truth") {
    MockGalaxy g = small_mock();
    g.grid.nx = 20;  // 12 arcsec wide (23 with the work margin): the disc sticks out
    g.grid.ny = 20;
    auto p = make_mock(g);
    const double f = map_flux(p.intensity_model);
    CHECK(f < 0.95 * g.total_flux_jykms);
    CHECK(p.truth["truth"]["flux_in_map_jykms"].get<double>() == Approx(f).epsilon(1e-9));
    CHECK_FALSE(p.truth["truth"]["disc_contained_in_work_grid"].get<bool>());
  }
}

TEST_CASE("mock noise has the stated rms", "[synth][noise]") {
  MockGalaxy g = small_mock();
  g.grid.nx = g.grid.ny = 160;
  g.grid.pixel_arcsec = 1.0;   // ~3.6 pixels per beam: ~7000 independent samples
  g.intensity_rms = 0.02;
  g.velocity_noise_floor_kms = 2.0;
  g.cube.enabled = true;
  g.cube.n_channels = 8;
  g.cube.noise_rms = 0.004;
  g.cube.channel_width_kms = 200.0;
  auto p = make_mock(g);
  double s2 = 0.0;
  for (std::size_t i = 0; i < p.intensity.data.size(); ++i) {
    const double d = p.intensity.data[i] - p.intensity_model.data[i];
    s2 += d * d;
  }
  const double rms = std::sqrt(s2 / p.intensity.data.size());
  // ~7000 independent beams: the sample rms scatters by ~1/sqrt(2*7000) = 0.8%;
  // 4% is five of those.
  CHECK(rms == Approx(g.intensity_rms).epsilon(0.04));
  CHECK(p.intensity_error.data[0] == g.intensity_rms);
  // Velocity noise divided by its error is unit normal on the kept pixels.
  double v2 = 0.0;
  std::size_t nv = 0;
  for (std::size_t i = 0; i < p.velocity.data.size(); ++i)
    if (std::isfinite(p.velocity.data[i])) {
      const double z = (p.velocity.data[i] - p.velocity_model.data[i]) / p.velocity_error.data[i];
      v2 += z * z;
      ++nv;
    }
  REQUIRE(nv > 100);
  CHECK(std::sqrt(v2 / nv) == Approx(1.0).epsilon(0.25));  // few hundred beams only
  // Cube: the first channels hold no line (200 km/s channels), so they are noise.
  const auto& cube = *p.cube;
  double c2 = 0.0;
  for (std::size_t i = 0; i < cube.plane_size(); ++i) c2 += cube.data[i] * cube.data[i];
  CHECK(std::sqrt(c2 / cube.plane_size()) == Approx(g.cube.noise_rms).epsilon(0.04));
}

TEST_CASE("noise-free cube channels sum to the noise-free line map", "[synth][cube]") {
  for (std::string type : {"VRAD", "VOPT", "FREQ"}) {
    MockGalaxy g = small_mock();
    g.grid.nx = g.grid.ny = 48;
    g.grid.pixel_arcsec = 1.0;
    g.cube.enabled = true;
    g.cube.noise_rms = 0.0;
    g.cube.spectral_type = type;
    g.cube.reverse_channels = type == "VOPT";
    g.cube.n_channels = 60;
    g.cube.channel_width_kms = 10.0;
    auto p = make_mock(g);
    const auto& c = *p.cube;
    double worst = 0.0;
    for (std::size_t i = 0; i < c.plane_size(); ++i) {
      double s = 0.0;
      for (int z = 0; z < c.nz; ++z) s += c.data[i + c.plane_size() * z];
      worst = std::max(worst, std::abs(s * g.cube.channel_width_kms - p.intensity_model.data[i]));
    }
    INFO(type);
    // Line (|v - vsys| <= 180 sin 55 + 4 sigma = 196 km/s) inside the 600 km/s band: exact to rounding.
    CHECK(worst < 1e-9);
    CHECK(header_value(p.cube_spectral_cards, "CTYPE3").value() == type);
    CHECK(header_value(p.cube_spectral_cards, "RESTFRQ").has_value());
  }
}

TEST_CASE("same seed gives the same bytes, another seed other noise", "[synth][determinism]") {
  MockGalaxy g = small_mock();
  g.optical.enabled = true;
  g.hole_fraction = 0.1;
  g.cube.enabled = true;
  g.cube.n_channels = 8;
  auto d1 = test::temp_dir("mock-a"), d2 = test::temp_dir("mock-b"), d3 = test::temp_dir("mock-c");
  auto files = write_mock(d1.string(), make_mock(g));
  write_mock(d2.string(), make_mock(g));
  REQUIRE(files.size() == 9);
  for (const auto& f : files) {
    INFO(f);
    CHECK(slurp(d1 / f) == slurp(d2 / f));
  }
  g.seed = 2;
  write_mock(d3.string(), make_mock(g));
  CHECK(slurp(d1 / "mom0.fits") != slurp(d3 / "mom0.fits"));
  CHECK(slurp(d1 / "mom0_model.fits") == slurp(d3 / "mom0_model.fits"));
  // The random numbers themselves: uniform in [0, 1), normals with unit variance.
  fulcrum::Random rng(fulcrum::splitmix64(5));
  double s = 0.0, s2 = 0.0;
  for (int i = 0; i < 20000; ++i) {
    double x = rng.normal();
    s += x;
    s2 += x * x;
  }
  CHECK(std::abs(s / 20000) < 0.03);          // 4 sigma of the mean
  CHECK(s2 / 20000 == Approx(1.0).epsilon(0.04));
}

TEST_CASE("the written files read back with their WCS, beam and unit", "[synth][fits]") {
  MockGalaxy g = small_mock();
  g.optical.enabled = true;
  g.optical.grid.rotation_deg = 25.0;
  g.optical.offset_east_arcsec = 1.2;
  g.optical.offset_north_arcsec = -0.8;
  auto dir = test::temp_dir("mock-read");
  auto p = make_mock(g);
  write_mock(dir.string(), p);
  Image mom0 = read_image((dir / "mom0.fits").string());
  CHECK(mom0.unit == "Jy/beam.km/s");
  REQUIRE(mom0.beam);
  CHECK(mom0.beam->bmaj_arcsec == Approx(g.bmaj_arcsec));
  Image vel = read_image((dir / "vel.fits").string());
  CHECK(vel.unit == "km/s");
  CHECK(vel.finite_count() > 200);
  CHECK(vel.finite_count() < vel.size());
  Image opt = read_image((dir / "opt.fits").string());
  CHECK(opt.nx == g.optical.grid.nx);
  // The photometric centre is where the optical light peaks (through the WCS).
  auto nlo = p.truth["truth"]["photometric_centre"];
  WorldCoord phot{nlo["ra_deg"].get<double>(), nlo["dec_deg"].get<double>()};
  PixelCoord pp = opt.wcs.world_to_pixel(phot);
  const Image& om = *p.optical_model;
  int bx = 0, by = 0;
  for (int y = 0; y < om.ny; ++y)
    for (int x = 0; x < om.nx; ++x)
      if (om.at(x, y) > om.at(bx, by) &&
          OffsetFrame(phot).to_offset(om.wcs.pixel_to_world({double(x), double(y)})).norm() < 3.0) {
        bx = x;
        by = y;
      }
  CHECK(std::hypot(bx - pp.x, by - pp.y) < 0.75);
  CHECK(OffsetFrame({g.ra_deg, g.dec_deg}).to_offset(phot).east == Approx(1.2).epsilon(1e-6));
  nlohmann::json truth = nlohmann::json::parse(slurp(dir / "truth.json"));
  CHECK(truth["parameters"]["name"] == "test-disc");
}

TEST_CASE("mock parameters from TOML, with errors that name the line", "[synth][toml]") {
  auto dir = test::temp_dir("mock-toml");
  const auto good = dir / "good.toml";
  std::ofstream(good) << "[galaxy]\nname = \"toml-disc\"\nseed = 9\npa_deg = 123.5\ninc_deg = 40\n"
                         "[galaxy.grid]\nnx = 64\nflip = true\n"
                         "[galaxy.optical]\nenabled = false\n[galaxy.optical.grid]\nrotation_deg = 12.0\n"
                         "[galaxy.cube]\nenabled = true\nspectral_type = \"FREQ\"\n";
  MockGalaxy g = mock_from_toml(good.string());
  CHECK(g.name == "toml-disc");
  CHECK(g.seed == 9);
  CHECK(g.pa_deg == 123.5);
  CHECK(g.inc_deg == 40.0);
  CHECK(g.grid.nx == 64);
  CHECK(g.grid.flip);
  CHECK_FALSE(g.optical.enabled);
  CHECK(g.optical.grid.rotation_deg == 12.0);
  CHECK(g.cube.spectral_type == "FREQ");
  // JSON carries the same values.
  auto j = mock_to_json(g);
  CHECK(j["grid"]["nx"] == 64);
  CHECK(j["optical"]["grid"]["rotation_deg"] == 12.0);

  auto expect_error = [&](const std::string& text, const std::string& needle) {
    const auto bad = dir / "bad.toml";
    std::ofstream(bad) << text;
    try {
      mock_from_toml(bad.string());
      FAIL("no error for: " << text);
    } catch (const InputError& e) {
      INFO(e.what());
      CHECK(std::string(e.what()).find(needle) != std::string::npos);
      CHECK(std::string(e.what()).find("bad.toml") != std::string::npos);
    }
  };
  expect_error("[galaxy]\nname = \"x\"\npa_dg = 3\n", "line 3: unknown key 'pa_dg'");
  expect_error("[galaxy]\ninc_deg = \"high\"\n", "line 2: key 'inc_deg' in [galaxy] must be a number");
  expect_error("[galaxy]\n[galaxy.grid]\nnx = 1.5\n", "must be an integer");
  expect_error("[galaxy]\ninc_deg = 95\n", "inc_deg");
  expect_error("[galaxy\n", "line 1");
  expect_error("[other]\n", "unknown top-level key");
  CHECK_THROWS_AS(mock_from_toml((dir / "missing.toml").string()), InputError);
}

TEST_CASE("fulcrum synth writes a mock and the demo sample", "[synth][cli]") {
  auto dir = test::temp_dir("synth-cli");
  auto r = test::run_fulcrum("synth --out " + (dir / "one").string() +
                             " --pa-deg 100 --grid-nx 64 --grid-ny 64 --optical-enabled=false --seed 4");
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  auto truth = nlohmann::json::parse(slurp(dir / "one" / "truth.json"));
  CHECK(truth["parameters"]["pa_deg"] == 100.0);
  CHECK(truth["parameters"]["grid"]["nx"] == 64);
  CHECK(truth["parameters"]["optical"]["enabled"] == false);
  CHECK_FALSE(std::filesystem::exists(dir / "one" / "opt.fits"));
  // Refuses to overwrite, and bad values are one-line errors.
  auto again = test::run_fulcrum("synth --out " + (dir / "one").string());
  CHECK(again.exit_code != 0);
  CHECK(again.err.find("--force") != std::string::npos);
  auto bad = test::run_fulcrum("synth --out " + (dir / "bad").string() + " --inc-deg 120");
  CHECK(bad.exit_code == 2);
  CHECK(bad.err.find("inc_deg") != std::string::npos);
  CHECK_FALSE(std::filesystem::exists(dir / "bad" / "truth.json"));

  auto demo = test::run_fulcrum("synth --demo-sample --out " + (dir / "demo").string());
  INFO(demo.err);
  REQUIRE(demo.exit_code == 0);
  const std::string manifest = slurp(dir / "demo" / "sample.toml");
  const auto sample = demo_sample();
  CHECK(sample.size() >= 5);
  CHECK(sample.size() <= 7);
  std::set<std::string> verdicts;
  for (const auto& g : sample) {
    verdicts.insert(g.expected_verdict);
    CHECK(std::filesystem::exists(dir / "demo" / g.name / "truth.json"));
    CHECK(manifest.find("name = \"" + g.name + "\"") != std::string::npos);
    auto t = nlohmann::json::parse(slurp(dir / "demo" / g.name / "truth.json"));
    CHECK(t["truth"]["expected_verdict"] == g.expected_verdict);
  }
  for (const char* v : {"robust", "centre-sensitive", "undetermined", "reversed"}) CHECK(verdicts.count(v) >= 1);
}
