// Tests of the scan and the flip distance (robustness/scan.hpp,
// robustness/flip_distance.hpp): scan values equal direct sums, the cube's
// WCS is checked with astropy, and the flip distance equals the zero found
// by bisection on direct sums of exact pixel fractions.
#include <catch2/catch.hpp>

#include <limits>

#include <nlohmann/json.hpp>

#include "../support/test_support.hpp"
#include "../split/split_mock.hpp"
#include "fulcrum/io/atomic_file.hpp"
#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/robustness/flip_distance.hpp"
#include "fulcrum/robustness/scan.hpp"

using namespace fulcrum;
using namespace fulcrum::robustness;

namespace {
// Bisection on the brute-force direct sum (independent of the engine).
double direct_zero(const split::PixelSet& px, Angle tail, double a, double b) {
  auto A = [&](double s) {
    const double T = split::direct_trailing(px, tail, s);
    double S = 0.0;
    for (double v : px.value) S += v;
    return (S - 2.0 * T) / S;
  };
  double fa = A(a);
  for (int i = 0; i < 200 && b - a > 1e-13; ++i) {
    const double m = 0.5 * (a + b);
    const double fm = A(m);
    if ((fm > 0) == (fa > 0)) {
      a = m;
      fa = fm;
    } else {
      b = m;
    }
  }
  return 0.5 * (a + b);
}
constexpr double kFlipTolArcsec = 1e-9;  // both bisect exact sums to ~1e-12
}  // namespace

TEST_CASE("flip distance equals bisection on direct sums", "[robustness][flip]") {
  for (double rot : {0.0, 41.0}) {
    test::TinyMock m;
    m.rotation_deg = rot;
    m.eps = 0.15;
    m.rms = 0.01;
    const auto maps = test::make_tiny_mock(m);
    split::SplitOptions so;
    so.centre = m.centre;
    so.aperture = split::ApertureSpec{9.0, 60.0, 0.64, std::nullopt};
    const auto pr = split::prepare_split(maps.map, so);
    for (double a : {m.tail_pa_deg, m.tail_pa_deg + 17.0, m.tail_pa_deg - 33.0}) {
      const split::ProjectionEngine e(pr.pixels, a * degrees);
      const SkyOffset c0{0.2, -0.1};
      const int sg = e.asymmetry(e.s_of(c0)) > 0 ? 1 : -1;
      const AngleFlip f = flip_at_angle(e, c0, sg);
      REQUIRE(f.found);
      // Bracket the direct-sum zero on the side the engine found, one step wide.
      const double dir = f.s_zero >= f.s0 ? 1.0 : -1.0;
      const double z = direct_zero(pr.pixels, a * degrees, f.s0, f.s0 + dir * (f.distance_arcsec + 0.05));
      CHECK(std::abs(z - f.s_zero) < kFlipTolArcsec);
      // No sign change between s0 and the zero (smallest displacement), on direct sums.
      for (int k = 1; k < 50; ++k) {
        const double s = f.s0 + dir * f.distance_arcsec * k / 50.0;
        const double T = split::direct_trailing(pr.pixels, a * degrees, s);
        CHECK(((e.total() - 2 * T) > 0 ? 1 : -1) == sg);
      }
      // The other direction has no nearer zero.
      for (int k = 1; k < 50; ++k) {
        const double s = f.s0 - dir * f.distance_arcsec * k / 50.0;
        const double T = split::direct_trailing(pr.pixels, a * degrees, s);
        CHECK(((e.total() - 2 * T) > 0 ? 1 : -1) == sg);
      }
      // Direction: a move towards the leading side lowers T... the move along
      // direction_pa by the distance lands on the zero.
      const SkyOffset move = direction_of(f.direction_pa_deg * degrees) * f.distance_arcsec;
      CHECK(e.asymmetry(e.s_of(c0 + move)) == Approx(0.0).margin(1e-9));
    }
    FlipOptions fo;
    fo.tail_pa_deg = m.tail_pa_deg;
    fo.tail_pa_err_deg = 10.0;
    fo.angle_step_deg = 2.0;
    const FlipSummary fs = flip_distance(pr, fo);
    CHECK(fs.per_angle.size() == 11);
    CHECK(fs.worst.distance_arcsec <= fs.nominal.distance_arcsec);
    CHECK(fs.nominal_beams > 0.0);
  }
}

TEST_CASE("scan equals direct sums and its cube WCS is right", "[robustness][scan][python]") {
  test::TinyMock m;
  m.rotation_deg = 25.0;
  const auto maps = test::make_tiny_mock(m);
  split::SplitOptions so;
  so.centre = m.centre;
  const auto pr = split::prepare_split(maps.model, so);
  ScanOptions o;
  o.tail_pa_deg = m.tail_pa_deg;
  o.half_width_arcsec = 2.0;
  o.step_arcsec = 0.5;
  o.angle_half_width_deg = 6.0;
  o.angle_step_deg = 3.0;
  const ScanSummary s = scan(pr, o);
  REQUIRE(s.n_east == 9);
  REQUIRE(s.n_north == 9);
  REQUIRE(s.n_angle == 5);
  CHECK(s.evaluations == 405);
  nlohmann::json spec;
  spec["reference"] = {m.centre.ra_deg, m.centre.dec_deg};
  spec["east"] = s.east;
  spec["north"] = s.north;
  spec["angles"] = s.angles;
  for (int k : {0, 2, 4})
    for (int i : {0, 4, 8})
      for (int j : {1, 7}) {
        const auto h = split::direct_halves(pr.pixels, s.angles[k] * degrees, {s.east[i], s.north[j]});
        CHECK(s.at(i, j, k) == Approx(h.asymmetry()).epsilon(1e-10).margin(1e-12));
        spec["points"].push_back({{"i", i}, {"j", j}, {"k", k}, {"asymmetry", h.asymmetry()}});
      }
  std::size_t pos = 0;
  for (double a : s.asymmetry) pos += a > 0;
  CHECK(s.fraction_positive == Approx(double(pos) / s.asymmetry.size()));
  for (const auto& pa : s.per_angle) CHECK(pa.zero_found);
  const auto dir = test::temp_dir("scan");
  write_scan_cube((dir / "scan.fits").string(), s);
  write_text_file((dir / "points.json").string(), spec.dump());
  const auto r = test::run_python("check_scan_cube.py", (dir / "scan.fits").string() + " " +
                                                            (dir / "points.json").string());
  INFO(r.out << r.err);
  CHECK(r.exit_code == 0);
}

