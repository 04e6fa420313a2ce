// Data axes (report/axes.hpp): tick positions and labels, and the mapping of
// data to canvas coordinates with east to the left.
#include <catch2/catch.hpp>

#include "fulcrum/report/axes.hpp"

using namespace fulcrum::report;

TEST_CASE("nice ticks are round and cover the range", "[report]") {
  auto t = nice_ticks(-7.3, 12.1, 5);
  REQUIRE(t.size() >= 3);
  CHECK(t.front() >= -7.3);
  CHECK(t.back() <= 12.1);
  CHECK(t[1] - t[0] == Approx(5.0));
  CHECK(tick_label(0.25, 0.05) == "0.25");
  CHECK(tick_label(-2.0, 1.0) == "\u22122");
  CHECK(nice_ticks(1.0, 1.0).empty());
}

TEST_CASE("reversed axes put the largest x on the left", "[report]") {
  Axes ax;
  ax.left = 10, ax.top = 20, ax.width = 100, ax.height = 50;
  ax.xmin = -5, ax.xmax = 5, ax.ymin = 0, ax.ymax = 10;
  ax.x_reversed = true;
  CHECK(ax.px(5) == Approx(10));   // east (positive) at the left edge
  CHECK(ax.px(-5) == Approx(110));
  CHECK(ax.py(10) == Approx(20));  // y up
  CHECK(ax.sx(1) == Approx(10));
  Canvas c(200, 100);
  ax.draw(c, "x", "y", "title");
  CHECK(c.listing().find("| title") != std::string::npos);
}
