// Tests of the exact halves (split/half_split.hpp): exactness against shapely
// polygon intersection through the FITS WCS (tests/python/check_split_shapely.py),
// flux units, errors, JSON keys and the error paths.
#include <catch2/catch.hpp>

#include <cmath>

#include <nlohmann/json.hpp>

#include "fulcrum/core/error.hpp"
#include "fulcrum/io/atomic_file.hpp"
#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/core/random.hpp"
#include "fulcrum/split/half_split.hpp"
#include "split_mock.hpp"
#include "../support/test_support.hpp"

using namespace fulcrum;
using namespace fulcrum::split;

TEST_CASE("halves agree with shapely polygon intersection to 1e-9", "[split][python]") {
  for (double rot : {0.0, 33.0}) {
    for (bool aperture : {false, true}) {
      test::TinyMock m;
      m.nx = 24;
      m.ny = 20;
      m.rotation_deg = rot;
      m.flip = rot > 0.0;
      const auto maps = test::make_tiny_mock(m);
      const auto dir = test::temp_dir("shapely");
      write_image((dir / "map.fits").string(), maps.model);
      SplitOptions so;
      so.centre = m.centre;  // = CRVAL: TAN offsets are exactly linear in pixels
      if (aperture) so.aperture = ApertureSpec{4.5, 120.0, 0.7, std::nullopt};
      const SplitProblem pr = prepare_split(maps.model, so);
      nlohmann::json spec;
      spec["reference"] = {m.centre.ra_deg, m.centre.dec_deg};
      spec["aperture"] = aperture ? nlohmann::json{{"east", 0.0}, {"north", 0.0}, {"pa_deg", 120.0},
                                                  {"a", 4.5}, {"q", 0.7}}
                                  : nlohmann::json();
      fulcrum::Random g(rot + 5);
      for (int k = 0; k < 6; ++k) {
        const SkyOffset c{4.0 * (g.uniform() - 0.5), 4.0 * (g.uniform() - 0.5)};
        const double a = k == 0 ? rot : 360.0 * g.uniform();
        const ProjectionEngine e(pr.pixels, a * degrees);
        const HalfSums h = e.halves(c);
        spec["cases"].push_back({{"east", c.east}, {"north", c.north}, {"tail_pa_deg", a},
                                 {"leading", h.leading}, {"trailing", h.trailing}});
      }
      write_text_file((dir / "cases.json").string(), spec.dump(1));
      const auto r = test::run_python("check_split_shapely.py",
                                      (dir / "map.fits").string() + " " + (dir / "cases.json").string());
      INFO(r.out << r.err);
      CHECK(r.exit_code == 0);
    }
  }
}

TEST_CASE("flux units: Jy/beam km/s becomes Jy km/s, other units stay pixel sums", "[split]") {
  Image im;
  im.nx = im.ny = 4;
  im.unit = "Jy/beam km/s";
  im.beam = Beam{2.0, 1.0, 0.0};
  const double pix = 0.25;
  FluxScale fs = flux_scale(im, pix);
  CHECK(fs.unit == "Jy km/s");
  // Omega = pi * 2 * 1 / (4 ln 2) arcsec^2 (Gaussian beam solid angle).
  CHECK(fs.factor == Approx(pix / (std::numbers::pi * 2.0 / (4.0 * std::numbers::ln2))).epsilon(1e-14));
  im.unit = "JY/BEAM.M/S";
  fs = flux_scale(im, pix);
  CHECK(fs.unit == "Jy km/s");
  CHECK(fs.factor == Approx(1e-3 * pix / im.beam->solid_angle_arcsec2()).epsilon(1e-14));
  im.unit = "K km/s";
  fs = flux_scale(im, pix);
  CHECK(fs.factor == 1.0);
  CHECK(fs.unit == "K km/s x pixel");
  im.unit = "Jy/beam km/s";
  im.beam.reset();
  im.path = "nobeam.fits";
  CHECK_THROWS_AS(flux_scale(im, pix), InputError);
}

