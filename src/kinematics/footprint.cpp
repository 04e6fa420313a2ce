// The galaxy's footprint on a velocity map (footprint.hpp): neighbour
// outliers, then small islands. Units: km/s, 0-based pixels.
#include "fulcrum/kinematics/footprint.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "fulcrum/kinematics/covariance_scaling.hpp"
#include "fulcrum/kinematics/sample_grid.hpp"

namespace fulcrum::kinematics {

namespace {

constexpr double kMadToSigma = 1.4826;  // 1 / Phi^-1(3/4), Gaussian consistency

double median_of(std::vector<double>& v) {
  if (v.empty()) return std::numeric_limits<double>::quiet_NaN();
  const auto mid = v.begin() + static_cast<std::ptrdiff_t>(v.size() / 2);
  std::nth_element(v.begin(), mid, v.end());
  double m = *mid;
  if (v.size() % 2 == 0) m = 0.5 * (m + *std::max_element(v.begin(), mid));
  return m;
}

double mad_sigma(std::vector<double> v) {
  const double m = median_of(v);
  for (double& x : v) x = std::abs(x - m);
  return kMadToSigma * median_of(v);
}

// Cut 1: mark velocity outliers against their neighbours in `keep`.
int mark_outliers(const VelocitySamples& s, const SampleGrid& grid, const FootprintOptions& o,
                  std::vector<char>& keep, double* threshold) {
  const std::size_t n = s.size();
  std::vector<double> d(n, std::numeric_limits<double>::quiet_NaN()), local(n, 0.0);
  std::vector<double> nb, dd;
  for (std::size_t i = 0; i < n; ++i) {
    nb.clear();
    for (int dy = -o.neighbour_radius; dy <= o.neighbour_radius; ++dy)
      for (int dx = -o.neighbour_radius; dx <= o.neighbour_radius; ++dx) {
        if (dx == 0 && dy == 0) continue;
        const int j = grid.at(s.x[i] + dx, s.y[i] + dy);
        if (j >= 0) nb.push_back(s.velocity[static_cast<std::size_t>(j)]);
      }
    if (static_cast<int>(nb.size()) < o.min_neighbours) continue;
    local[i] = mad_sigma(nb);
    d[i] = s.velocity[i] - median_of(nb);
    dd.push_back(d[i]);
  }
  if (dd.empty()) return 0;
  const double sigma_map = mad_sigma(dd);
  *threshold = o.outlier_sigma * sigma_map;
  int cut = 0;
  for (std::size_t i = 0; i < n; ++i)
    if (std::isfinite(d[i]) && std::abs(d[i]) > o.outlier_sigma * std::max(sigma_map, local[i])) {
      keep[i] = 0;
      ++cut;
    }
  return cut;
}

// Cut 2: 8-connected groups of kept samples; returns the group of each
// sample (-1 for cut ones) and the group sizes.
std::vector<int> label_groups(const VelocitySamples& s, const SampleGrid& grid,
                              const std::vector<char>& keep, std::vector<int>& sizes) {
  std::vector<int> group(s.size(), -1), stack;
  for (std::size_t seed = 0; seed < s.size(); ++seed) {
    if (!keep[seed] || group[seed] >= 0) continue;
    const int g = static_cast<int>(sizes.size());
    sizes.push_back(0);
    group[seed] = g;
    stack.assign(1, static_cast<int>(seed));
    while (!stack.empty()) {
      const auto i = static_cast<std::size_t>(stack.back());
      stack.pop_back();
      ++sizes[static_cast<std::size_t>(g)];
      for (int dy = -1; dy <= 1; ++dy)
        for (int dx = -1; dx <= 1; ++dx) {
          const int j = grid.at(s.x[i] + dx, s.y[i] + dy);
          if (j < 0 || !keep[static_cast<std::size_t>(j)] || group[static_cast<std::size_t>(j)] >= 0)
            continue;
          group[static_cast<std::size_t>(j)] = g;
          stack.push_back(j);
        }
    }
  }
  return group;
}

}  // namespace

FootprintSummary clean_footprint(VelocitySamples& s, const FootprintOptions& o) {
  FootprintSummary f;
  f.enabled = o.enabled;
  f.pixels_in = static_cast<int>(s.size());
  f.pixels_bad_error = s.dropped_bad_error;
  f.pixels_kept = f.pixels_in;
  if (!o.enabled || s.size() == 0) return f;
  const SampleGrid grid = make_sample_grid(s, std::vector<unsigned char>(s.size(), 1));
  std::vector<char> keep(s.size(), 1);
  f.velocity_outliers = mark_outliers(s, grid, o, keep, &f.outlier_threshold_kms);
  std::vector<char> why(s.size(), 0);
  for (std::size_t i = 0; i < s.size(); ++i)
    if (!keep[i]) why[i] = 'o';
  std::vector<int> sizes;
  const std::vector<int> group = label_groups(s, grid, keep, sizes);
  const double ppb = pixels_per_beam(s.beam, s.pixel_area_arcsec2);
  f.min_island_pixels = s.beam ? std::max(2, static_cast<int>(std::ceil(o.min_island_beams * ppb)))
                               : o.min_island_pixels_no_beam;
  for (int size : sizes) {
    if (size == 1) ++f.isolated_pixels;
    else if (size < f.min_island_pixels) { ++f.small_islands; f.small_island_pixels += size; }
    else ++f.islands_kept;
  }
  VelocitySamples out;
  out.has_errors = s.has_errors;
  out.pixel_area_arcsec2 = s.pixel_area_arcsec2;
  out.beam = s.beam;
  out.dropped_bad_error = s.dropped_bad_error;
  for (std::size_t i = 0; i < s.size(); ++i) {
    if (keep[i]) {
      const int size = sizes[static_cast<std::size_t>(group[i])];
      if (size < f.min_island_pixels) why[i] = size == 1 ? 'i' : 's';
    }
    if (why[i]) {
      f.rejected_x.push_back(s.x[i]);
      f.rejected_y.push_back(s.y[i]);
      f.rejected_why.push_back(why[i]);
      continue;
    }
    out.east.push_back(s.east[i]);
    out.north.push_back(s.north[i]);
    out.velocity.push_back(s.velocity[i]);
    out.sigma.push_back(s.sigma[i]);
    out.x.push_back(s.x[i]);
    out.y.push_back(s.y[i]);
  }
  f.pixels_kept = static_cast<int>(out.size());
  s = std::move(out);
  return f;
}

}  // namespace fulcrum::kinematics
