// Centre of least rotational asymmetry (see symmetry.hpp).
#include "fulcrum/photometry/symmetry.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <limits>
#include <vector>

namespace fulcrum::photometry {

namespace {

// The usable pixels of the aperture about `ac`, in row order: fixed for one
// search round, so A(c) is evaluated over the same set at every c.
struct Aperture {
  std::vector<int> x, y;
  std::vector<long long> index;  // x + nx y
  std::vector<double> f;
  int xmin = 0, xmax = -1, ymin = 0, ymax = -1;
  // Runs of pixels adjacent along x on one row: run r holds pixels
  // run_start[r] .. run_start[r + 1] - 1 (so run_start has one more entry).
  std::vector<std::size_t> run_start;
};

// The image with its non-finite values set to 0, and 1 where a pixel and
// its neighbours at +x, +y and +x+y are all finite (their bilinear
// interpolation is finite), else 0: a reflection's term times this flag is
// the term or nothing, with no test per pixel. Same size as the image; made
// once per image and shared by every aperture.
struct FiniteImage {
  std::vector<double> zeroed, usable;
};

FiniteImage finite_image(const PreparedImage& p, const std::vector<double>& data) {
  FiniteImage fi;
  fi.zeroed.resize(data.size());
  for (std::size_t i = 0; i < data.size(); ++i) fi.zeroed[i] = std::isfinite(data[i]) ? data[i] : 0.0;
  fi.usable.assign(data.size(), 0.0);
  for (int y = 0; y + 1 < p.ny; ++y)
    for (int x = 0; x + 1 < p.nx; ++x) {
      const double* d = &data[static_cast<std::size_t>(x) + static_cast<std::size_t>(p.nx) * y];
      const bool ok = std::isfinite(d[0]) && std::isfinite(d[1]) && std::isfinite(d[p.nx]) &&
                      std::isfinite(d[p.nx + 1]);
      fi.usable[static_cast<std::size_t>(x) + static_cast<std::size_t>(p.nx) * y] = ok ? 1.0 : 0.0;
    }
  return fi;
}

void find_runs(Aperture& a) {
  a.run_start.clear();
  for (std::size_t k = 0; k < a.x.size(); ++k)
    if (k == 0 || a.y[k] != a.y[k - 1] || a.x[k] != a.x[k - 1] + 1) a.run_start.push_back(k);
  a.run_start.push_back(a.x.size());
}

Aperture aperture_pixels(const PreparedImage& p, const std::vector<double>& data, PixelCoord ac,
                         double r_arcsec) {
  const Eigen::Matrix2d ji = p.jacobian.inverse();
  const double ex = r_arcsec * ji.row(0).norm(), ey = r_arcsec * ji.row(1).norm();
  const int x0 = std::max(0, static_cast<int>(std::floor(ac.x - ex)));
  const int x1 = std::min(p.nx - 1, static_cast<int>(std::ceil(ac.x + ex)));
  const int y0 = std::max(0, static_cast<int>(std::floor(ac.y - ey)));
  const int y1 = std::min(p.ny - 1, static_cast<int>(std::ceil(ac.y + ey)));
  Aperture a;
  for (int y = y0; y <= y1; ++y)
    for (int x = x0; x <= x1; ++x) {
      const double f = data[x + p.nx * y];
      if (!std::isfinite(f)) continue;
      if (p.to_sky(x - ac.x, y - ac.y).norm() > r_arcsec) continue;
      a.x.push_back(x);
      a.y.push_back(y);
      a.index.push_back(x + static_cast<long long>(p.nx) * y);
      a.f.push_back(f);
      if (a.x.size() == 1) {
        a.xmin = a.xmax = x;
        a.ymin = a.ymax = y;
      }
      a.xmin = std::min(a.xmin, x);
      a.xmax = std::max(a.xmax, x);
      a.ymin = std::min(a.ymin, y);
      a.ymax = std::max(a.ymax, y);
    }
  find_runs(a);
  return a;
}

// A(c) over the aperture's pixels. The reflection of pixel (x, y) is
// (2c_x - x, 2c_y - y) = (X - x + t_x, Y - y + t_y) with X = floor(2c_x),
// t_x = 2c_x - X (and likewise for y): the bilinear weights t_x, t_y are the
// same for every pixel, so they are computed once per c. Both forms give the
// same floating-point numbers as bilinear() at the reflected point (2c_x - x
// is exact for 0 <= 2c_x - x <= 2c_x), so each interpolated value is bit for
// bit the plain per-pixel interpolation (the sums over them are added in
// parts, see below).
double asymmetry_over(const Aperture& a, const FiniteImage& fi, const std::vector<double>& data, int nx,
                      int ny, PixelCoord c) {
  if (!std::isfinite(c.x) || !std::isfinite(c.y)) return std::numeric_limits<double>::infinity();
  const double fx = std::floor(2.0 * c.x), fy = std::floor(2.0 * c.y);
  const double tx = 2.0 * c.x - fx, ty = 2.0 * c.y - fy;
  const long long X = static_cast<long long>(fx), Y = static_cast<long long>(fy);
  const bool on_node = tx == 0.0 && ty == 0.0;
  double num = 0, den = 0;
  // Along a run the reflections are adjacent pixels read backwards, so the
  // loop over the run's pixels whose reflection lies inside the grid reads
  // memory in order and the compiler may work on several pixels at once
  // (`omp simd`: each sum is split into as many parts as a vector has lanes
  // and added at the end, a fixed order for one build). A pixel whose
  // reflection is not finite adds nothing (FiniteImage::usable). The pixels
  // whose reflection reaches the grid's edge take the per-pixel path.
  const double* dd = data.data();
  const double* ff = a.f.data();
  const double wx0 = 1 - tx, wy0 = 1 - ty;
  auto edge_pixel = [&](std::size_t k) {
    const long long x0 = X - a.x[k], y0 = Y - a.y[k];
    double g;
    if (x0 >= 0 && y0 >= 0 && x0 + 1 < nx && y0 + 1 < ny) {
      const double* d = &data[static_cast<std::size_t>(x0 + nx * y0)];
      g = wy0 * (wx0 * d[0] + tx * d[1]) + ty * (wx0 * d[nx] + tx * d[nx + 1]);
    } else if (on_node && x0 >= 0 && y0 >= 0 && x0 < nx && y0 < ny) {
      g = data[static_cast<std::size_t>(x0 + nx * y0)];  // last row/column, exactly on a pixel
    } else {
      return;
    }
    if (!std::isfinite(g)) return;
    const double f = a.f[k];
    num += std::abs(f - g);
    den += std::abs(f);
  };
  for (std::size_t r = 0; r + 1 < a.run_start.size(); ++r) {
    const std::size_t k0 = a.run_start[r], k1 = a.run_start[r + 1];
    const long long y0 = Y - a.y[k0];
    // Pixels x of the run with 0 <= X - x and X - x + 1 < nx.
    long long ja = 0, jb = 0;
    if (y0 >= 0 && y0 + 1 < ny) {
      const long long xa = a.x[k0];
      ja = std::clamp<long long>(X - nx + 2 - xa, 0, static_cast<long long>(k1 - k0));
      jb = std::clamp<long long>(X + 1 - xa, ja, static_cast<long long>(k1 - k0));
    }
    for (long long j = 0; j < ja; ++j) edge_pixel(k0 + static_cast<std::size_t>(j));
    const double* d0 = dd + (X + static_cast<long long>(nx) * Y - a.index[k0]);
    const double* f0 = ff + k0;
    double sn = 0, sd = 0;
    const double* z0 = fi.zeroed.data() + (d0 - dd);
    const double* q0 = fi.usable.data() + (d0 - dd);
#pragma omp simd reduction(+ : sn, sd)
    for (long long j = ja; j < jb; ++j) {
      const double* z = z0 - j;
      const double g = wy0 * (wx0 * z[0] + tx * z[1]) + ty * (wx0 * z[nx] + tx * z[nx + 1]);
      const double q = q0[-j];
      sn += q * std::abs(f0[j] - g);
      sd += q * std::abs(f0[j]);
    }
    num += sn;
    den += sd;
    for (long long j = jb; j < static_cast<long long>(k1 - k0); ++j) edge_pixel(k0 + static_cast<std::size_t>(j));
  }
  return den > 0 ? num / den : std::numeric_limits<double>::infinity();
}

}  // namespace

double rotational_asymmetry(const PreparedImage& p, const std::vector<double>& data, PixelCoord c,
                            PixelCoord ac, double r_arcsec) {
  return asymmetry_over(aperture_pixels(p, data, ac, r_arcsec), finite_image(p, data), data, p.nx, p.ny, c);
}

namespace {

struct Minimum {
  PixelCoord c;
  double value = 0;
  int evaluations = 0;
  bool converged = false;
};

// Nelder & Mead (1965) simplex minimisation in 2-D, standard coefficients
// (reflection 1, expansion 2, contraction 1/2, shrink 1/2).
template <class F>
Minimum nelder_mead(F&& f, PixelCoord start, double step, double tol, int max_eval) {
  std::array<std::array<double, 2>, 3> x{{{start.x, start.y},
                                          {start.x + step, start.y},
                                          {start.x, start.y + step}}};
  std::array<double, 3> fx;
  int ne = 0;
  auto eval = [&](const std::array<double, 2>& v) {
    ++ne;
    return f(PixelCoord{v[0], v[1]});
  };
  for (int i = 0; i < 3; ++i) fx[i] = eval(x[i]);
  bool conv = false;
  while (ne < max_eval) {
    std::array<int, 3> o{0, 1, 2};
    std::sort(o.begin(), o.end(), [&](int a, int b) { return fx[a] < fx[b]; });
    auto xb = x[o[0]], xm = x[o[1]], xw = x[o[2]];
    const double fb = fx[o[0]], fm = fx[o[1]], fw = fx[o[2]];
    double size = 0;
    for (int i = 1; i < 3; ++i)
      size = std::max(size, std::hypot(x[o[i]][0] - xb[0], x[o[i]][1] - xb[1]));
    if (size < tol) {
      conv = true;
      break;
    }
    const std::array<double, 2> cen{0.5 * (xb[0] + xm[0]), 0.5 * (xb[1] + xm[1])};
    auto along = [&](double t) {
      return std::array<double, 2>{cen[0] + t * (xw[0] - cen[0]), cen[1] + t * (xw[1] - cen[1])};
    };
    const auto xr = along(-1.0);
    const double fr = eval(xr);
    if (fr < fb) {
      const auto xe = along(-2.0);
      const double fe = eval(xe);
      if (fe < fr) { x[o[2]] = xe; fx[o[2]] = fe; }
      else { x[o[2]] = xr; fx[o[2]] = fr; }
    } else if (fr < fm) {
      x[o[2]] = xr;
      fx[o[2]] = fr;
    } else {
      const auto xc = fr < fw ? along(-0.5) : along(0.5);
      const double fc = eval(xc);
      if (fc < std::min(fr, fw)) {
        x[o[2]] = xc;
        fx[o[2]] = fc;
      } else {
        for (int i = 1; i < 3; ++i) {
          auto& v = x[o[i]];
          v = {xb[0] + 0.5 * (v[0] - xb[0]), xb[1] + 0.5 * (v[1] - xb[1])};
          fx[o[i]] = eval(v);
        }
      }
    }
  }
  int best = 0;
  for (int i = 1; i < 3; ++i)
    if (fx[i] < fx[best]) best = i;
  return {{x[best][0], x[best][1]}, fx[best], ne, conv};
}

}  // namespace

PixelEstimate estimate_symmetry_centre(const PreparedImage& p, const std::vector<double>& data,
                                       const SymmetryOptions& o) {
  if (!p.ok) return PixelEstimate::failure(p.reason);
  const double r = o.aperture_radius_arcsec > 0 ? o.aperture_radius_arcsec : 1.5 * p.radius_arcsec;
  PixelCoord c = o.start.value_or(p.guess);
  Minimum m;
  int evaluations = 0;
  const FiniteImage fi = finite_image(p, data);
  const int rounds = o.aperture_centre ? 1 : 2;
  for (int round = 0; round < rounds; ++round) {
    const Aperture ap = aperture_pixels(p, data, o.aperture_centre.value_or(c), r);
    auto f = [&](PixelCoord t) { return asymmetry_over(ap, fi, data, p.nx, p.ny, t); };
    m = nelder_mead(f, c, round == 0 ? 1.0 : 0.25, o.tolerance_pixels, o.max_evaluations);
    evaluations += m.evaluations;
    if (!std::isfinite(m.value))
      return PixelEstimate::failure("no usable pixel pairs for the rotational asymmetry");
    c = m.c;
    if (c.x < 0 || c.y < 0 || c.x > p.nx - 1 || c.y > p.ny - 1)
      return PixelEstimate::failure("the symmetry centre left the image");
  }
  if (!m.converged)
    return PixelEstimate::failure("the asymmetry minimisation did not converge in " +
                                  std::to_string(o.max_evaluations) + " evaluations");
  PixelEstimate e;
  e.ok = true;
  e.centre = c;
  e.details = {{"asymmetry", m.value}, {"aperture_radius_arcsec", r}, {"evaluations", evaluations}};
  return e;
}

}  // namespace fulcrum::photometry
