// Footprint cleaning (kinematics/footprint.hpp) and the kinematic fit on
// delivered-style maps: injection-recovery on invented mocks
// (velocity_field_mock.hpp: the published tilted-ring formula, Begeman
// 1989) with planted isolated pixels, small islands, in-disc velocity
// outliers, -999 BLANK values and infinite / 1e38 errors.
#include <catch2/catch.hpp>

#include <filesystem>
#include <random>

#include "../support/test_support.hpp"
#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/kinematics/footprint.hpp"
#include "fulcrum/kinematics/kinematic_fit.hpp"
#include "velocity_field_mock.hpp"

using namespace fulcrum;
using namespace fulcrum::kinematics;

namespace {

bool all_missing_around(const Image& v, int x, int y, int r) {
  for (int dy = -r; dy <= r; ++dy)
    for (int dx = -r; dx <= r; ++dx)
      if (v.contains(x + dx, y + dy) && std::isfinite(v.at(x + dx, y + dy))) return false;
  return true;
}

// Plant single pixels with wild velocities outside the disc, on a lattice
// so that no two touch; returns how many.
int plant_isolated(Image& v, Image& err, std::mt19937_64& rng, double vsys) {
  std::uniform_real_distribution<double> u(-400.0, 400.0);
  int n = 0;
  for (int y = 1; y < v.ny - 1; y += 4)
    for (int x = 1; x < v.nx - 1; x += 4)
      if (all_missing_around(v, x, y, 2)) {
        v.at(x, y) = vsys + u(rng);
        err.at(x, y) = 5.0;
        ++n;
      }
  return n;
}

}  // namespace

TEST_CASE("isolated pixels, small islands and in-disc outliers are removed", "[kinematics][footprint]") {
  test::VelocityMockSpec spec;
  spec.seed = 11;
  spec.inc_deg = 60;
  auto m = test::make_velocity_mock(spec);
  std::mt19937_64 rng(5);
  const int planted = plant_isolated(m.velocity, m.velocity_error, rng, spec.vsys_kms);
  REQUIRE(planted > 20);
  // In-disc outliers: 12 pixels 300 km/s off, spaced apart.
  int outliers = 0;
  for (int k = 0; k < 12; ++k) {
    const int x = 20 + 2 * k, y = 32 + (k % 3) - 1;
    if (!std::isfinite(m.velocity.at(x, y))) continue;
    m.velocity.at(x, y) += 300.0;
    ++outliers;
  }
  VelocitySamples s = samples_from_image(m.velocity, &m.velocity_error, m.true_centre);
  const int disc_pixels = static_cast<int>(s.size()) - planted;
  FootprintSummary f = clean_footprint(s, FootprintOptions{});
  INFO("planted " << planted << " isolated, " << outliers << " outliers; removed " << f.isolated_pixels
                  << " isolated, " << f.velocity_outliers << " outliers, " << f.small_island_pixels
                  << " island pixels");
  CHECK(f.isolated_pixels == planted);
  CHECK(f.velocity_outliers >= outliers);
  // False rejections of good disc pixels: below 1% (our tolerance; 5 sigma
  // of Gaussian scatter alone would reject ~6e-7).
  CHECK(f.velocity_outliers + f.small_island_pixels - outliers < 0.01 * disc_pixels);
  CHECK(f.pixels_kept == static_cast<int>(s.size()));
  CHECK(f.islands_kept == 1);
  for (std::size_t i = 0; i < s.size(); ++i) CHECK(std::abs(s.velocity[i] - spec.vsys_kms) < 300.0);
  // Islands smaller than a beam: a 3 x 3 clump (9 pixels < 14.5 per beam).
  VelocitySamples t = samples_from_image(m.velocity, &m.velocity_error, m.true_centre);
  Image v2 = m.velocity, e2 = m.velocity_error;
  for (int y = 1; y <= 3; ++y)
    for (int x = 1; x <= 3; ++x) {
      v2.at(x, y) = spec.vsys_kms + 250.0;
      e2.at(x, y) = 5.0;
    }
  VelocitySamples t2 = samples_from_image(v2, &e2, m.true_centre);
  FootprintSummary f2 = clean_footprint(t2, FootprintOptions{});
  CHECK(f2.small_islands >= 1);
  CHECK(f2.small_island_pixels >= 9);
  CHECK(f2.min_island_pixels == 15);  // ceil(pi 2.0 1.6 / (4 ln 2) / 0.25) = ceil(14.5)
  (void)t;
}

