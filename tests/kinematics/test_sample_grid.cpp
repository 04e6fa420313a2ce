// The samples on their pixel grid (kinematics/sample_grid.hpp): lookups of
// the sample at a pixel, and the grid's Jacobian d(east, north)/d(x, y)
// recovered from samples laid out by a known linear map (a CD matrix in the
// sense of FITS WCS, Greisen & Calabretta 2002, A&A 395, 1061: sky offset =
// CD times pixel offset), rotated so that north is not up.
#include <catch2/catch.hpp>

#include <cmath>
#include <numbers>

#include "fulcrum/kinematics/sample_grid.hpp"

using namespace fulcrum::kinematics;

namespace {

// A 7 x 5 block of pixels starting at (3, 2), every pixel a sample, placed on
// the sky by east = cd11 x + cd12 y, north = cd21 x + cd22 y (arcsec).
struct LinearGrid {
  double cd11, cd12, cd21, cd22;
  VelocitySamples samples() const {
    VelocitySamples s;
    for (int y = 2; y < 7; ++y)
      for (int x = 3; x < 10; ++x) {
        s.x.push_back(x);
        s.y.push_back(y);
        s.east.push_back(cd11 * x + cd12 * y);
        s.north.push_back(cd21 * x + cd22 * y);
        s.velocity.push_back(0.0);
        s.sigma.push_back(1.0);
      }
    return s;
  }
};

}  // namespace

TEST_CASE("sample grid finds the sample at each pixel and none outside", "[kinematics]") {
  const VelocitySamples s = LinearGrid{-0.5, 0.0, 0.0, 0.5}.samples();
  std::vector<unsigned char> use(s.size(), 1);
  use[0] = 0;  // pixel (3, 2) left out
  const SampleGrid g = make_sample_grid(s, use);
  for (std::size_t i = 1; i < s.size(); ++i) CHECK(g.at(s.x[i], s.y[i]) == static_cast<int>(i));
  CHECK(g.at(3, 2) == -1);
  CHECK(g.at(2, 4) == -1);
  CHECK(g.at(10, 4) == -1);
  CHECK(g.at(5, 1) == -1);
  CHECK(g.at(5, 7) == -1);
}

TEST_CASE("sample grid Jacobian is the CD matrix of a rotated grid", "[kinematics]") {
  // 0.4" pixels rotated by 30 deg, east to the left as in a usual sky image:
  // CDELT1 = -0.4", CDELT2 = 0.4", CD11 = CDELT1 cos, CD12 = -CDELT2 sin,
  // CD21 = CDELT1 sin, CD22 = CDELT2 cos (the CROTA2 form of WCS Paper II,
  // Calabretta & Greisen 2002, A&A 395, 1077).
  const double c = std::cos(std::numbers::pi / 6.0), sn = std::sin(std::numbers::pi / 6.0);
  const double cdelt1 = -0.4, cdelt2 = 0.4;
  const LinearGrid cd{cdelt1 * c, -cdelt2 * sn, cdelt1 * sn, cdelt2 * c};
  const VelocitySamples s = cd.samples();
  const SampleGrid g = make_sample_grid(s, std::vector<unsigned char>(s.size(), 1));
  REQUIRE(g.jacobian_ok);
  const double tol = 1e-12;  // differences of exact products: rounding only
  CHECK(std::abs(g.jacobian(0, 0) - cd.cd11) < tol);
  CHECK(std::abs(g.jacobian(0, 1) - cd.cd12) < tol);
  CHECK(std::abs(g.jacobian(1, 0) - cd.cd21) < tol);
  CHECK(std::abs(g.jacobian(1, 1) - cd.cd22) < tol);
  const Eigen::Vector2d lag = g.lag(2, -1);
  CHECK(std::abs(lag(0) - (2 * cd.cd11 - cd.cd12)) < tol);
  CHECK(std::abs(lag(1) - (2 * cd.cd21 - cd.cd22)) < tol);
}

TEST_CASE("sample grid of no used samples is empty", "[kinematics]") {
  const VelocitySamples s = LinearGrid{-0.5, 0.0, 0.0, 0.5}.samples();
  const SampleGrid g = make_sample_grid(s, std::vector<unsigned char>(s.size(), 0));
  CHECK(g.nx == 0);
  CHECK(g.at(3, 2) == -1);
  CHECK_FALSE(g.jacobian_ok);
}
