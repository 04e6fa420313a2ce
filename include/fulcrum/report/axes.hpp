// Data axes on a canvas: a rectangle of the canvas that shows a range of data
// coordinates, with its frame, ticks, tick labels, axis labels and title.
//
// Units: the rectangle (left, top, width, height) is in canvas units (px,
// y down, report/canvas.hpp); the ranges are in data units. `x_reversed`
// lets sky panels put east on the left (offsets in arcsec, east increasing
// to the left, north up, as on the sky).
#pragma once

#include <string>
#include <vector>

#include "fulcrum/report/canvas.hpp"

namespace fulcrum::report {

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
  void draw(Canvas& canvas, const std::string& xlabel, const std::string& ylabel,
            const std::string& title = "") const;
  void clip(Canvas& canvas) const { canvas.begin_clip(left, top, width, height); }
};

// "Nice" tick positions (1, 2, 2.5, 5 x 10^k steps) covering [lo, hi],
// about `target` of them.
std::vector<double> nice_ticks(double lo, double hi, int target = 5);
// A tick label with just enough decimals for the step, and a real minus sign.
std::string tick_label(double v, double step);

}  // namespace fulcrum::report
