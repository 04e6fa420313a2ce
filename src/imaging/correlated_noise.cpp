// Beam-correlated Gaussian noise fields drawn by FFT (see the header for the
// derivation of the two independent fields and their scaling).
#include "fulcrum/imaging/correlated_noise.hpp"

#include <unsupported/Eigen/FFT>

#include "fulcrum/core/error.hpp"
#include "fulcrum/imaging/gaussian_smooth.hpp"

namespace fulcrum {

int fft_friendly_size(int n) {
  for (int m = std::max(1, n);; ++m) {
    int r = m;
    for (int p : {2, 3, 5})
      while (r % p == 0) r /= p;
    if (r == 1) return m;
  }
}

namespace {
// One FFT object per thread: Eigen's kissfft back end caches its plans and
// is not safe to share.
Eigen::FFT<double>& thread_fft() {
  thread_local Eigen::FFT<double> fft;
  return fft;
}

// In-place 2-D transform of an mx x my complex array (x fastest): first
// every column, then the rows 0 .. rows-1 only (the rest are not read).
void transform_2d(std::vector<std::complex<double>>& a, int mx, int my, int rows, bool inverse) {
  Eigen::FFT<double>& fft = thread_fft();
  fft.SetFlag(Eigen::FFT<double>::Unscaled);
  std::vector<std::complex<double>> in(static_cast<std::size_t>(std::max(mx, my))), out(in.size());
  for (int x = 0; x < mx; ++x) {
    for (int y = 0; y < my; ++y) in[static_cast<std::size_t>(y)] = a[static_cast<std::size_t>(x) + std::size_t(mx) * y];
    if (inverse) fft.inv(out.data(), in.data(), my);
    else fft.fwd(out.data(), in.data(), my);
    for (int y = 0; y < my; ++y) a[static_cast<std::size_t>(x) + std::size_t(mx) * y] = out[static_cast<std::size_t>(y)];
  }
  for (int y = 0; y < rows; ++y) {
    std::complex<double>* row = &a[std::size_t(mx) * y];
    if (inverse) fft.inv(out.data(), row, mx);
    else fft.fwd(out.data(), row, mx);
    std::copy(out.begin(), out.begin() + mx, row);
  }
}
}  // namespace

CorrelatedNoise::CorrelatedNoise(int nx, int ny, const Eigen::Matrix2d& cov, double truncate_sigma)
    : nx_(nx), ny_(ny), cov_(cov) {
  if (nx <= 0 || ny <= 0) throw InputError("", "correlated noise needs a grid with pixels");
  const PixelKernel k = gaussian_kernel(cov, truncate_sigma);
  mx_ = fft_friendly_size(nx + 2 * k.hx);
  my_ = fft_friendly_size(ny + 2 * k.hy);
  const std::size_t m = static_cast<std::size_t>(mx_) * static_cast<std::size_t>(my_);
  // The kernel on the periodic grid (lag (dx, dy) at (dx mod Mx, dy mod My)).
  std::vector<std::complex<double>> a(m, 0.0);
  double sum2 = 0.0;
  for (int dy = -k.hy; dy <= k.hy; ++dy)
    for (int dx = -k.hx; dx <= k.hx; ++dx) {
      const double w = k.at(dx, dy);
      sum2 += w * w;
      a[static_cast<std::size_t>((dx + mx_) % mx_) + std::size_t(mx_) * ((dy + my_) % my_)] = w;
    }
  transform_2d(a, mx_, my_, my_, false);
  const double scale = 1.0 / std::sqrt(static_cast<double>(m) * sum2);
  filter_.resize(m);
  for (std::size_t i = 0; i < m; ++i) filter_[i] = a[i].real() * scale;  // Khat is real (K even)
}

void CorrelatedNoise::draw(Random& g, std::vector<double>& first, std::vector<double>* second) const {
  const std::size_t m = filter_.size();
  std::vector<std::complex<double>> a(m);
  for (std::size_t i = 0; i < m; ++i) {
    const double re = g.normal(), im = g.normal();
    a[i] = {filter_[i] * re, filter_[i] * im};
  }
  transform_2d(a, mx_, my_, ny_, true);
  const std::size_t n = static_cast<std::size_t>(nx_) * static_cast<std::size_t>(ny_);
  first.resize(n);
  if (second) second->resize(n);
  for (int y = 0; y < ny_; ++y)
    for (int x = 0; x < nx_; ++x) {
      const std::complex<double> v = a[static_cast<std::size_t>(x) + std::size_t(mx_) * y];
      const std::size_t i = static_cast<std::size_t>(x) + std::size_t(nx_) * y;
      first[i] = v.real();
      if (second) (*second)[i] = v.imag();
    }
}

}  // namespace fulcrum
