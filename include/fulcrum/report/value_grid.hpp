// A grid of values over a rectangle of data coordinates, as figures draw it
// (a resampled map, an asymmetry plane).
//
// value(i, j): i along x (xmin at i = 0), j along y (ymin at j = 0), values
// at cell centres; xmin..xmax and ymin..ymax are the outer cell edges, in
// data units (arcsec offsets for sky panels). NaN = no data.
#pragma once

#include <cstddef>
#include <vector>

namespace fulcrum::report {

struct Grid {
  int nx = 0, ny = 0;
  double xmin = 0, xmax = 1, ymin = 0, ymax = 1;  // outer edges of the cells
  std::vector<double> v;                          // v[i + nx * j]
  double at(int i, int j) const { return v[static_cast<std::size_t>(i) + static_cast<std::size_t>(nx) * j]; }
  double x_of(double i) const { return xmin + (i + 0.5) * (xmax - xmin) / nx; }
  double y_of(double j) const { return ymin + (j + 0.5) * (ymax - ymin) / ny; }
};

}  // namespace fulcrum::report
