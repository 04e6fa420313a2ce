// The velocity samples on their pixel grid (sample_grid.hpp).
#include "fulcrum/kinematics/sample_grid.hpp"

#include <Eigen/Dense>
#include <algorithm>
#include <cmath>
#include <cstddef>

namespace fulcrum::kinematics {

namespace {

// Median Jacobian from samples that have a right and an upper neighbour.
bool estimate_jacobian(const VelocitySamples& s, const SampleGrid& g, Eigen::Matrix2d* jac) {
  std::vector<double> c[4];
  for (int y = g.y0; y < g.y0 + g.ny; ++y)
    for (int x = g.x0; x < g.x0 + g.nx; ++x) {
      const int i = g.at(x, y), r = g.at(x + 1, y), u = g.at(x, y + 1);
      if (i < 0 || r < 0 || u < 0) continue;
      c[0].push_back(s.east[r] - s.east[i]);
      c[1].push_back(s.north[r] - s.north[i]);
      c[2].push_back(s.east[u] - s.east[i]);
      c[3].push_back(s.north[u] - s.north[i]);
    }
  if (c[0].empty()) return false;
  double m[4];
  for (int k = 0; k < 4; ++k) {
    auto mid = c[k].begin() + static_cast<std::ptrdiff_t>(c[k].size() / 2);
    std::nth_element(c[k].begin(), mid, c[k].end());
    m[k] = *mid;
  }
  *jac << m[0], m[2], m[1], m[3];
  return std::abs(jac->determinant()) > 0;
}

}  // namespace

SampleGrid make_sample_grid(const VelocitySamples& s, const std::vector<unsigned char>& use) {
  SampleGrid g;
  int xmin = 0, xmax = -1, ymin = 0, ymax = -1;
  bool any = false;
  for (std::size_t i = 0; i < s.size(); ++i) {
    if (!use[i]) continue;
    if (!any) { xmin = xmax = s.x[i]; ymin = ymax = s.y[i]; any = true; }
    xmin = std::min(xmin, s.x[i]); xmax = std::max(xmax, s.x[i]);
    ymin = std::min(ymin, s.y[i]); ymax = std::max(ymax, s.y[i]);
  }
  if (!any) return g;
  g.x0 = xmin; g.y0 = ymin; g.nx = xmax - xmin + 1; g.ny = ymax - ymin + 1;
  g.index.assign(static_cast<std::size_t>(g.nx) * g.ny, -1);
  for (std::size_t i = 0; i < s.size(); ++i)
    if (use[i]) g.index[static_cast<std::size_t>(s.y[i] - g.y0) * g.nx + (s.x[i] - g.x0)] = static_cast<int>(i);
  g.jacobian_ok = estimate_jacobian(s, g, &g.jacobian);
  return g;
}

}  // namespace fulcrum::kinematics
