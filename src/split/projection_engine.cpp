// The projection engine (see the header for the derivation): counting sort of
// projected pixel centres into bins, per-bin moments, prefix sums, and the
// exact five-interval evaluation of F(s).
#include "fulcrum/split/projection_engine.hpp"

#include <algorithm>
#include <cmath>

#include "fulcrum/core/error.hpp"

namespace fulcrum::split {

namespace {
// Neumaier-compensated running sum (the prefix sums run over up to 1e7 bins).
struct CompensatedSum {
  double sum = 0.0, comp = 0.0;
  void add(double v) {
    const double t = sum + v;
    if (std::abs(sum) >= std::abs(v))
      comp += (sum - t) + v;
    else
      comp += (v - t) + sum;
    sum = t;
  }
  double value() const { return sum + comp; }
};
}  // namespace

ProjectionEngine::ProjectionEngine(const PixelSet& px, Angle tail_pa, const EngineOptions& opt)
    : tail_pa_(tail_pa), n_(leading_normal(tail_pa)), shape_(px.jacobian, n_) {
  const std::size_t n = px.size();
  FULCRUM_CHECK(px.east.size() == n && px.north.size() == n, n, px.east.size());
  const bool var = opt.with_variance && px.variance.size() == n && n > 0;
  channels_ = var ? 2 : 1;
  const int nc = channels_;

  // Projected centres.
  std::vector<double> p(n);
  smin_ = n ? 1e300 : 0.0;
  smax_ = n ? -1e300 : 0.0;
  for (std::size_t i = 0; i < n; ++i) {
    p[i] = n_.east * px.east[i] + n_.north * px.north[i];
    smin_ = std::min(smin_, p[i]);
    smax_ = std::max(smax_, p[i]);
  }
  const double range = std::max(smax_ - smin_, 1e-9 * (1.0 + shape_.w1));
  // Bin width: balance 2 w1/delta bins against 4 * (N delta / range) pixels.
  delta_ = opt.bin_width_arcsec > 0.0
               ? opt.bin_width_arcsec
               : std::sqrt(shape_.w1 * range / (2.0 * std::max<double>(1.0, double(n))));
  delta_ = std::max(delta_, range / 2.0e7);  // cap the bin count
  if (!(delta_ > 0.0) || !std::isfinite(delta_)) delta_ = 1.0;
  nbins_ = static_cast<long long>(std::floor(range / delta_)) + 1;

  // Counting sort into bins.
  std::vector<unsigned> bin(n);
  start_.assign(static_cast<std::size_t>(nbins_) + 1, 0);
  for (std::size_t i = 0; i < n; ++i) {
    long long k = static_cast<long long>((p[i] - smin_) / delta_);
    k = std::clamp<long long>(k, 0, nbins_ - 1);
    bin[i] = static_cast<unsigned>(k);
    ++start_[static_cast<std::size_t>(k) + 1];
  }
  for (long long k = 0; k < nbins_; ++k) start_[k + 1] += start_[k];
  std::vector<std::size_t> fill(start_.begin(), start_.end() - 1);
  proj_.resize(n);
  val_.resize(n * nc);
  mom_.assign(static_cast<std::size_t>(nbins_) * nc * 3, 0.0);
  for (std::size_t i = 0; i < n; ++i) {
    const unsigned k = bin[i];
    const std::size_t j = fill[k]++;
    proj_[j] = p[i];
    const double e = p[i] - (smin_ + (k + 0.5) * delta_);
    double* m = &mom_[(static_cast<std::size_t>(k) * nc) * 3];
    const double f = px.value[i];
    val_[j * nc] = f;
    m[0] += f;
    m[1] += f * e;
    m[2] += f * e * e;
    if (nc == 2) {
      const double v = px.variance[i];
      val_[j * nc + 1] = v;
      m[3] += v;
      m[4] += v * e;
      m[5] += v * e * e;
    }
  }
  prefix_.assign((static_cast<std::size_t>(nbins_) + 1) * nc, 0.0);
  for (int c = 0; c < nc; ++c) {
    CompensatedSum acc;
    for (long long k = 0; k < nbins_; ++k) {
      acc.add(mom_[(static_cast<std::size_t>(k) * nc + c) * 3]);
      prefix_[(k + 1) * nc + c] = acc.value();
    }
  }
}

// F(s) for one channel: the five-interval evaluation described in the header.
// In p-space the cuts are t1 = s - w1 < t2 = s - w0 <= t3 = s + w0 < t4 = s + w1:
//   p <= t1: G = 1;  t1 < p <= t2: G = 1 - (w1 - u)^2/(2AB)  (u = s - p);
//   t2 < p <= t3: G = 1/2 + u/A;  t3 < p < t4: G = (u + w1)^2/(2AB);  p >= t4: 0.
// For a bin with centre c and e = p - c, u = d - e with d = s - c, so
//   sum f (w1 - u)^2 = (w1 - d)^2 M0 + 2 (w1 - d) M1 + M2,
//   sum f u          = d M0 - M1,
//   sum f (u + w1)^2 = (d + w1)^2 M0 - 2 (d + w1) M1 + M2.
double ProjectionEngine::trailing(double s, int ch) const {
  if (nbins_ == 0 || ch >= channels_) return 0.0;
  const int nc = channels_;
  const double w0 = shape_.w0, w1 = shape_.w1;
  auto bin_of = [&](double t) {
    const double k = std::floor((t - smin_) / delta_);
    if (k < -1.0) return -1LL;
    if (k > double(nbins_)) return nbins_;
    return static_cast<long long>(k);
  };
  const long long k1 = bin_of(s - w1), k2 = bin_of(s - w0), k3 = bin_of(s + w0),
                  k4 = bin_of(s + w1);
  // Bins below k1 are wholly in G = 1.
  const long long kfull = std::clamp<long long>(k1, 0, nbins_);
  double F = prefix_[kfull * nc + ch];
  // Whole bins strictly between two cuts.
  auto region = [&](long long ka, long long kb, int which) {
    const long long lo = std::max<long long>(ka + 1, 0), hi = std::min<long long>(kb, nbins_);
    for (long long k = lo; k < hi; ++k) {
      const double* m = &mom_[(static_cast<std::size_t>(k) * nc + ch) * 3];
      const double d = s - (smin_ + (k + 0.5) * delta_);
      if (which == 1) {
        const double q = w1 - d;
        F += m[0] - (q * q * m[0] + 2.0 * q * m[1] + m[2]) * shape_.inv_2ab;
      } else if (which == 2) {
        F += 0.5 * m[0] + (d * m[0] - m[1]) * shape_.inv_a;
      } else {
        const double q = d + w1;
        F += (q * q * m[0] - 2.0 * q * m[1] + m[2]) * shape_.inv_2ab;
      }
    }
  };
  region(k1, k2, 1);
  region(k2, k3, 2);
  region(k3, k4, 3);
  // Bins containing a cut, pixel by pixel.
  const long long cuts[4] = {k1, k2, k3, k4};
  long long last = -2;
  for (long long k : cuts) {
    if (k == last) continue;
    last = k;
    if (k < 0 || k >= nbins_) continue;
    for (std::size_t j = start_[k]; j < start_[k + 1]; ++j)
      F += val_[j * nc + ch] * shape_.below(s - proj_[j]);
  }
  return F;
}

HalfSums ProjectionEngine::halves(double s) const {
  HalfSums h;
  h.trailing = trailing(s, 0);
  h.leading = total(0) - h.trailing;
  if (channels_ == 2) {
    h.trailing_var = trailing(s, 1);
    h.leading_var = std::max(0.0, total(1) - h.trailing_var);
  }
  return h;
}

double ProjectionEngine::asymmetry(double s) const {
  const double S = total(0);
  const double T = trailing(s, 0);
  return (S - 2.0 * T) / S;
}

double direct_trailing(const PixelSet& px, Angle tail_pa, double s, int ch) {
  const SkyOffset n = leading_normal(tail_pa);
  const PixelTrapezoid shape(px.jacobian, n);
  const std::vector<double>& v = ch == 0 ? px.value : px.variance;
  double F = 0.0;
  for (std::size_t i = 0; i < v.size(); ++i)
    F += v[i] * shape.below(s - (n.east * px.east[i] + n.north * px.north[i]));
  return F;
}

HalfSums direct_halves(const PixelSet& px, Angle tail_pa, SkyOffset c) {
  const SkyOffset n = leading_normal(tail_pa);
  const PixelTrapezoid shape(px.jacobian, n);
  const double s = n.east * c.east + n.north * c.north;
  HalfSums h;
  const bool var = px.variance.size() == px.size();
  for (std::size_t i = 0; i < px.size(); ++i) {
    const double t = s - (n.east * px.east[i] + n.north * px.north[i]);
    const double below = shape.below(t), above = shape.above(t);
    h.trailing += px.value[i] * below;
    h.leading += px.value[i] * above;
    if (var) {
      h.trailing_var += px.variance[i] * below;
      h.leading_var += px.variance[i] * above;
    }
  }
  return h;
}

}  // namespace fulcrum::split
