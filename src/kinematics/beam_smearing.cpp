// Beam smearing of a velocity map and its forward-modelled correction
// (beam_smearing.hpp; the reasoning is in docs/kinematics.md §2a).
// Units: arcsec offsets (east, north), km/s; pixels 0-based, x fastest.
#include "fulcrum/kinematics/beam_smearing.hpp"

#include <Eigen/Dense>
#include <algorithm>
#include <cmath>
#include <cstring>
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

// The smearing sums advance kLanes consecutive output pixels together, one
// sum per pixel (smear_moment1_fields).
constexpr int kLanes = 16;
// Four doubles as one value (a GCC/Clang vector extension): + and * act lane
// by lane, so every lane is an ordinary sum of its own.
using Lanes4 = double __attribute__((vector_size(32)));

// A zero-padded plane (pw columns, x fastest) with, per row, the first and
// last column holding a non-zero value (lo > hi: none).
struct PaddedPlane {
  std::vector<double> value;
  std::vector<int> lo, hi;
};

// The tap sums of one block of kLanes output pixels on a zero-padded plane:
// for kernel rows r = 0 .. rows - 1 (dy = r - hy ascending), the plane row
// `row0 - r * row_step` (the padded row y - dy, at the block's first pixel,
// padded column col0) with its non-zero columns lo0[-r] .. hi0[-r], and
// the taps dx = first[r] .. last[r] of kernel row `krow0 + r * k_step`
// (indexed by dx), result[l] = sum over (r, dx) in that order of
// k(dx, dy) * plane[row - dx + l]. A tap whose kLanes values are all zero
// is left out (it would add zeros). Compiled twice, for AVX and for the
// baseline, the one chosen when the program starts: AVX without FMA does the
// same multiplications and additions in the same order, so both give the
// same bits (tested against a pixel-by-pixel loop).
__attribute__((target_clones("avx", "default"))) void tap_sums(const double* row0, std::ptrdiff_t row_step,
                                                               const int* lo0, const int* hi0, int col0,
                                                               const double* krow0, std::ptrdiff_t k_step,
                                                               const int* first, const int* last, int rows,
                                                               double* result) {
  constexpr int kVectors = kLanes / 4;  // independent sums in flight: the additions' latency is hidden
  Lanes4 acc[kVectors];
  for (Lanes4& a : acc) a = Lanes4{0.0, 0.0, 0.0, 0.0};
  for (int r = 0; r < rows; ++r) {
    const double* krow = krow0 + r * k_step;
    const double* row = row0 - r * row_step;
    // Tap dx reads columns col0 - dx .. col0 - dx + kLanes - 1.
    const int dx_lo = std::max(first[r], col0 - hi0[-r]), dx_hi = std::min(last[r], col0 + kLanes - 1 - lo0[-r]);
    for (int dx = dx_lo; dx <= dx_hi; ++dx) {
      const double k = krow[dx];
      const Lanes4 kk = {k, k, k, k};
      for (int v = 0; v < kVectors; ++v) {
        Lanes4 src;
        std::memcpy(&src, row - dx + 4 * v, sizeof src);
        acc[v] += kk * src;
      }
    }
  }
  std::memcpy(result, acc, sizeof acc);
}
static_assert(kLanes % 4 == 0, "tap_sums keeps vectors of four lanes");

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
  for (const auto& f : fields) FULCRUM_CHECK(f.size() == n, n, f.size());
  std::vector<std::vector<double>> out(p, std::vector<double>(n, kNaN));
  if (p == 0) return out;
  const PixelKernel kernel = gaussian_kernel(pixel_cov, truncate_sigma);
  const int hx = kernel.hx, hy = kernel.hy, kw = 2 * hx + 1;

  // Every output pixel sums its taps k * I and k * I v in one fixed order
  // (dy, then dx, ascending). A pixel without emission or beyond the grid,
  // and a tap of weight 0, add a zero, which leaves a sum as it was (a sum
  // that starts at +0 never becomes -0): whether such terms are added or left
  // out does not change a bit. So the planes below are zero-padded and their
  // empty pixels added, while each kernel row's zero taps at its ends and
  // every tap that reads only zeros for the whole block (beyond a row's
  // non-zero extent: a node speed's column of the Jacobian is non-zero in an
  // annulus only) are left out; the sums are bit for bit those of a
  // pixel-by-pixel loop that skips every empty pixel (tested). A block of
  // kLanes consecutive output pixels is advanced tap by tap with one sum
  // each, which keeps every pixel's order while the additions run as vector
  // operations across the block (as convolve_gaussian does). The fields are
  // smeared one after the other through one plane, sharing B * I.
  const int pw = nx + 2 * hx + kLanes, ph = ny + 2 * hy;
  const std::size_t np = static_cast<std::size_t>(pw) * static_cast<std::size_t>(ph);
  auto padded = [&](int x, int y) {
    return static_cast<std::size_t>(x + hx) + static_cast<std::size_t>(pw) * static_cast<std::size_t>(y + hy);
  };
  // The emission I, zero-padded; then one plane of I times a field at a time.
  PaddedPlane emission, plane;
  for (PaddedPlane* pp : {&emission, &plane}) {
    pp->value.assign(np, 0.0);
    pp->lo.assign(static_cast<std::size_t>(ph), pw);
    pp->hi.assign(static_cast<std::size_t>(ph), -1);
  }
  // Row y's value v(x) into the plane, with the row's non-zero extent.
  auto fill_row = [&](PaddedPlane& pp, int y, auto&& v) {
    int lo = pw, hi = -1;
    for (int x = 0; x < nx; ++x) {
      const double a = v(x);
      pp.value[padded(x, y)] = a;
      if (a != 0.0) lo = std::min(lo, x + hx), hi = std::max(hi, x + hx);
    }
    pp.lo[static_cast<std::size_t>(y + hy)] = lo;
    pp.hi[static_cast<std::size_t>(y + hy)] = hi;
  };
  for (int y = 0; y < ny; ++y)
    fill_row(emission, y, [&](int x) {
      const double I = intensity[idx(x, y, nx)];
      return std::isfinite(I) && I > 0 ? I : 0.0;
    });
  // Per kernel row, the taps of non-zero weight (a contiguous run of dx for
  // the truncated ellipse; the zero taps add +0 and are left out).
  std::vector<int> dx_first(static_cast<std::size_t>(2 * hy + 1)), dx_last(dx_first.size());
  for (int dy = -hy; dy <= hy; ++dy) {
    int lo = hx + 1, hi = -hx - 1;
    for (int dx = -hx; dx <= hx; ++dx)
      if (kernel.at(dx, dy) != 0.0) lo = std::min(lo, dx), hi = std::max(hi, dx);
    dx_first[static_cast<std::size_t>(dy + hy)] = lo;
    dx_last[static_cast<std::size_t>(dy + hy)] = hi;
  }
  // The sums over the taps for the output pixels x0 .. x0 + kLanes - 1 of
  // row y, on one zero-padded plane.
  auto block_sum = [&](const PaddedPlane& pl, int x0, int y, double* result) {
    const std::size_t top = static_cast<std::size_t>(y + 2 * hy);  // padded row of dy = -hy
    tap_sums(pl.value.data() + padded(x0, y + hy), pw, &pl.lo[top], &pl.hi[top], x0 + hx,
             &kernel.weight[static_cast<std::size_t>(hx)], kw, dx_first.data(), dx_last.data(), 2 * hy + 1,
             result);
  };
  // The blocks holding a pixel to compute, per row.
  std::vector<std::vector<int>> blocks(static_cast<std::size_t>(ny));
  for (int y = 0; y < ny; ++y)
    for (int x0 = 0; x0 < nx; x0 += kLanes) {
      bool any = where.empty();
      for (int l = 0; l < kLanes && x0 + l < nx && !any; ++l) any = where[idx(x0 + l, y, nx)] != 0;
      if (any) blocks[static_cast<std::size_t>(y)].push_back(x0);
    }
  // Threads only pay off for large maps: on a small one (a few thousand
  // pixels) starting and spinning them costs more than the sums.
  const std::size_t outputs =
      where.empty() ? n : static_cast<std::size_t>(std::count(where.begin(), where.end(), 1));
  const bool threaded =
      static_cast<double>(outputs) * static_cast<double>(kernel.weight.size()) * static_cast<double>(p) > 2e7;
  // B * I at every block pixel (nx rounded up to whole blocks per row).
  const std::size_t bw = static_cast<std::size_t>((nx + kLanes - 1) / kLanes * kLanes);
  std::vector<double> den(bw * static_cast<std::size_t>(ny), 0.0);
