// The per-galaxy figures (report/galaxy_figures.hpp): what the velocity-field
// figure shows of the footprint cleaning, colour bars with units on every
// map panel, overlays with halos, and P(A > 0) at the draws' precision.
// Checked on the canvas listing (report/canvas.hpp): each left-out pixel is
// a cross (two lines) in its colour, and the legend line gives the counts.
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
  const std::string without = velocity_figure(f).listing();
  CHECK(without.find("footprint cleaning") == std::string::npos);
  f.rejected = {{0.5, 0.5, true}, {-1.0, 1.0, false}, {1.5, -1.5, false}};
  const std::string with = velocity_figure(f).listing();
  CHECK(with.find("1 velocity outliers (black), 2 isolated or small-island pixels (grey)") != std::string::npos);
  // Two lines per cross; grey only for the non-outliers (the colour is used
  // nowhere else in the figure).
  CHECK(count_of(with, "#8a8a8a") == 4);
  CHECK(count_of(with, "#8a8a8a") - count_of(without, "#8a8a8a") == 4);
}

TEST_CASE("every map panel of the velocity figure has a colour bar with its unit", "[report][figures]") {
  VelocityFigure f = small_figure();
  f.model = f.velocity;
  f.residual = f.velocity;
  const std::string l = velocity_figure(f).listing();
  // Three panel rasters and three colour-bar rasters (1 x 128 pixels).
  CHECK(count_of(l, "image ") == 6);
  CHECK(count_of(l, "pixels 1x128") == 3);
  CHECK(count_of(l, "| v \u2212 vsys (km/s)") == 2);
  CHECK(count_of(l, "| observed \u2212 model (km/s)") == 1);
}

TEST_CASE("sky overlays carry a contrasting halo", "[report][figures]") {
  IntensityFigure f;
  f.galaxy = "mock";
  f.map.nx = f.map.ny = 4;
  f.map.xmin = f.map.ymin = -2;
  f.map.xmax = f.map.ymax = 2;
  f.map.v.assign(16, 1.0);
  f.tail_pa_deg = 30;
  f.tail_pa_err_deg = 5;
  const std::string l = intensity_figure(f).listing();
  // White split line and labels with a dark halo; N and E letters too.
  CHECK(l.find("stroke=#ffffff width=2.00 fill=none dash=7 4 halo=#111111") != std::string::npos);
  CHECK(l.find("colour=#ffffff bold halo=#111111 | leading") != std::string::npos);
  CHECK(l.find("halo=#111111 | tail") != std::string::npos);
  CHECK(l.find("halo=#111111 | N") != std::string::npos);
  CHECK(l.find("halo=#111111 | E") != std::string::npos);
  // The intensity panel's colour bar names the unit.
  f.unit = "Jy/beam km/s";
  CHECK(intensity_figure(f).listing().find("| Jy/beam km/s") != std::string::npos);
}

TEST_CASE("the bootstrap figure prints P(A > 0) at the draws' precision", "[report][figures]") {
  BootstrapFigure f;
  f.galaxy = "mock";
  f.bin_edges = {0.0, 0.1, 0.2};
  f.counts = {10, 20};
  f.asymmetry = 0.1;
  f.p_leading = 1.0;
  CHECK(bootstrap_figure(f).listing().find("| P(A > 0) > 0.999") != std::string::npos);
  f.p_leading = 0.8734;
  CHECK(bootstrap_figure(f).listing().find("| P(A > 0) = 0.873") != std::string::npos);
}