TEST_CASE("asymmetry and its error follow the propagation formula", "[split]") {
  // sigma_A^2 = 4 (T^2 varL + L^2 varT)/(L+T)^4 (first-order propagation).
  const double L = 3.0, T = 2.0, vl = 0.04, vt = 0.09;
  CHECK(asymmetry_error(L, T, vl, vt) == Approx(2.0 * std::sqrt(4.0 * 0.04 + 9.0 * 0.09) / 25.0));
  test::TinyMock m;
  m.rms = 0.02;
  const auto maps = test::make_tiny_mock(m);
  SplitOptions so;
  so.centre = m.centre;
  so.tail_pa_deg = m.tail_pa_deg;
  so.rms = 0.02;
  const SplitSummary s = split_halves(maps.map, so);
  CHECK(s.flux_unit == "Jy km/s");
  CHECK(s.asymmetry > 0.0);  // the mock has a leading excess
  CHECK(s.asymmetry == Approx((s.leading_flux - s.trailing_flux) / (s.leading_flux + s.trailing_flux)));
  // Errors: rms * sqrt(N_half * N_beam) * pixel/beam area (uncut pixels dominate).
  const double ppb = s.pixels_per_beam;
  CHECK(ppb > 1.0);
  const nlohmann::json j = to_json(s);
  for (const char* k : {"leading_flux", "trailing_flux", "flux_unit", "asymmetry", "asymmetry_err"})
    CHECK(j.contains(k));
  CHECK(std::isfinite(s.asymmetry_err));
}

TEST_CASE("split input errors are InputErrors", "[split]") {
  test::TinyMock m;
  const auto maps = test::make_tiny_mock(m);
  SplitOptions so;
  so.centre = m.centre;
  so.aperture = ApertureSpec{0.01, 0.0, 1.0, WorldCoord{m.centre.ra_deg + 0.1, m.centre.dec_deg}};
  CHECK_THROWS_AS(prepare_split(maps.model, so), InputError);  // empty aperture
  so.aperture = ApertureSpec{-1.0, 0.0, 1.0, std::nullopt};
  CHECK_THROWS_AS(prepare_split(maps.model, so), InputError);
  so.aperture.reset();
  Image small = maps.model;
  small.nx = 4;
  small.ny = 4;
  small.data.resize(16);
  so.error_map = &small;
  CHECK_THROWS_AS(prepare_split(maps.model, so), InputError);
}

TEST_CASE("split refuses an undefined A: cancelling total, total below its noise, too few pixels", "[split]") {
  // A = (L - T)/(L + T) needs a total well away from zero (split/half_split.hpp,
  // check_split_defined; limits are the project's choices, docs/reliability.md).
  test::TinyMock m;
  const auto maps = test::make_tiny_mock(m);
  SplitOptions so;
  so.centre = m.centre;
  so.tail_pa_deg = m.tail_pa_deg;
  CHECK_NOTHROW(split_halves(maps.model, so));
  Image cancel = maps.model;
  double mean = 0.0;
  for (double v : cancel.data) mean += v;
  mean /= static_cast<double>(cancel.size());
  for (double& v : cancel.data) v -= mean;
  // The total is zero to round-off, of either sign: refused either way.
  CHECK_THROWS_WITH(split_halves(cancel, so),
                    Catch::Contains("is about zero") || Catch::Contains("is not positive"));
  so.rms = 10.0 * m.peak;  // the whole disc far below its noise
  CHECK_THROWS_WITH(split_halves(maps.model, so), Catch::Contains("below 3 times its noise"));
  so.rms = 0.0;
  Image one = maps.model;
  for (std::size_t i = 0; i < one.size(); ++i)
    if (i != one.size() / 2 + static_cast<std::size_t>(one.nx) / 2) one.data[i] = std::nan("");
  CHECK_THROWS_WITH(split_halves(one, so), Catch::Contains("the analysis region holds 1 pixels"));
}