#pragma omp parallel for schedule(static) if (threaded)
  for (int y = 0; y < ny; ++y)
    for (int x0 : blocks[static_cast<std::size_t>(y)])
      block_sum(emission, x0, y, &den[bw * static_cast<std::size_t>(y) + static_cast<std::size_t>(x0)]);
  for (std::size_t c = 0; c < p; ++c) {
    const std::vector<double>& f = fields[c];
    for (int y = 0; y < ny; ++y)
      fill_row(plane, y, [&](int x) {
        const double I = emission.value[padded(x, y)];
        return I != 0.0 ? I * f[idx(x, y, nx)] : 0.0;
      });
    std::vector<double>& o = out[c];
#pragma omp parallel for schedule(static) if (threaded)
    for (int y = 0; y < ny; ++y) {
      double num[kLanes];
      for (int x0 : blocks[static_cast<std::size_t>(y)]) {
        block_sum(plane, x0, y, num);
        const double* d = &den[bw * static_cast<std::size_t>(y) + static_cast<std::size_t>(x0)];
        for (int l = 0; l < kLanes && x0 + l < nx; ++l) {
          const std::size_t i = idx(x0 + l, y, nx);
          if ((where.empty() || where[i]) && d[l] > 0) o[i] = num[l] / d[l];
        }
      }
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
