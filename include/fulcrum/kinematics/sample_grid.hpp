// The velocity samples on their pixel grid: which sample sits at pixel
// (x, y), and the grid's local Jacobian d(east, north)/d(x, y) in arcsec per
// pixel step, estimated from the samples themselves (no assumption that north
// is up). Pixels are 0-based, as in VelocitySamples. Used for neighbour
// lookups (footprint.hpp) and pixel lags (residual_correlation.hpp,
// centre_covariance.hpp).
#pragma once

#include <Eigen/Core>
#include <cstddef>
#include <vector>

#include "fulcrum/kinematics/velocity_samples.hpp"

namespace fulcrum::kinematics {

// The used samples on their pixel grid: index of the sample at (x, y), -1
// where there is none; and the grid's Jacobian (arcsec per pixel step).
struct SampleGrid {
  int x0 = 0, y0 = 0, nx = 0, ny = 0;
  std::vector<int> index;
  Eigen::Matrix2d jacobian = Eigen::Matrix2d::Zero();  // columns: d/dx, d/dy of (east, north)
  bool jacobian_ok = false;
  int at(int x, int y) const {
    const int ix = x - x0, iy = y - y0;
    if (ix < 0 || iy < 0 || ix >= nx || iy >= ny) return -1;
    return index[static_cast<std::size_t>(iy) * nx + ix];
  }
  // Sky lag (east, north) of a pixel lag.
  Eigen::Vector2d lag(int dx, int dy) const { return jacobian * Eigen::Vector2d(dx, dy); }
};

// `use[i]` selects the samples (non-zero: used).
SampleGrid make_sample_grid(const VelocitySamples& s, const std::vector<unsigned char>& use);

}  // namespace fulcrum::kinematics