TEST_CASE("delivered-style mocks: BLANK -999, infinite errors, scattered pixels, truth recovered",
          "[kinematics][footprint][slow]") {
  // Tolerances of the task for real galaxies: centre within 0.5 beam FWHM,
  // PA within 6 deg, inclination within 10 deg (our acceptance bounds).
  auto dir = test::temp_dir("delivered_kin");
  std::mt19937_64 rng(23);
  std::uniform_real_distribution<double> pa(0.0, 360.0), off(-2.0, 2.0), rot(0.0, 360.0);
  int ok = 0;
  const int draws = 6;
  for (int k = 0; k < draws; ++k) {
    test::VelocityMockSpec spec;
    spec.seed = 100 + k;
    spec.pa_deg = pa(rng);
    spec.rotation_deg = rot(rng);
    spec.centre_offset = {off(rng), off(rng)};
    spec.inc_deg = 50 + 5 * (k % 4);
    auto m = test::make_velocity_mock(spec);
    plant_isolated(m.velocity, m.velocity_error, rng, spec.vsys_kms);
    // As delivered: -999 where empty (BLANK), +inf and 1e38 in the error map
    // where the velocity is empty, and some where it is not.
    Image vel = m.velocity, err = m.velocity_error;
    int bad_err = 0;
    for (std::size_t i = 0; i < vel.size(); ++i) {
      if (!std::isfinite(vel.data[i])) {
        vel.data[i] = -999.0;
        err.data[i] = (i % 2) ? std::numeric_limits<double>::infinity() : 1e38;
      } else if (i % 97 == 0) {
        err.data[i] = std::numeric_limits<double>::infinity();
        ++bad_err;
      }
    }
    const std::string vp = (dir / ("v" + std::to_string(k) + ".fits")).string();
    const std::string ep = (dir / ("e" + std::to_string(k) + ".fits")).string();
    write_image(vp, vel, {{"BLANK", "-999", "empty pixels", true}});
    write_image(ep, err, {{"BLANK", "-999", "empty pixels", true}});
    const Image v = read_image(vp), e = read_image(ep);
    KinematicOptions opt;
    const KinematicFit fit = fit_kinematics(v, &e, opt, &m.intensity);
    INFO("draw " << k << ": " << to_json(fit).dump(1).substr(0, 3000));
    REQUIRE(fit.status == "ok");
    CHECK(fit.footprint.pixels_bad_error == bad_err);
    const double beam = spec.beam.fwhm_arcsec();
    const bool good = separation_arcsec(fit.centre->position, m.true_centre) < 0.5 * beam &&
                      std::abs(angle_diff_deg(fit.pa_deg, spec.pa_deg)) < 6.0 &&
                      std::abs(fit.inc_deg - spec.inc_deg) < 10.0;
    CHECK(good);
    ok += good ? 1 : 0;
  }
  CHECK(ok == draws);
}

TEST_CASE("an intensity map on another sky grid is named in a warning, not resampled",
          "[kinematics][footprint]") {
  test::VelocityMockSpec spec;
  auto m = test::make_velocity_mock(spec);
  test::VelocityMockSpec other = spec;
  other.rotation_deg = 30;  // same size, rotated grid
  auto m2 = test::make_velocity_mock(other);
  m.velocity.path = "vel.fits";
  m2.intensity.path = "mom0.fits";
  KinematicOptions opt;
  const KinematicFit fit = fit_kinematics(m.velocity, &m.velocity_error, opt, &m2.intensity);
  bool named = false;
  for (const auto& n : fit.notes)
    named = named || (n.find("vel.fits and the intensity map mom0.fits do not share a sky grid") !=
                      std::string::npos);
  CHECK(named);
  CHECK(fit.status == "ok");
}
