// A grid of values drawn as a colour-mapped raster on data axes, and the
// colour bar that reads it.
//
// Values map linearly from [vmin, vmax] to [0, 1] of the colour map
// (report/colour_map.hpp); NaN cells are drawn light grey (#eeeeee). The
// raster is drawn with sharp pixel edges; `axes.x_reversed` is respected
// (sky panels: east to the left).
#pragma once

#include <string>

#include "fulcrum/report/axes.hpp"
#include "fulcrum/report/canvas.hpp"
#include "fulcrum/report/colour_map.hpp"
#include "fulcrum/report/value_grid.hpp"

namespace fulcrum::report {

void draw_grid(Canvas& canvas, const Axes& axes, const Grid& grid, ColourMapKind kind, double vmin,
               double vmax);
// A vertical colour bar at (x, y, w, h) in canvas units, with ticks and tick
// labels on its right and `label` (the quantity and its unit) turned along it.
void colour_bar(Canvas& canvas, double x, double y, double w, double h, ColourMapKind kind,
                double vmin, double vmax, const std::string& label);

}  // namespace fulcrum::report
