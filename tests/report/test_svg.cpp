// SVG primitives: marching-squares contours of an analytic field, the PNG
// encoder read back by Pillow (python3-pil), nice ticks, and that a figure is
// well-formed XML (Python's xml.etree).
#include <catch2/catch.hpp>

#include <cmath>
#include <fstream>

#include "fulcrum/report/svg.hpp"
#include "../support/test_support.hpp"

using namespace fulcrum;
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

TEST_CASE("nice ticks are round and cover the range", "[report]") {
  auto t = nice_ticks(-7.3, 12.1, 5);
  REQUIRE(t.size() >= 3);
  CHECK(t.front() >= -7.3);
  CHECK(t.back() <= 12.1);
  CHECK(t[1] - t[0] == Approx(5.0));
  CHECK(tick_label(0.25, 0.05) == "0.25");
  CHECK(tick_label(-2.0, 1.0) == "\u22122");
}

TEST_CASE("PNG encoder output decodes in Pillow and SVG parses as XML", "[report][python]") {
  auto dir = test::temp_dir("png");
  int nx = 37, ny = 300;  // > 65535 raw bytes: several stored blocks
  std::vector<unsigned char> rgb(nx * ny * 3);
  for (int y = 0; y < ny; ++y)
    for (int x = 0; x < nx; ++x) {
      rgb[(y * nx + x) * 3] = static_cast<unsigned char>(x * 7);
      rgb[(y * nx + x) * 3 + 1] = static_cast<unsigned char>(y);
      rgb[(y * nx + x) * 3 + 2] = static_cast<unsigned char>(x * y);
    }
  auto png = encode_png_rgb(nx, ny, rgb);
  std::ofstream(dir / "a.png", std::ios::binary)
      .write(reinterpret_cast<const char*>(png.data()), static_cast<std::streamsize>(png.size()));
  Svg svg(400, 300, "test <figure> & co");
  Axes ax;
  ax.xmin = -10; ax.xmax = 10; ax.ymin = -5; ax.ymax = 5; ax.x_reversed = true;
  ax.draw(svg, "east offset (arcsec)", "north offset (arcsec)", "A title");
  svg.arrow(ax.at(0, 0), ax.at(5, 3), "#d62728");
  svg.ellipse(ax.at(1, 1), 20, 10, 30, Style{});
  svg.marker(ax.at(-2, 1), "star", 10, "#000");
  colour_bar(svg, 370, 20, 10, 200, ColourMapKind::kCoolWarm, -1, 1, "A");
  svg.write((dir / "a.svg").string());
  auto r = test::run_python("check_png_svg.py", dir.string() + " " + std::to_string(nx) + " " +
                                                    std::to_string(ny));
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
}
