// A canvas painted into SVG, PDF and PNG (report/figure_files.hpp): the three
// files are written beside each other, are what their formats say (read back
// by Pillow, python3-pil, and xml.etree; the PDF rendered by poppler's
// pdftoppm), show text and sharp raster pixels, are byte-identical when drawn
// twice, and a failed write leaves no file.
#include <catch2/catch.hpp>

#include <cstdlib>
#include <filesystem>
#include <optional>

#include "fulcrum/core/error.hpp"
#include "fulcrum/report/axes.hpp"
#include "fulcrum/report/colour_raster.hpp"
#include "fulcrum/report/figure_files.hpp"
#include "../support/test_support.hpp"

using namespace fulcrum;
using namespace fulcrum::report;
namespace fs = std::filesystem;

namespace {

// A small figure with every kind of operation.
Canvas sample_canvas() {
  Canvas c(400, 300, "test <figure> & co");
  Axes ax;
  ax.xmin = -10; ax.xmax = 10; ax.ymin = -5; ax.ymax = 5; ax.x_reversed = true;
  Grid g;
  g.nx = 8, g.ny = 4, g.xmin = -10, g.xmax = 10, g.ymin = -5, g.ymax = 5;
  for (int k = 0; k < 32; ++k) g.v.push_back(k == 5 ? std::nan("") : k);
  ax.clip(c);
  draw_grid(c, ax, g, ColourMapKind::kCubehelix, 0, 31);
  c.end_clip();
  ax.draw(c, "east offset (arcsec)", "north offset (arcsec)", "A title");
  c.arrow(ax.at(0, 0), ax.at(5, 3), "#d62728", 2, 9, "#ffffff");
  c.ellipse(ax.at(1, 1), 20, 10, 30, Style{});
  c.marker(ax.at(-2, 1), "star", 10, "#000");
  c.text(ax.at(0, -3), "\u03c3 \u2212 text", 12, "middle", 0, "#ffffff", "bold", "#111111");
  colour_bar(c, 370, 20, 10, 200, ColourMapKind::kCoolWarm, -1, 1, "A");
  return c;
}

// Only text, black on white: shows whether glyphs are drawn at all.
Canvas text_canvas() {
  Canvas c(200, 40);
  c.text({10, 28}, "Text renders", 20, "start", 0, "#000000");
  return c;
}

// A 2 x 2 checkerboard raster stretched over 100 x 100 canvas units at (50, 50).
Canvas checker_canvas() {
  Canvas c(200, 200);
  c.image_rgb(50, 50, 100, 100, 2, 2, {255, 0, 0, 0, 0, 255, 0, 0, 255, 255, 0, 0});
  return c;
}

// PNG width and height from the IHDR chunk (ISO/IEC 15948, 11.2.2).
std::pair<long, long> png_size(const std::string& png) {
  REQUIRE(png.size() > 24);
  REQUIRE(png.compare(0, 8, "\x89PNG\r\n\x1a\n") == 0);
  auto be32 = [&](std::size_t at) {
    long v = 0;
    for (std::size_t i = 0; i < 4; ++i) v = v * 256 + static_cast<unsigned char>(png[at + i]);
    return v;
  };
  return {be32(16), be32(20)};
}

// SOURCE_DATE_EPOCH set (or unset) for one scope.
class DateEpoch {
 public:
  explicit DateEpoch(const char* value) {
    if (const char* e = std::getenv("SOURCE_DATE_EPOCH")) old_ = e;
    if (value) ::setenv("SOURCE_DATE_EPOCH", value, 1);
    else ::unsetenv("SOURCE_DATE_EPOCH");
  }
  ~DateEpoch() {
    if (old_) ::setenv("SOURCE_DATE_EPOCH", old_->c_str(), 1);
    else ::unsetenv("SOURCE_DATE_EPOCH");
  }

 private:
  std::optional<std::string> old_;
};

}  // namespace

