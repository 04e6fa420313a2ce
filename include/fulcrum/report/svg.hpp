// SVG figure primitives: a figure canvas, data axes with ticks and labels,
// raster images (embedded as PNG data URIs), colour bars, ellipses, arrows,
// markers and contour lines (marching squares).
//
// Coordinates: the canvas is in SVG user units (px), origin at the top
// left, y down. An Axes maps data coordinates into a rectangle of the
// canvas; `x_reversed` lets sky panels put east on the left (offsets in
// arcsec, east increasing to the left, north up, as on the sky).
//
// Everything is self-contained text: no fonts, scripts or files are linked,
// so a figure can be inlined in report.html or opened on its own. Output is
// deterministic (fixed number formatting), so the same data give the same
// bytes.
#pragma once

#include <cstdint>
#include <string>
#include <utility>
#include <vector>

#include "fulcrum/report/colour_map.hpp"

namespace fulcrum::report {

struct Point {
  double x = 0.0, y = 0.0;
};

// Stroke/fill style. Empty colour = "none".
struct Style {
  std::string stroke = "#000000";
  double stroke_width = 1.0;
  std::string fill;
  std::string dash;          // SVG dash array, e.g. "4 3"
  double opacity = 1.0;
};

class Svg {
 public:
  Svg(double width, double height, std::string title = "");
  double width() const { return width_; }
  double height() const { return height_; }

  void line(Point a, Point b, const Style& s);
  void polyline(const std::vector<Point>& pts, const Style& s, bool closed = false);
  void rect(double x, double y, double w, double h, const Style& s);
  void circle(Point c, double r, const Style& s);
  // Ellipse with semi-axes rx, ry (canvas units), the rx axis turned by
  // `rotation_deg` clockwise on the canvas (SVG rotate()).
  void ellipse(Point c, double rx, double ry, double rotation_deg, const Style& s);
  // A line from `from` to `to` with a filled arrow head at `to`.
  void arrow(Point from, Point to, const std::string& colour, double width = 2.0,
             double head = 9.0);
  // anchor: "start", "middle" or "end"; rotate in degrees (counter-clockwise
  // positive as read on the page).
  void text(Point p, const std::string& s, double size = 12.0, const std::string& anchor = "start",
            double rotate_deg = 0.0, const std::string& colour = "#000000",
            const std::string& weight = "normal");
  // A raster image (rows top to bottom, RGB bytes) stretched over the
  // rectangle, embedded as a PNG data URI, drawn without smoothing.
  void image_rgb(double x, double y, double w, double h, int nx, int ny,
                 const std::vector<unsigned char>& rgb);
  // Marker shapes: "plus", "cross", "circle", "square", "diamond", "star".
  void marker(Point c, const std::string& shape, double size, const std::string& colour,
              double width = 1.6);
  void begin_clip(double x, double y, double w, double h);  // until end_clip()
  void end_clip();
  void raw(const std::string& element) { body_ += element; }

  std::string str() const;  // the complete <svg> document (no XML prolog)
  void write(const std::string& path) const;

 private:
  double width_, height_;
  std::string title_;
  std::string body_;
  int clip_count_ = 0;
};

// Data axes on a canvas rectangle (left, top, width, height in px).
struct Axes {
  double left = 60, top = 20, width = 300, height = 300;
  double xmin = 0, xmax = 1, ymin = 0, ymax = 1;
  bool x_reversed = false;

  double px(double x) const;
  double py(double y) const;
  Point at(double x, double y) const { return {px(x), py(y)}; }
  // Canvas length of a data length along x / y (absolute).
  double sx(double dx) const;
  double sy(double dy) const;
  // Frame, ticks, tick labels, axis labels and a title above the frame.
  void draw(Svg& svg, const std::string& xlabel, const std::string& ylabel,
            const std::string& title = "") const;
  void clip(Svg& svg) const { svg.begin_clip(left, top, width, height); }
};

// "Nice" tick positions (1, 2, 5 x 10^k steps) covering [lo, hi], about
// `target` of them.
std::vector<double> nice_ticks(double lo, double hi, int target = 5);
// A tick label with just enough decimals for the step.
std::string tick_label(double v, double step);

// A grid of values over a rectangle of data coordinates: value(i, j) with i
// along x (xmin at i = 0) and j along y (ymin at j = 0), values at cell
// centres. NaN = no data (drawn light grey).
struct Grid {
  int nx = 0, ny = 0;
  double xmin = 0, xmax = 1, ymin = 0, ymax = 1;  // outer edges of the cells
  std::vector<double> v;                          // v[i + nx * j]
  double at(int i, int j) const { return v[static_cast<std::size_t>(i) + static_cast<std::size_t>(nx) * j]; }
  double x_of(double i) const { return xmin + (i + 0.5) * (xmax - xmin) / nx; }
  double y_of(double j) const { return ymin + (j + 0.5) * (ymax - ymin) / ny; }
};

// Draw `grid` into `axes` with colour map `kind`, values mapped linearly
// from [vmin, vmax] to [0, 1]. Respects axes.x_reversed.
void draw_grid(Svg& svg, const Axes& axes, const Grid& grid, ColourMapKind kind, double vmin,
               double vmax);
// A vertical colour bar at (x, y, w, h) with ticks and a label on the right.
void colour_bar(Svg& svg, double x, double y, double w, double h, ColourMapKind kind,
                double vmin, double vmax, const std::string& label);

// Marching squares (e.g. Lorensen & Cline 1987 in 2-D): the iso-lines of
// `grid` at `level`, as polylines in data coordinates through the cell
// centres, linear interpolation on cell edges; saddle cells are resolved by
// the mean of the four corners. NaN corners end a line.
std::vector<std::vector<Point>> contour_lines(const Grid& grid, double level);
void draw_contours(Svg& svg, const Axes& axes, const Grid& grid, double level, const Style& s);

// PNG (ISO/IEC 15948) of 8-bit RGB pixels, rows top to bottom, with
// uncompressed ("stored") deflate blocks, zlib wrapper, CRC-32 and Adler-32:
// larger than a compressed PNG but needs no library and is exact.
std::vector<unsigned char> encode_png_rgb(int nx, int ny, const std::vector<unsigned char>& rgb);
std::string base64(const std::vector<unsigned char>& bytes);
// XML-escape text content.
std::string xml_escape(const std::string& s);

}  // namespace fulcrum::report
