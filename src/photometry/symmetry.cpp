// Centre of least rotational asymmetry (see symmetry.hpp).
#include "fulcrum/photometry/symmetry.hpp"

#include <algorithm>
#include <array>
#include <cstring>
#include <cmath>
#include <limits>
#include <memory>
#include <string>
#include <vector>

#include "fulcrum/core/error.hpp"

namespace fulcrum::photometry {

// (Named, not anonymous: SymmetryDraws keeps one.)
namespace symmetry_detail {
// The usable pixels of the aperture about `ac`, in row order: fixed for one
// search round, so A(c) is evaluated over the same set at every c.
struct Aperture {
  std::vector<int> x, y;
  std::vector<long long> index;  // x + nx y
  int xmin = 0, xmax = -1, ymin = 0, ymax = -1;
  // Runs of pixels adjacent along x on one row: run r holds pixels
  // run_start[r] .. run_start[r + 1] - 1 (so run_start has one more entry).
  std::vector<std::size_t> run_start;
};
}  // namespace symmetry_detail

namespace {

using symmetry_detail::Aperture;

// An image's values at an aperture's pixels: f in the aperture's order,
// f_reversed with each run's values in reverse order (run_asymmetry_sums).
struct ApertureValues {
  std::vector<double> f, f_reversed;
};

// What A(c) reads: the aperture, the image's values there, the image with
// its non-finite values set to 0 and the finiteness flags (FiniteImage),
// and the image itself.
struct AsymmetryInputs {
  const Aperture& a;
  const ApertureValues& v;
  const std::vector<double>& zeroed;
  const std::vector<double>& usable;
  const std::vector<double>& data;
  int nx, ny;
};

// The image with its non-finite values set to 0, and 1 where a pixel and
// its neighbours at +x, +y and +x+y are all finite (their bilinear
// interpolation is finite), else 0: a reflection's term times this flag is
// the term or nothing, with no test per pixel. Same size as the image; made
// once per image and shared by every aperture.
struct FiniteImage {
  std::vector<double> zeroed, usable;
};

// `data` with its non-finite values set to 0.
std::vector<double> zeroed_copy(const std::vector<double>& data) {
  std::vector<double> z(data.size());
  for (std::size_t i = 0; i < data.size(); ++i) z[i] = std::isfinite(data[i]) ? data[i] : 0.0;
  return z;
}

FiniteImage finite_image(const PreparedImage& p, const std::vector<double>& data) {
  FiniteImage fi;
  fi.zeroed = zeroed_copy(data);
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

// The values of `data` at the aperture's pixels, into v.
void read_values(const Aperture& a, const std::vector<double>& data, ApertureValues& v) {
  const std::size_t n = a.index.size();
  v.f.resize(n);
  v.f_reversed.resize(n);
  for (std::size_t k = 0; k < n; ++k) v.f[k] = data[static_cast<std::size_t>(a.index[k])];
  for (std::size_t r = 0; r + 1 < a.run_start.size(); ++r) {
    const std::size_t k0 = a.run_start[r], k1 = a.run_start[r + 1];
    for (std::size_t k = k0; k < k1; ++k) v.f_reversed[k0 + (k1 - 1 - k)] = v.f[k];
  }
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

// Four doubles as one value (a GCC/Clang vector extension): + and * act
// lane by lane; the integer form clears sign bits (an exact |x|).
using AsymmetryLanes = double __attribute__((vector_size(32)));
using AsymmetryBits = long long __attribute__((vector_size(32)));

// The sums sum q |f - g| and sum q |f| over `count` pixels of one run, all
// read forwards: f the run's values (stored reversed, see Aperture::f_reversed),
// g the bilinear interpolation of z (z[0], z[1], z[nx], z[nx + 1] with the
// weights (1 - tx, tx) along x and (1 - ty, ty) along y), q the finiteness
// flag. Eight partial sums (two vectors of four lanes, pixel m into lane m
// mod 8) are added in a fixed order at the end, the last count mod 8 pixels
// one by one after them. Compiled twice, for AVX and for the baseline, the
// one chosen when the program starts: AVX without FMA does the same
// multiplications and additions in the same order, so both give the same
// bits (tested against a pixel-by-pixel sum).
__attribute__((target_clones("avx", "default"))) void run_asymmetry_sums(
    const double* f, const double* z, const double* q, long long count, std::ptrdiff_t nx, double tx,
    double ty, double out[2]) {
  const double wx0 = 1 - tx, wy0 = 1 - ty;
  const AsymmetryLanes WX0 = {wx0, wx0, wx0, wx0}, TX = {tx, tx, tx, tx}, WY0 = {wy0, wy0, wy0, wy0},
                       TY = {ty, ty, ty, ty};
  constexpr long long kMagnitude = 0x7fffffffffffffffLL;
  const AsymmetryBits mask = {kMagnitude, kMagnitude, kMagnitude, kMagnitude};
  AsymmetryLanes num[2] = {{0, 0, 0, 0}, {0, 0, 0, 0}}, den[2] = {{0, 0, 0, 0}, {0, 0, 0, 0}};
  long long m = 0;
  for (; m + 8 <= count; m += 8)
    for (int h = 0; h < 2; ++h) {
      const long long k = m + 4 * h;
      AsymmetryLanes z00, z10, z01, z11, fv, qv;
      std::memcpy(&z00, z + k, sizeof z00);
      std::memcpy(&z10, z + k + 1, sizeof z10);
      std::memcpy(&z01, z + nx + k, sizeof z01);
      std::memcpy(&z11, z + nx + k + 1, sizeof z11);
      std::memcpy(&fv, f + k, sizeof fv);
      std::memcpy(&qv, q + k, sizeof qv);
      const AsymmetryLanes g = WY0 * (WX0 * z00 + TX * z10) + TY * (WX0 * z01 + TX * z11);
      num[h] += qv * (AsymmetryLanes)((AsymmetryBits)(fv - g) & mask);
      den[h] += qv * (AsymmetryLanes)((AsymmetryBits)fv & mask);
    }
  double sn = ((num[0][0] + num[0][1]) + (num[0][2] + num[0][3])) + ((num[1][0] + num[1][1]) + (num[1][2] + num[1][3]));
  double sd = ((den[0][0] + den[0][1]) + (den[0][2] + den[0][3])) + ((den[1][0] + den[1][1]) + (den[1][2] + den[1][3]));
  for (; m < count; ++m) {
    const double* zz = z + m;
    const double g = wy0 * (wx0 * zz[0] + tx * zz[1]) + ty * (wx0 * zz[nx] + tx * zz[nx + 1]);
    sn += q[m] * std::abs(f[m] - g);
    sd += q[m] * std::abs(f[m]);
  }
  out[0] = sn;
  out[1] = sd;
}

// A(c) over the aperture's pixels. The reflection of pixel (x, y) is
// (2c_x - x, 2c_y - y) = (X - x + t_x, Y - y + t_y) with X = floor(2c_x),
// t_x = 2c_x - X (and likewise for y): the bilinear weights t_x, t_y are the
// same for every pixel, so they are computed once per c. Both forms give the
// same floating-point numbers as bilinear() at the reflected point (2c_x - x
// is exact for 0 <= 2c_x - x <= 2c_x), so each interpolated value is bit for
// bit the plain per-pixel interpolation (the sums over them are added in
// parts, see run_asymmetry_sums).
double asymmetry_over(const AsymmetryInputs& in, PixelCoord c) {
  const Aperture& a = in.a;
  const std::vector<double>& data = in.data;
  const int nx = in.nx, ny = in.ny;
  if (!std::isfinite(c.x) || !std::isfinite(c.y)) return std::numeric_limits<double>::infinity();
  const double fx = std::floor(2.0 * c.x), fy = std::floor(2.0 * c.y);
  const double tx = 2.0 * c.x - fx, ty = 2.0 * c.y - fy;
  const long long X = static_cast<long long>(fx), Y = static_cast<long long>(fy);
  const bool on_node = tx == 0.0 && ty == 0.0;
  double num = 0, den = 0;
  // Along a run the reflections are adjacent pixels read backwards; with the
  // run's values stored reversed, the pixels whose reflection lies inside
  // the grid are summed reading everything forwards, several at once
  // (run_asymmetry_sums). A pixel whose reflection is not finite adds
  // nothing (FiniteImage::usable). The pixels whose reflection reaches the
  // grid's edge take the per-pixel path.
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
    const double f = in.v.f[k];
    num += std::abs(f - g);
    den += std::abs(f);
  };
  for (std::size_t r = 0; r + 1 < a.run_start.size(); ++r) {
    const std::size_t k0 = a.run_start[r], k1 = a.run_start[r + 1];
    const long long length = static_cast<long long>(k1 - k0);
    const long long y0 = Y - a.y[k0];
    // Pixels x of the run with 0 <= X - x and X - x + 1 < nx.
    long long ja = 0, jb = 0;
    if (y0 >= 0 && y0 + 1 < ny) {
      const long long xa = a.x[k0];
      ja = std::clamp<long long>(X - nx + 2 - xa, 0, length);
      jb = std::clamp<long long>(X + 1 - xa, ja, length);
    }
    for (long long j = 0; j < ja; ++j) edge_pixel(k0 + static_cast<std::size_t>(j));
    if (jb > ja) {
      // Pixel j of the run reflects to image index base - j; its reversed
      // position is length - 1 - j. Pixels j = jb - 1 down to ja, forwards.
      const std::ptrdiff_t last = static_cast<std::ptrdiff_t>(X + static_cast<long long>(nx) * Y - a.index[k0]) -
                                  static_cast<std::ptrdiff_t>(jb - 1);
      double s[2];
      run_asymmetry_sums(in.v.f_reversed.data() + k0 + (length - jb), in.zeroed.data() + last,
                         in.usable.data() + last, jb - ja, nx, tx, ty, s);
      num += s[0];
      den += s[1];
    }
    for (long long j = jb; j < length; ++j) edge_pixel(k0 + static_cast<std::size_t>(j));
  }
  return den > 0 ? num / den : std::numeric_limits<double>::infinity();
}

}  // namespace

double rotational_asymmetry(const PreparedImage& p, const std::vector<double>& data, PixelCoord c,
                            PixelCoord ac, double r_arcsec) {
  const Aperture a = aperture_pixels(p, data, ac, r_arcsec);
  ApertureValues v;
  read_values(a, data, v);
  const FiniteImage fi = finite_image(p, data);
  return asymmetry_over({a, v, fi.zeroed, fi.usable, data, p.nx, p.ny}, c);
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

namespace {

double aperture_radius(const PreparedImage& p, const SymmetryOptions& o) {
  return o.aperture_radius_arcsec > 0 ? o.aperture_radius_arcsec : 1.5 * p.radius_arcsec;
}

// One search round from c (simplex step `step`) over the aperture `ap`;
// false with `why` set when it failed.
bool search_round(const PreparedImage& p, const AsymmetryInputs& in, double step, const SymmetryOptions& o,
                  Minimum& m, PixelCoord& c, int& evaluations, std::string& why) {
  auto f = [&](PixelCoord t) { return asymmetry_over(in, t); };
  m = nelder_mead(f, c, step, o.tolerance_pixels, o.max_evaluations);
  evaluations += m.evaluations;
  if (!std::isfinite(m.value)) {
    why = "no usable pixel pairs for the rotational asymmetry";
    return false;
  }
  c = m.c;
  if (c.x < 0 || c.y < 0 || c.x > p.nx - 1 || c.y > p.ny - 1) {
    why = "the symmetry centre left the image";
    return false;
  }
  return true;
}

PixelEstimate finished(const Minimum& m, PixelCoord c, double r, int evaluations, const SymmetryOptions& o) {
  if (!m.converged)
    return PixelEstimate::failure("the asymmetry minimisation did not converge in " +
                                  std::to_string(o.max_evaluations) + " evaluations");
  PixelEstimate e;
  e.ok = true;
  e.centre = c;
  e.details = {{"asymmetry", m.value}, {"aperture_radius_arcsec", r}, {"evaluations", evaluations}};
  return e;
}

}  // namespace

PixelEstimate estimate_symmetry_centre(const PreparedImage& p, const std::vector<double>& data,
                                       const SymmetryOptions& o) {
  if (!p.ok) return PixelEstimate::failure(p.reason);
  const double r = aperture_radius(p, o);
  PixelCoord c = o.start.value_or(p.guess);
  Minimum m;
  int evaluations = 0;
  std::string why;
  const FiniteImage fi = finite_image(p, data);
  const int rounds = o.aperture_centre ? 1 : 2;
  for (int round = 0; round < rounds; ++round) {
    const Aperture ap = aperture_pixels(p, data, o.aperture_centre.value_or(c), r);
    ApertureValues v;
    read_values(ap, data, v);
    if (!search_round(p, {ap, v, fi.zeroed, fi.usable, data, p.nx, p.ny}, round == 0 ? 1.0 : 0.25, o, m, c,
                      evaluations, why))
      return PixelEstimate::failure(why);
  }
  return finished(m, c, r, evaluations, o);
}

struct SymmetryDraws::Shared {
  symmetry_detail::Aperture aperture;            // its pixels; the values are each draw's
  std::vector<double> usable;   // FiniteImage::usable of p.data
};

SymmetryDraws::SymmetryDraws(const PreparedImage& p, const SymmetryOptions& o) : p_(p), o_(o) {
  FULCRUM_CHECK(o.aperture_centre.has_value(), "SymmetryDraws needs an aperture centre", 0);
  if (!p.ok) return;
  auto s = std::make_shared<Shared>();
  s->aperture = aperture_pixels(p, p.data, *o.aperture_centre, aperture_radius(p, o));
  s->usable = finite_image(p, p.data).usable;
  shared_ = std::move(s);
}

PixelEstimate SymmetryDraws::estimate(const std::vector<double>& data) const {
  if (!p_.ok) return PixelEstimate::failure(p_.reason);
  FULCRUM_CHECK(data.size() == p_.data.size(), p_.data.size(), data.size());
  // The draw's values at the shared aperture's pixels, and its image with
  // non-finite values set to 0 (the same pixels as in p.data).
  ApertureValues v;
  read_values(shared_->aperture, data, v);
  const std::vector<double> zeroed = zeroed_copy(data);
  PixelCoord c = o_.start.value_or(p_.guess);
  Minimum m;
  int evaluations = 0;
  std::string why;
  if (!search_round(p_, {shared_->aperture, v, zeroed, shared_->usable, data, p_.nx, p_.ny}, 1.0, o_, m, c,
                    evaluations, why))
    return PixelEstimate::failure(why);
  return finished(m, c, aperture_radius(p_, o_), evaluations, o_);
}

}  // namespace fulcrum::photometry
