// The canvas (report/canvas.hpp): what a drawing records, markers and arrows
// made of primitives, halos drawn first, and refusals of broken calls.
#include <catch2/catch.hpp>

#include "fulcrum/core/error.hpp"
#include "fulcrum/report/canvas.hpp"

using namespace fulcrum;
using namespace fulcrum::report;

namespace {
std::size_t count_of(const std::string& text, const std::string& what) {
  std::size_t n = 0;
  for (auto p = text.find(what); p != std::string::npos; p = text.find(what, p + 1)) ++n;
  return n;
}
}  // namespace

TEST_CASE("a canvas records its operations in order", "[report]") {
  Canvas c(400, 300, "a title");
  Style s;
  s.stroke = "#123456";
  s.stroke_width = 2;
  c.begin_clip(10, 10, 100, 100);
  c.line({0, 0}, {10, 20}, s);
  c.ellipse({50, 50}, 20, 10, 30, s);
  c.end_clip();
  c.text({5, 6}, "N", 11, "middle", 90, "#ffffff", "bold", "#111111");
  c.image_rgb(0, 0, 20, 10, 2, 1, {255, 0, 0, 0, 0, 255});
  const std::string l = c.listing();
  CHECK(l.find("canvas 400.00 x 300.00 a title\n") == 0);
  CHECK(l.find("clip 10.00,10.00 100.00x100.00\nline 0.00,0.00 10.00,20.00 stroke=#123456 width=2.00") !=
        std::string::npos);
  CHECK(l.find("ellipse 50.00,50.00 rx=20.00 ry=10.00 rotation=30.00") != std::string::npos);
  CHECK(l.find("end-clip\ntext 5.00,6.00 size=11.00 middle rotate=90.00 colour=#ffffff bold halo=#111111 | N") !=
        std::string::npos);
  CHECK(l.find("image 0.00,0.00 20.00x10.00 pixels 2x1") != std::string::npos);
  REQUIRE(c.ops().size() == 6);
  CHECK(c.ops()[5].rgb->size() == 6);
}

TEST_CASE("markers and arrows are drawn from primitives, halos first", "[report]") {
  Canvas c(100, 100);
  c.marker({50, 50}, "plus", 10, "#ff0000");
  c.marker({50, 50}, "star", 10, "#ff0000");
  c.marker({50, 50}, "square", 10, "#ff0000");
  const std::string m = c.listing();
  CHECK(count_of(m, "line ") == 2);
  CHECK(count_of(m, "polygon ") == 1);
  CHECK(count_of(m, "rect ") == 1);
  Canvas a(100, 100);
  a.arrow({10, 10}, {60, 10}, "#e8552b", 3, 12, "#111111");
  const std::string t = a.listing();
  // Halo shaft, halo head, shaft, head: the halos come first.
  REQUIRE(a.ops().size() == 4);
  CHECK(a.ops()[0].style.stroke == "#111111");
  CHECK(a.ops()[1].style.fill == "#111111");
  CHECK(a.ops()[2].style.stroke == "#e8552b");
  CHECK(a.ops()[3].style.fill == "#e8552b");
  // The head ends at the tip; the shaft stops at the head's base.
  CHECK(a.ops()[3].points[0].x == Approx(60));
  CHECK(a.ops()[2].points[1].x == Approx(48));
}

TEST_CASE("a canvas refuses broken drawing calls", "[report]") {
  CHECK_THROWS_AS(Canvas(0, 10), InternalError);
  Canvas c(10, 10);
  CHECK_THROWS_AS(c.end_clip(), InternalError);
  CHECK_THROWS_AS(c.image_rgb(0, 0, 1, 1, 2, 2, {0, 0, 0}), InternalError);
  CHECK_THROWS_AS(c.text({0, 0}, "x", 10, "centre"), InternalError);
}
