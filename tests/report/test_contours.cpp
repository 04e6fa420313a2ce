// Marching-squares iso-lines (report/contours.hpp) of analytic fields whose
// iso-lines are known: a cone (circles) and a plane (a straight line).
#include <catch2/catch.hpp>

#include <cmath>

#include "fulcrum/report/contours.hpp"

using namespace fulcrum::report;

TEST_CASE("contours of a circular cone lie on the circle", "[report]") {
  Grid g;
  g.nx = 61; g.ny = 41;
  g.xmin = -3; g.xmax = 3; g.ymin = -2; g.ymax = 2;
  g.v.resize(g.nx * g.ny);
  for (int j = 0; j < g.ny; ++j)
    for (int i = 0; i < g.nx; ++i) g.v[i + g.nx * j] = std::hypot(g.x_of(i), g.y_of(j));
  auto lines = contour_lines(g, 1.5);
  REQUIRE(lines.size() == 1);      // one closed ring
  const auto& l = lines[0];
  REQUIRE(l.size() > 40);
  // Linear interpolation of a cone along cell edges is exact for radius
  // along axis-parallel edges up to the curvature over one cell (0.1):
  // |r - 1.5| < 0.1^2 / (2 * 1.5) ~ 3.3e-3 (geometric bound).
  for (const auto& p : l) CHECK(std::abs(std::hypot(p.x, p.y) - 1.5) < 3.4e-3);
  CHECK(std::hypot(l.front().x - l.back().x, l.front().y - l.back().y) < 1e-12);  // closed
  // A plane: one straight line.
  for (int j = 0; j < g.ny; ++j)
    for (int i = 0; i < g.nx; ++i) g.v[i + g.nx * j] = g.x_of(i) - 0.5 * g.y_of(j);
  lines = contour_lines(g, 0.25);
  REQUIRE(lines.size() == 1);
  for (const auto& p : lines[0]) CHECK(std::abs(p.x - 0.5 * p.y - 0.25) < 1e-12);
}
