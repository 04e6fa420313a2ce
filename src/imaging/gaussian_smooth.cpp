// Gaussian convolution on the sky, in pixel space through the Jacobian.
#include "fulcrum/imaging/gaussian_smooth.hpp"

#include <Eigen/Eigenvalues>
#include <Eigen/LU>
#include <cmath>
#include <numbers>

#include "fulcrum/core/error.hpp"
#include "fulcrum/sky/angle.hpp"
#include "fulcrum/sky/pixel_offsets.hpp"

namespace fulcrum {

namespace {
Eigen::Matrix2d sky_covariance(const Beam& b) {
  const double smaj = b.bmaj_arcsec / kFwhmPerSigma, smin = b.bmin_arcsec / kFwhmPerSigma;
  const Angle pa = b.bpa_deg * degrees;
  Eigen::Vector2d u(pa.sin(), pa.cos());    // major axis, (east, north)
  Eigen::Vector2d v(pa.cos(), -pa.sin());   // minor axis
  return smaj * smaj * u * u.transpose() + smin * smin * v * v.transpose();
}
}  // namespace

Eigen::Matrix2d pixel_covariance(const Beam& kernel, const Eigen::Matrix2d& jac) {
  Eigen::Matrix2d Ji = jac.inverse();
  return Ji * sky_covariance(kernel) * Ji.transpose();
}

PixelKernel gaussian_kernel(const Eigen::Matrix2d& cov, double truncate_sigma) {
  FULCRUM_CHECK(truncate_sigma > 0, "truncate_sigma > 0", truncate_sigma);
  const Eigen::Matrix2d P = cov.inverse();
  const double t = truncate_sigma;
  PixelKernel k;
  k.hx = std::max(1, static_cast<int>(std::ceil(t * std::sqrt(cov(0, 0)))));
  k.hy = std::max(1, static_cast<int>(std::ceil(t * std::sqrt(cov(1, 1)))));
  const int kw = 2 * k.hx + 1;
  k.weight.assign(static_cast<std::size_t>(kw) * (2 * k.hy + 1), 0.0);
  double ksum = 0.0;
  for (int dy = -k.hy; dy <= k.hy; ++dy)
    for (int dx = -k.hx; dx <= k.hx; ++dx) {
      const double q = P(0, 0) * dx * dx + 2 * P(0, 1) * dx * dy + P(1, 1) * dy * dy;
      const double w = q > 2.0 * t * t ? 0.0 : std::exp(-0.5 * q);
      k.weight[static_cast<std::size_t>(dx + k.hx) + static_cast<std::size_t>(kw) * (dy + k.hy)] = w;
      ksum += w;
    }
  for (double& w : k.weight) w /= ksum;
  return k;
}

namespace {

// The separable form of convolve_gaussian's sums for a kernel without an x-y
// term (cov(0, 1) == 0): w(dx, dy) = kx(dx) ky(dy) apart from the trimmed
// corners, so each of the plane's sums is taken along x on every row, then
// along y, and the corner taps the full box added are taken away again
// (they are few and tiny: beyond sqrt(2) times the truncation radius). The
// same sums as the direct one but for round-off: a product of two
// exponentials for one exponential of the sum, and another order.
void separable_sums(const std::vector<double>& plane, int nx, int ny, const std::vector<double>& kx,
                    const std::vector<double>& ky, const PixelKernel& kernel, std::vector<double>& out) {
  const int hx = kernel.hx, hy = kernel.hy;
  std::vector<double> rows(plane.size(), 0.0);
  for (int y = 0; y < ny; ++y) {
    const double* in = &plane[static_cast<std::size_t>(nx) * y];
    double* r = &rows[static_cast<std::size_t>(nx) * y];
    for (int dx = -hx; dx <= hx; ++dx) {
      const double w = kx[static_cast<std::size_t>(dx + hx)];
      const int xa = std::max(0, dx), xb = std::min(nx, nx + dx);
      for (int x = xa; x < xb; ++x) r[x] += w * in[x - dx];
    }
  }
  out.assign(plane.size(), 0.0);
  for (int y = 0; y < ny; ++y) {
    double* o = &out[static_cast<std::size_t>(nx) * y];
    for (int dy = -hy; dy <= hy; ++dy) {
      const int yy = y - dy;
      if (yy < 0 || yy >= ny) continue;
      const double w = ky[static_cast<std::size_t>(dy + hy)];
      const double* r = &rows[static_cast<std::size_t>(nx) * yy];
      for (int x = 0; x < nx; ++x) o[x] += w * r[x];
    }
  }
  for (int dy = -hy; dy <= hy; ++dy)
    for (int dx = -hx; dx <= hx; ++dx) {
      if (kernel.at(dx, dy) != 0.0) continue;  // kept by the direct kernel
      const double w = kx[static_cast<std::size_t>(dx + hx)] * ky[static_cast<std::size_t>(dy + hy)];
      const int xa = std::max(0, dx), xb = std::min(nx, nx + dx);
      for (int y = std::max(0, dy); y < std::min(ny, ny + dy); ++y) {
        const double* in = &plane[static_cast<std::size_t>(nx) * (y - dy)];
        double* o = &out[static_cast<std::size_t>(nx) * y];
        for (int x = xa; x < xb; ++x) o[x] -= w * in[x - dx];
      }
    }
}

}  // namespace

std::vector<double> convolve_gaussian(const std::vector<double>& data, int nx, int ny,
                                      const Eigen::Matrix2d& cov, const SmoothOptions& opt) {
  FULCRUM_CHECK(data.size() == static_cast<std::size_t>(nx) * ny, nx * ny, data.size());
  const PixelKernel kernel = gaussian_kernel(cov, opt.truncate_sigma);
  const int hx = kernel.hx, hy = kernel.hy, kw = 2 * hx + 1;
  const std::vector<double>& k = kernel.weight;

  // Missing pixels as value 0 and weight 0: adding w * 0 leaves a sum as it
  // was, so this equals skipping them.
  const std::size_t n = data.size();
  std::vector<double> v0(n), m0(n);
  for (std::size_t i = 0; i < n; ++i) {
    const bool ok = std::isfinite(data[i]);
    v0[i] = ok ? data[i] : 0.0;
    m0[i] = ok ? 1.0 : 0.0;
  }
  std::vector<double> out(n, 0.0);
  auto finish = [&](int y, const double* s, const double* wsum) {
    for (int x = 0; x < nx; ++x) {
      const std::size_t i = static_cast<std::size_t>(x) + static_cast<std::size_t>(nx) * y;
      if (!std::isfinite(data[i]) && !opt.fill_missing) {
        out[i] = data[i];
        continue;
      }
      if (opt.normalise_missing)
        out[i] = wsum[x] > 1e-12 ? s[x] / wsum[x] : std::numeric_limits<double>::quiet_NaN();
      else
        out[i] = s[x];
    }
  };
  // An x-y term below 1e-14 of the trace counts as none: what the rounding
  // of a rotation leaves in a round kernel's covariance (~1e-17), changing
  // no weight by more than ~1e-12 relative within the kernel's cut.
  const double cross = 0.5 * (std::abs(cov(0, 1)) + std::abs(cov(1, 0)));
  if (opt.separable && cross <= 1e-14 * (cov(0, 0) + cov(1, 1))) {
    // The direct kernel's weights are exp(-q / 2) / K with q = P00 dx^2 +
    // P11 dy^2 (P = cov^-1, diagonal here) and K their sum over the kept
    // taps; kx ky / K with kx = exp(-P00 dx^2 / 2), ky = exp(-P11 dy^2 / 2).
    const Eigen::Matrix2d P = Eigen::Vector2d(cov(0, 0), cov(1, 1)).asDiagonal().inverse();
    std::vector<double> kx(static_cast<std::size_t>(kw)), ky(static_cast<std::size_t>(2 * hy + 1));
    for (int dx = -hx; dx <= hx; ++dx) kx[static_cast<std::size_t>(dx + hx)] = std::exp(-0.5 * P(0, 0) * dx * dx);
    for (int dy = -hy; dy <= hy; ++dy) ky[static_cast<std::size_t>(dy + hy)] = std::exp(-0.5 * P(1, 1) * dy * dy);
    double ksum = 0.0;
    for (int dy = -hy; dy <= hy; ++dy)
      for (int dx = -hx; dx <= hx; ++dx)
        if (kernel.at(dx, dy) != 0.0) ksum += kx[static_cast<std::size_t>(dx + hx)] * ky[static_cast<std::size_t>(dy + hy)];
    for (double& w : ky) w /= ksum;
    std::vector<double> s, wsum;
    separable_sums(v0, nx, ny, kx, ky, kernel, s);
    if (opt.normalise_missing) separable_sums(m0, nx, ny, kx, ky, kernel, wsum);
    for (int y = 0; y < ny; ++y)
      finish(y, &s[static_cast<std::size_t>(nx) * y],
             opt.normalise_missing ? &wsum[static_cast<std::size_t>(nx) * y] : nullptr);
    return out;
  }
  // Each output pixel accumulates its taps in the fixed order (dy, dx
  // ascending), but a whole row of output pixels is advanced tap by tap,
  // which keeps the per-pixel sums bit for bit those of a pixel-by-pixel
  // loop while letting the compiler vectorise along x.
#pragma omp parallel for schedule(static)
  for (int y = 0; y < ny; ++y) {
    std::vector<double> s(static_cast<std::size_t>(nx), 0.0), wsum(static_cast<std::size_t>(nx), 0.0);
    for (int dy = -hy; dy <= hy; ++dy) {
      const int yy = y - dy;
      if (yy < 0 || yy >= ny) continue;
      const double* krow = &k[static_cast<std::size_t>(kw) * (dy + hy)];
      const double* vrow = &v0[static_cast<std::size_t>(nx) * yy];
      const double* mrow = &m0[static_cast<std::size_t>(nx) * yy];
      for (int dx = -hx; dx <= hx; ++dx) {
        const double w = krow[dx + hx];
        if (w == 0.0) continue;  // beyond the kernel's cut: adds nothing
        // Output x reads input x - dx, which must lie on the grid.
        const int xa = std::max(0, dx), xb = std::min(nx, nx + dx);
        double* sp = s.data();
        double* wp = wsum.data();
        for (int x = xa; x < xb; ++x) {
          sp[x] += w * vrow[x - dx];
          wp[x] += w * mrow[x - dx];
        }
      }
    }
    finish(y, s.data(), wsum.data());
  }
  return out;
}

Image smooth_image(const Image& in, const Beam& kernel, const SmoothOptions& opt) {
  PixelOffsets grid(in, in.wcs.pixel_to_world({0.5 * (in.nx - 1), 0.5 * (in.ny - 1)}));
  Image out = in;
  out.data = convolve_gaussian(in.data, in.nx, in.ny, pixel_covariance(kernel, grid.jacobian()), opt);
  return out;
}

Beam kernel_between(const Beam& from, const Beam& to) {
  Eigen::Matrix2d d = sky_covariance(to) - sky_covariance(from);
  Eigen::SelfAdjointEigenSolver<Eigen::Matrix2d> es(d);
  const auto ev = es.eigenvalues();  // ascending
  if (!(ev(0) > 1e-12))
    throw InputError("", "the target beam (" + std::to_string(to.bmaj_arcsec) + "\" x " +
                             std::to_string(to.bmin_arcsec) + "\") is not larger than the "
                             "map's beam in every direction");
  Eigen::Vector2d u = es.eigenvectors().col(1);  // major, (east, north)
  Beam k;
  k.bmaj_arcsec = std::sqrt(ev(1)) * kFwhmPerSigma;
  k.bmin_arcsec = std::sqrt(ev(0)) * kFwhmPerSigma;
  k.bpa_deg = wrap_pa_deg(Angle::from_radians(std::atan2(u(0), u(1))).deg());
  if (k.bpa_deg >= 180.0) k.bpa_deg -= 180.0;
  return k;
}

}  // namespace fulcrum
