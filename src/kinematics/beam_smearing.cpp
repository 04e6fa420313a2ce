// Beam smearing of a velocity map and its forward-modelled correction
// (beam_smearing.hpp; the reasoning is in docs/kinematics.md §2a).
// Units: arcsec offsets (east, north), km/s; pixels 0-based, x fastest.
#include "fulcrum/kinematics/beam_smearing.hpp"

#include <Eigen/Dense>
#include <algorithm>
#include <cmath>
#include <limits>

#include "fulcrum/core/error.hpp"
#include "fulcrum/imaging/gaussian_smooth.hpp"
#include "fulcrum/kinematics/tilted_ring_model.hpp"
#include "fulcrum/sky/angle.hpp"
#include "fulcrum/sky/pixel_offsets.hpp"

namespace fulcrum::kinematics {

namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

std::size_t idx(int x, int y, int nx) {
  return static_cast<std::size_t>(x) + static_cast<std::size_t>(nx) * static_cast<std::size_t>(y);
}

// True when `b` has the same pixel grid on the sky as `a` (same size, and the
// corners and centre of `a` land on the same pixels of `b` to 1e-3 pixel).
bool same_grid(const Image& a, const Image& b) {
  if (a.nx != b.nx || a.ny != b.ny || !a.wcs.valid() || !b.wcs.valid()) return false;
  for (auto [x, y] : {std::pair{0.0, 0.0}, {a.nx - 1.0, 0.0}, {0.0, a.ny - 1.0},
                      {a.nx - 1.0, a.ny - 1.0}, {0.5 * (a.nx - 1), 0.5 * (a.ny - 1)}}) {
    try {
      const PixelCoord p = b.wcs.world_to_pixel(a.wcs.pixel_to_world({x, y}));
      if (!(std::abs(p.x - x) < 1e-3 && std::abs(p.y - y) < 1e-3)) return false;
    } catch (const InputError&) {
      return false;
    }
  }
  return true;
}

// The piecewise-linear rotation (or radial) curve of the global fit as
// rotation_at() evaluates it, with a binary search over the node radii.
struct NodeCurve {
  std::vector<double> r, v;  // nodes 1..N
  double at(double R) const {
    if (r.empty() || R <= 0) return 0.0;
    const auto it = std::upper_bound(r.begin(), r.end(), R);
    if (it == r.end()) return v.back();
    const std::size_t k = static_cast<std::size_t>(it - r.begin());
    const double r0 = k == 0 ? 0.0 : r[k - 1], v0 = k == 0 ? 0.0 : v[k - 1];
    return v0 + (v[k] - v0) * (R - r0) / (r[k] - r0);
  }
};

}  // namespace

std::vector<double> smear_moment1(const std::vector<double>& velocity,
                                  const std::vector<double>& intensity, int nx, int ny,
                                  const Eigen::Matrix2d& pixel_cov,
                                  const std::vector<unsigned char>& where, double truncate_sigma) {
  const std::size_t n = static_cast<std::size_t>(nx) * static_cast<std::size_t>(ny);
  FULCRUM_CHECK(velocity.size() == n && intensity.size() == n, n, velocity.size());
  // A pixel without a finite velocity carries no emission.
  std::vector<double> I(intensity), v(velocity);
  for (std::size_t i = 0; i < n; ++i)
    if (!std::isfinite(v[i])) I[i] = 0.0, v[i] = 0.0;
  return std::move(smear_moment1_fields({std::move(v)}, I, nx, ny, pixel_cov, where, truncate_sigma).front());
}

