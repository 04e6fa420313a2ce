// The per-galaxy figures (report/galaxy_figures.hpp): what the velocity-field
// figure shows of the footprint cleaning. Checked on the SVG text: each
// left-out pixel is a cross (two lines) in its colour, and the legend line
// gives the counts.
#include <catch2/catch.hpp>

#include <string>

#include "fulcrum/report/galaxy_figures.hpp"

using namespace fulcrum::report;

namespace {

std::size_t count_of(const std::string& text, const std::string& what) {
  std::size_t n = 0;
  for (auto p = text.find(what); p != std::string::npos; p = text.find(what, p + 1)) ++n;
  return n;
}

VelocityFigure small_figure() {
  VelocityFigure f;
  f.galaxy = "mock";
  f.velocity.nx = f.velocity.ny = 4;
  f.velocity.xmin = f.velocity.ymin = -2;
  f.velocity.xmax = f.velocity.ymax = 2;
  f.velocity.v.assign(16, 0.0);
  for (int i = 0; i < 16; ++i) f.velocity.v[static_cast<std::size_t>(i)] = 10.0 * (i % 4) - 15.0;
  return f;
}

}  // namespace

TEST_CASE("the velocity figure crosses out the pixels the footprint cleaning left out", "[report][figures]") {
  VelocityFigure f = small_figure();
  const std::string without = velocity_figure(f);
  CHECK(without.find("footprint cleaning") == std::string::npos);
  f.rejected = {{0.5, 0.5, true}, {-1.0, 1.0, false}, {1.5, -1.5, false}};
  const std::string with = velocity_figure(f);
  CHECK(with.find("1 velocity outliers (black), 2 isolated or small-island pixels (grey)") != std::string::npos);
  // Two lines per cross; grey only for the non-outliers (the colour is used
  // nowhere else in the figure).
  CHECK(count_of(with, "#8a8a8a") == 4);
  CHECK(count_of(with, "#8a8a8a") - count_of(without, "#8a8a8a") == 4);
}