TEST_CASE("a figure is written as SVG, PDF and PNG beside each other, the same bytes every time", "[report]") {
  const auto dir = test::temp_dir("figure_files");
  const Canvas c = sample_canvas();
  write_figure(c, (dir / "a").string());
  write_figure(c, (dir / "b").string());
  for (const char* ext : {".svg", ".pdf", ".png"}) {
    INFO(ext);
    const std::string a = test::slurp(dir / (std::string("a") + ext));
    REQUIRE(!a.empty());
    CHECK(a == test::slurp(dir / (std::string("b") + ext)));
  }
  const std::string svg = test::slurp(dir / "a.svg");
  CHECK(svg.find("<svg") != std::string::npos);
  CHECK(svg.find("width=\"400px\" height=\"300px\"") != std::string::npos);
  CHECK(test::slurp(dir / "a.pdf").compare(0, 5, "%PDF-") == 0);
  const auto [w, h] = png_size(test::slurp(dir / "a.png"));
  CHECK(w == 400 * kPngScale);
  CHECK(h == 300 * kPngScale);
  // Nothing else in the folder: no temporary file is left behind.
  std::size_t files = 0;
  for (const auto& e : fs::directory_iterator(dir)) files += e.is_regular_file() ? 1 : 0;
  CHECK(files == 6);
}

TEST_CASE("the PDF of a figure carries no clock time, only SOURCE_DATE_EPOCH", "[report]") {
  const Canvas c = text_canvas();
  std::string plain, dated;
  {
    DateEpoch none(nullptr);
    plain = figure_bytes(c, FigureFormat::pdf);
  }
  {
    DateEpoch fixed("1700000000");  // 2023-11-14T22:13:20Z
    dated = figure_bytes(c, FigureFormat::pdf);
  }
  CHECK(plain.find("/CreationDate") == std::string::npos);
  CHECK(dated.find("/CreationDate (20231114221320") != std::string::npos);
  CHECK(plain.find("/Title") != std::string::npos);
}

TEST_CASE("a figure that cannot be written leaves no file", "[report]") {
  const auto dir = test::temp_dir("figure_fail");
  CHECK_THROWS_AS(write_figure(text_canvas(), (dir / "missing" / "a").string()), InputError);
  CHECK(!fs::exists(dir / "missing"));
  CHECK(fs::is_empty(dir));
}

TEST_CASE("figure files read back in Pillow and xml.etree: sizes, text and sharp raster pixels",
          "[report][python]") {
  const auto dir = test::temp_dir("figure_pil");
  write_figure(sample_canvas(), (dir / "a").string());
  write_figure(text_canvas(), (dir / "t").string());
  write_figure(checker_canvas(), (dir / "c").string());
  auto r = test::run_python("check_figure_files.py", dir.string() + " " + std::to_string(kPngScale));
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
}

TEST_CASE("a figure's PDF renders with pdftoppm to a non-blank page of the figure's size", "[report][python]") {
  if (!fs::exists("/usr/bin/pdftoppm")) {
    WARN("SKIPPED: /usr/bin/pdftoppm is missing (Debian package 'poppler-utils'): PDF rendering not checked");
    return;
  }
  const auto dir = test::temp_dir("figure_pdf");
  write_figure(sample_canvas(), (dir / "a").string());
  // 96 dpi: one PDF pixel per canvas unit (the page is 0.75 pt per unit).
  auto r = test::run_shell("/usr/bin/pdftoppm -r 96 -png -singlefile " + (dir / "a.pdf").string() + " " +
                           (dir / "rendered").string());
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  const auto [w, h] = png_size(test::slurp(dir / "rendered.png"));
  CHECK(w == 400);
  CHECK(h == 300);
  auto check = test::run_python("check_figure_files.py", dir.string() + " rendered");
  INFO(check.out << check.err);
  REQUIRE(check.exit_code == 0);
}
