// Iso-lines of a grid of values (marching squares) and drawing them on axes.
//
// Marching squares (e.g. Lorensen & Cline 1987 in 2-D): the lines of
// `grid` at `level`, as polylines in data coordinates through the cell
// centres, with linear interpolation along cell edges; saddle cells are
// resolved by the mean of the four corners. NaN corners end a line.
#pragma once

#include <vector>

#include "fulcrum/report/axes.hpp"
#include "fulcrum/report/canvas.hpp"
#include "fulcrum/report/value_grid.hpp"

namespace fulcrum::report {

std::vector<std::vector<Point>> contour_lines(const Grid& grid, double level);
void draw_contours(Canvas& canvas, const Axes& axes, const Grid& grid, double level, const Style& s);

}  // namespace fulcrum::report