std::vector<std::vector<double>> smear_moment1_fields(const std::vector<std::vector<double>>& fields,
                                                      const std::vector<double>& intensity, int nx, int ny,
                                                      const Eigen::Matrix2d& pixel_cov,
                                                      const std::vector<unsigned char>& where,
                                                      double truncate_sigma) {
  const std::size_t n = static_cast<std::size_t>(nx) * static_cast<std::size_t>(ny);
  const std::size_t p = fields.size();
  FULCRUM_CHECK(intensity.size() == n, n, intensity.size());
  FULCRUM_CHECK(where.empty() || where.size() == n, n, where.size());
  std::vector<std::vector<double>> out(p, std::vector<double>(n, kNaN));
  if (p == 0) return out;
  const PixelKernel kernel = gaussian_kernel(pixel_cov, truncate_sigma);
  // Emission I, and I times every field interleaved per pixel ([pixel][field]).
  std::vector<double> w(n, 0.0), wv(n * p, 0.0);
  for (std::size_t i = 0; i < n; ++i) {
    const double I = intensity[i];
    if (!(std::isfinite(I) && I > 0)) continue;
    w[i] = I;
    for (std::size_t c = 0; c < p; ++c) {
      FULCRUM_CHECK(fields[c].size() == n, n, fields[c].size());
      wv[i * p + c] = I * fields[c][i];
    }
  }
  const int hx = kernel.hx, hy = kernel.hy, kw = 2 * hx + 1;
  // Threads only pay off for large maps: on a small one (a few thousand
  // pixels) starting and spinning them costs more than the sums.
  const std::size_t outputs =
      where.empty() ? n : static_cast<std::size_t>(std::count(where.begin(), where.end(), 1));
  const bool threaded =
      static_cast<double>(outputs) * static_cast<double>(kernel.weight.size()) * static_cast<double>(p) > 2e7;
#pragma omp parallel for schedule(static) if (threaded)
  for (int y = 0; y < ny; ++y) {
    std::vector<double> num(p);
    for (int x = 0; x < nx; ++x) {
      const std::size_t i = idx(x, y, nx);
      if (!where.empty() && !where[i]) continue;
      const int dx_lo = std::max(-hx, x - (nx - 1)), dx_hi = std::min(hx, x);
      const int dy_lo = std::max(-hy, y - (ny - 1)), dy_hi = std::min(hy, y);
      std::fill(num.begin(), num.end(), 0.0);
      double den = 0.0;
      for (int dy = dy_lo; dy <= dy_hi; ++dy) {
        const double* krow = &kernel.weight[static_cast<std::size_t>(kw) * (dy + hy) + hx];
        for (int dx = dx_lo; dx <= dx_hi; ++dx) {
          const std::size_t j = idx(x - dx, y - dy, nx);
          if (w[j] == 0.0) continue;
          const double k = krow[dx];
          den += k * w[j];
          const double* v = &wv[j * p];
          for (std::size_t c = 0; c < p; ++c) num[c] += k * v[c];
        }
      }
      if (den > 0)
        for (std::size_t c = 0; c < p; ++c) out[c][i] = num[c] / den;
    }
  }
  return out;
}

