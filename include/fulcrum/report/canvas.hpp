// A figure as a list of drawing operations, independent of the file format.
//
// Figure code draws on a Canvas once (lines, polygons, rectangles, circles,
// ellipses, arrows, text, raster images, markers, clipping); the recorded
// operations are then painted by cairo into SVG, PDF and PNG
// (report/figure_files.hpp), so the three files show the same drawing.
//
// Units and conventions: canvas units are CSS pixels (1/96 inch), origin at
// the top left, y down. Angles of text and ellipses are in degrees: text
// `rotate_deg` is counter-clockwise as read on the page, ellipse
// `rotation_deg` turns the rx axis clockwise on the page. Colours are
// "#rrggbb" text; an empty colour means "none". Text uses a generic sans
// font; (x, y) of a text is its baseline point at the anchor ("start",
// "middle" or "end").
//
// Halos: a non-empty `halo` colour draws the shape (or the glyph outlines)
// first in that colour, `halo_width` wider on each side, so that an overlay
// stays legible on any background (light blank pixels and dark colour-map
// pixels alike).
#pragma once

#include <memory>
#include <string>
#include <vector>

namespace fulcrum::report {

struct Point {
  double x = 0.0, y = 0.0;
};

// Stroke/fill style. Empty colour = none.
struct Style {
  std::string stroke = "#000000";
  double stroke_width = 1.0;
  std::string fill;
  std::string dash;          // dash lengths in canvas units, e.g. "4 3"
  double opacity = 1.0;
  std::string halo;          // contrasting outline under the stroke
  double halo_width = 1.5;   // per side, canvas units
};

// One recorded drawing operation (what the painter replays).
struct CanvasOp {
  enum class Kind { line, polyline, rect, circle, ellipse, text, image, begin_clip, end_clip };
  Kind kind = Kind::line;
  std::vector<Point> points;   // line: 2; polyline: n; circle/ellipse/text: the centre or anchor point
  bool closed = false;         // polyline: a polygon
  double x = 0, y = 0, w = 0, h = 0;        // rect, image, clip
  double rx = 0, ry = 0, rotation_deg = 0;  // circle (rx), ellipse
  Style style;
  // text
  std::string text, anchor, colour, halo;
  double size = 12, halo_width = 0;
  bool bold = false;
  // image: nx x ny RGB bytes, rows top to bottom
  int nx = 0, ny = 0;
  std::shared_ptr<const std::vector<unsigned char>> rgb;
};

class Canvas {
 public:
  Canvas(double width, double height, std::string title = "");
  double width() const { return width_; }
  double height() const { return height_; }
  const std::string& title() const { return title_; }

  void line(Point a, Point b, const Style& s);
  void polyline(const std::vector<Point>& pts, const Style& s, bool closed = false);
  void rect(double x, double y, double w, double h, const Style& s);
  void circle(Point c, double r, const Style& s);
  // Semi-axes rx, ry (canvas units), the rx axis turned `rotation_deg`
  // clockwise on the page.
  void ellipse(Point c, double rx, double ry, double rotation_deg, const Style& s);
  // A line from `from` to `to` with a filled head at `to` (`head` long).
  void arrow(Point from, Point to, const std::string& colour, double width = 2.0, double head = 9.0,
             const std::string& halo = "");
  void text(Point p, const std::string& s, double size = 12.0, const std::string& anchor = "start",
            double rotate_deg = 0.0, const std::string& colour = "#000000",
            const std::string& weight = "normal", const std::string& halo = "");
  // A raster (rows top to bottom, RGB bytes) over the rectangle, drawn with
  // sharp pixel edges (no smoothing).
  void image_rgb(double x, double y, double w, double h, int nx, int ny,
                 const std::vector<unsigned char>& rgb);
  // Marker shapes: "plus", "cross", "circle", "square", "diamond", "star".
  void marker(Point c, const std::string& shape, double size, const std::string& colour,
              double width = 1.6);
  void begin_clip(double x, double y, double w, double h);  // until end_clip()
  void end_clip();

  const std::vector<CanvasOp>& ops() const { return ops_; }
  // One line per operation with its numbers to 2 decimals and its colours:
  // what tests read to check a figure without parsing a file format.
  std::string listing() const;

 private:
  double width_, height_;
  std::string title_;
  std::vector<CanvasOp> ops_;
  int open_clips_ = 0;
};

}  // namespace fulcrum::report