TEST_CASE("split and scan command lines", "[robustness][cli]") {
  test::TinyMock m;
  m.rms = 0.01;
  const auto maps = test::make_tiny_mock(m);
  const auto dir = test::temp_dir("cli");
  const std::string map = (dir / "mom0.fits").string(), err = (dir / "err.fits").string();
  write_image(map, maps.map);
  write_image(err, maps.error);
  char centre[64];
  std::snprintf(centre, sizeof centre, "%.10f,%.10f", m.centre.ra_deg, m.centre.dec_deg);
  const std::string json = (dir / "split.json").string();
  auto r = test::run_fulcrum("split --intensity " + map + " --intensity-error " + err + " --centre " +
                             centre + " --tail-pa 300 --aperture-radius 9 --aperture-pa 60 "
                             "--aperture-axis-ratio 0.64 --json " + json);
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
  const auto j = nlohmann::json::parse(test::run_shell("cat " + json).out);
  for (const char* k : {"leading_flux", "trailing_flux", "flux_unit", "asymmetry", "asymmetry_err"})
    CHECK(j.contains(k));
  CHECK(j["flux_unit"] == "Jy km/s");
  CHECK(j["asymmetry"].get<double>() > 0.0);
  // The library gives the same numbers.
  split::SplitOptions so;
  so.centre = m.centre;
  so.tail_pa_deg = 300;
  so.aperture = split::ApertureSpec{9, 60, 0.64, std::nullopt};
  so.error_map = &maps.error;
  CHECK(j["asymmetry"].get<double>() == Approx(split::split_halves(maps.map, so).asymmetry).epsilon(1e-12));
  // Refuses to overwrite without --force; bad centre; missing file.
  r = test::run_fulcrum("split --intensity " + map + " --centre " + std::string(centre) +
                        " --tail-pa 300 --json " + json);
  CHECK(r.exit_code == 2);
  CHECK(r.err.find("--force") != std::string::npos);
  r = test::run_fulcrum("split --intensity " + map + " --centre 150 --tail-pa 300");
  CHECK(r.exit_code == 2);
  r = test::run_fulcrum("split --intensity " + (dir / "nope.fits").string() + " --centre 1,2 --tail-pa 3");
  CHECK(r.exit_code == 2);
  CHECK(r.err.find("nope.fits") != std::string::npos);
  // scan
  const std::string cube = (dir / "scan.fits").string();
  r = test::run_fulcrum("scan --intensity " + map + " --centre " + std::string(centre) +
                        " --tail-pa 300 --half-width 2 --step 0.5 --angle-half-width 10 "
                        "--angle-step 5 --out " + cube + " --json " + (dir / "scan.json").string());
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
  CHECK(r.out.find("405 evaluations") != std::string::npos);
  CHECK(r.out.find(" s (") != std::string::npos);
  const Cube c = read_cube(cube);
  CHECK(c.nx == 9);
  CHECK(c.nz == 5);
  r = test::run_fulcrum("scan --intensity " + map + " --centre " + std::string(centre) +
                        " --tail-pa 300 --half-width 2 --step 0 --angle-half-width 10 "
                        "--angle-step 5 --out " + (dir / "bad.fits").string());
  CHECK(r.exit_code == 2);
  CHECK(!std::filesystem::exists(dir / "bad.fits"));
}

TEST_CASE("scan size is checked from the settings before anything is allocated", "[robustness][scan][limits]") {
  // Grid points = (2 floor(w/s) + 1)^2 centre offsets x (2 floor(aw/as) + 1)
  // angles; limit kMaxScanPoints (docs/reliability.md, "Limits").
  robustness::ScanOptions o;
  o.half_width_arcsec = 5.0;
  o.step_arcsec = 0.5;
  o.angle_half_width_deg = 180.0;
  o.angle_step_deg = 1.0;
  CHECK_NOTHROW(robustness::check_scan_size(o));  // 441 x 361 points
  o.angle_step_deg = 1e-6;
  CHECK_THROWS_WITH(robustness::check_scan_size(o),
                    Catch::StartsWith("angle_step_deg = 1e-06 is not allowed: must be within the limit of 1e+08 "
                                      "points") &&
                        Catch::Contains("441 centre offsets x 3.6e+08 angles"));
  o.angle_half_width_deg = 0.0;
  o.half_width_arcsec = 1000.0;
  o.step_arcsec = 0.01;
  CHECK_THROWS_WITH(robustness::check_scan_size(o), Catch::StartsWith("step_arcsec = 0.01 is not allowed"));
  o.half_width_arcsec = std::numeric_limits<double>::infinity();
  CHECK_THROWS_WITH(robustness::check_scan_size(o), Catch::StartsWith("half_width_arcsec = inf is not allowed"));
}