SmearingGrid make_smearing_grid(const Image& velocity, const VelocitySamples& s,
                                WorldCoord reference, const Beam& beam, const Image* intensity) {
  SmearingGrid g;
  g.beam = beam;
  if (s.size() == 0) return g;
  const PixelOffsets offsets(velocity, reference);
  g.pixel_cov = pixel_covariance(beam, offsets.jacobian());
  const PixelKernel kernel = gaussian_kernel(g.pixel_cov);
  // The box: the samples' bounding box grown by the kernel's reach (emission
  // farther out cannot reach a sample).
  const auto [xmin, xmax] = std::minmax_element(s.x.begin(), s.x.end());
  const auto [ymin, ymax] = std::minmax_element(s.y.begin(), s.y.end());
  g.x0 = std::max(0, *xmin - kernel.hx);
  g.y0 = std::max(0, *ymin - kernel.hy);
  g.nx = std::min(velocity.nx - 1, *xmax + kernel.hx) - g.x0 + 1;
  g.ny = std::min(velocity.ny - 1, *ymax + kernel.hy) - g.y0 + 1;
  const std::size_t n = static_cast<std::size_t>(g.nx) * static_cast<std::size_t>(g.ny);
  g.east.resize(n);
  g.north.resize(n);
  for (int y = 0; y < g.ny; ++y)
    for (int x = 0; x < g.nx; ++x) {
      const SkyOffset o = offsets.at(g.x0 + x, g.y0 + y);
      g.east[idx(x, y, g.nx)] = o.east;
      g.north[idx(x, y, g.nx)] = o.north;
    }
  g.wanted.assign(n, 0);
  g.sample_pixel.resize(s.size());
  for (std::size_t i = 0; i < s.size(); ++i) {
    const std::size_t b = idx(s.x[i] - g.x0, s.y[i] - g.y0, g.nx);
    g.sample_pixel[i] = b;
    g.wanted[b] = 1;
  }

  g.intensity.assign(n, 0.0);
  if (!intensity) {
    for (std::size_t b : g.sample_pixel) g.intensity[b] = 1.0;
    g.from_intensity_map = false;
    g.weighting = "uniform over the detected footprint (no intensity map given)";
    return g;
  }
  if (!intensity->wcs.valid())
    throw InputError(intensity->path, "the intensity map has no celestial WCS");
  g.from_intensity_map = true;
  const std::string name = intensity->path.empty() ? std::string("intensity map") : intensity->path;
  g.weighting = "line intensity from " + name;
  auto value = [](double I) { return std::isfinite(I) && I > 0 ? I : 0.0; };
  if (same_grid(velocity, *intensity)) {
    for (int y = 0; y < g.ny; ++y)
      for (int x = 0; x < g.nx; ++x)
        g.intensity[idx(x, y, g.nx)] = value(intensity->at(g.x0 + x, g.y0 + y));
  } else {
    // Nearest intensity pixel to each velocity pixel centre, through both WCSs.
    std::vector<double> xs(n), ys(n);
    for (int y = 0; y < g.ny; ++y)
      for (int x = 0; x < g.nx; ++x) {
        xs[idx(x, y, g.nx)] = g.x0 + x;
        ys[idx(x, y, g.nx)] = g.y0 + y;
      }
    std::vector<WorldCoord> world(n);
    velocity.wcs.pixels_to_world(xs.data(), ys.data(), n, world.data());
    for (std::size_t b = 0; b < n; ++b) {
      try {
        const PixelCoord p = intensity->wcs.world_to_pixel(world[b]);
        const int ix = static_cast<int>(std::lround(p.x)), iy = static_cast<int>(std::lround(p.y));
        if (std::isfinite(p.x) && std::isfinite(p.y) && intensity->contains(ix, iy))
          g.intensity[b] = value(intensity->at(ix, iy));
      } catch (const InputError&) {
        // Outside the intensity map's projection: no emission.
      }
    }
    g.note = name + " is on another grid than the velocity map: its nearest pixel to each "
                    "velocity pixel is used for the beam-smearing correction";
  }
  double under = 0.0;
  for (std::size_t b : g.sample_pixel) under += g.intensity[b];
  if (!(under > 0))
    throw InputError(intensity->path, "the intensity map has no positive pixel under the velocity "
                                      "map's footprint");
  return g;
}

std::vector<double> smearing_correction(const SmearingGrid& g, const GlobalFitSummary& fit) {
  std::vector<double> delta(g.sample_pixel.size(), 0.0);
  if (!g.usable() || fit.nodes.empty()) return delta;
  NodeCurve rot, rad;
  bool radial = false;
  for (const auto& node : fit.nodes) {
    rot.r.push_back(node.radius_arcsec);
    rot.v.push_back(node.vrot_kms);
    rad.r.push_back(node.radius_arcsec);
    rad.v.push_back(node.vrad_kms);
    radial = radial || node.vrad_kms != 0.0;
  }
  const DiscGeometry& geo = fit.geometry;
  const Angle pa = geo.pa_deg * degrees, inc = geo.inc_deg * degrees;
  const double cp = pa.cos(), sp = pa.sin(), ci = inc.cos(), si = inc.sin();
  const std::size_t n = g.east.size();
  std::vector<double> model(n);
  for (std::size_t b = 0; b < n; ++b) {
    double X, Y;
    disc_plane(g.east[b], g.north[b], geo.centre.east, geo.centre.north, cp, sp, ci, &X, &Y);
    const double R = std::hypot(X, Y);
    model[b] = tilted_ring_velocity(X, Y, R, si, geo.vsys_kms, rot.at(R), radial ? rad.at(R) : 0.0);
  }
  const std::vector<double> smeared = smear_moment1(model, g.intensity, g.nx, g.ny, g.pixel_cov, g.wanted);
  for (std::size_t i = 0; i < delta.size(); ++i) {
    const std::size_t b = g.sample_pixel[i];
    delta[i] = std::isfinite(smeared[b]) ? smeared[b] - model[b] : 0.0;
  }
  return delta;
}

}  // namespace fulcrum::kinematics
