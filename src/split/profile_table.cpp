// The profile table (see the header): the engine's bins sorted by p, prefix
// moments per segment about local anchors, and the read.
#include "fulcrum/split/profile_table.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "fulcrum/core/error.hpp"

namespace fulcrum::split {

namespace {
// Segments per bin at most (guards a degenerate, very thin pixel shape).
constexpr double kMaxSegmentsPerBin = 4.0;
// Quadratic intervals go pixel by pixel when B < (largest |e|) / this.
constexpr double kQuadraticConditioning = 64.0;
}  // namespace

void ProfileTable::rebuild(const ProjectionEngine& e, int ch) {
  e_ = &e;
  ch_ = ch;
  segs_.clear();
  moments_.clear();
  seg_lo_ = 0.0;
  seg_hi_ = -1.0;  // no segment: every read goes to the engine
  const std::size_t m = e.proj_.size();
  const int nc = e.channels_;
  p_.resize(m + 1);  // + a sentinel above every t: the walks need no bound check
  f_.resize(m + 1);
  p_[m] = std::numeric_limits<double>::infinity();
  f_[m] = 0.0;
  if (ch < 0 || ch >= nc || m == 0 || e.px_ == nullptr) return;
  // (The engine may lack its block moments: only its bins and prefix sums are read.)
  // Sort each bin by p (insertion sort: a bin holds a few pixels).
  for (long long k = 0; k < e.nbins_; ++k) {
    const std::size_t b = e.start_[k], end = e.start_[k + 1];
    for (std::size_t j = b; j < end; ++j) {
      const double p = e.proj_[j], f = e.val_[j * nc + ch];
      std::size_t i = j;
      for (; i > b && p_[i - 1] > p; --i) {
        p_[i] = p_[i - 1];
        f_[i] = f_[i - 1];
      }
      p_[i] = p;
      f_[i] = f;
    }
  }
  // Segments over the part of the window where F changes.
  const double w1 = e.shape_.w1;
  const double lo = std::max(e.wlo_, e.smin_ - w1), hi = std::min(e.whi_, e.smax_ + w1);
  if (!(lo <= hi) || !std::isfinite(lo) || !std::isfinite(hi) || !(w1 > 0.0)) return;
  double h = 4.0 * w1;
  const double max_segs = kMaxSegmentsPerBin * double(e.nbins_) + 64.0;
  if ((hi - lo) / h > max_segs) h = (hi - lo) / max_segs;
  const std::size_t G = static_cast<std::size_t>(std::floor((hi - lo) / h)) + 1;
  const double pad = 1e-9 * (1.0 + std::abs(lo) + std::abs(hi));
  pixelwise_below_b_ = (0.5 * h + w1 + pad) / kQuadraticConditioning;
  inv_delta_ = 1.0 / e.delta_;
  last_bin_ = double(e.nbins_ - 1);
  w0_bins_ = e.shape_.w0 * inv_delta_;
  w1_bins_ = w1 * inv_delta_;
  seg_lo_ = lo;
  seg_hi_ = hi;
  h_ = h;
  inv_h_ = 1.0 / h;
  segs_.resize(G);
  std::size_t total = 0;
  for (std::size_t g = 0; g < G; ++g) {
    Segment& sg = segs_[g];
    sg.anchor = lo + (double(g) + 0.5) * h;
    const double tlo = lo + double(g) * h - w1 - pad, thi = lo + double(g + 1) * h + w1 + pad;
    sg.first = count_below(tlo, (tlo - e.smin_) / e.delta_, nullptr);
    sg.last = count_below(thi, (thi - e.smin_) / e.delta_, nullptr);
    sg.offset = total;
    total += 3 * (sg.last - sg.first + 1);
  }
  moments_.resize(total);
  for (const Segment& sg : segs_) {
    double* P = &moments_[sg.offset];
    double m0 = 0.0, m1 = 0.0, m2 = 0.0;
    P[0] = P[1] = P[2] = 0.0;
    for (std::size_t i = sg.first; i < sg.last; ++i) {
      const double f = f_[i], x = p_[i] - sg.anchor;
      m0 += f;
      m1 += f * x;
      m2 += f * x * x;
      P += 3;
      P[0] = m0;
      P[1] = m1;
      P[2] = m2;
    }
  }
}

// The number of sorted pixels with p <= t, and with `below` the sum of
// everything below t (G = 1): the engine's compensated prefix of the whole
// bins before bin k plus the pixels walked from bin k's start. `kf` is an
// estimate of t's bin, (t - smin)/delta, which need not be exact: the walk
// compares p itself, stepping back a bin while the previous pixel lies above
// t (the pixels are sorted, so any bin start at or below the count will do).
[[gnu::always_inline]] inline std::size_t ProfileTable::count_below(double t, double kf, double* below) const {
  const ProjectionEngine& e = *e_;
  const std::size_t* start = e.start_.data();
  const double* p = p_.data();
  long long k = kf <= 0.0 ? 0 : (kf >= last_bin_ ? e.nbins_ - 1 : static_cast<long long>(kf));
  while (k > 0 && p[start[k] - 1] > t) --k;
  // The first two steps without branches (a bin holds one or two pixels on
  // average, so a branch here would be mispredicted about every other time;
  // adding 0.0 leaves b unchanged); the sentinel ends every walk.
  std::size_t i = start[k];
  if (below) {
    double b = e.prefix_[static_cast<std::size_t>(k) * e.channels_ + ch_];
    for (int r = 0; r < 2; ++r) {
      const bool in = p[i] <= t;
      b += in ? f_[i] : 0.0;
      i += in ? 1 : 0;
    }
    for (; p[i] <= t; ++i) b += f_[i];
    *below = b;
  } else {
    i += p[i] <= t ? 1 : 0;
    i += p[i] <= t ? 1 : 0;
    while (p[i] <= t) ++i;
  }
  return i;
}

// Inside the window but beyond the kept pixels' reach F is a prefix sum (every
// kept pixel above t4, or every one below t1); outside the window the engine
// answers (its direct sum).
double ProfileTable::outside_segments(double s) const {
  if (e_ == nullptr) return 0.0;
  const ProjectionEngine& e = *e_;
  if (!e.in_window(s) || ch_ >= e.channels_ || e.prefix_.empty()) return e.trailing(s, ch_);
  const int nc = e.channels_;
  if (e.nbins_ == 0 || s + e.shape_.w1 < e.smin_) return e.prefix_[ch_];
  if (s - e.shape_.w1 > e.smax_) return e.prefix_[static_cast<std::size_t>(e.nbins_) * nc + ch_];
  return e.trailing(s, ch_);  // not reached: the segments cover the rest of the window
}

double ProfileTable::quadratic_pixels(std::size_t ia, std::size_t ib, double s) const {
  double F = 0.0;
  for (std::size_t i = ia; i < ib; ++i) F += f_[i] * e_->shape_.below(s - p_[i]);
  return F;
}

// F(s) = (everything below t1) + the three middle intervals, each from its
// prefix moments about the segment's anchor R (e = p - R):
//   t1 < p <= t2:  G = 1 - (p - t1)^2/(2AB),  sum f (p - t1)^2 = M2 + 2q M1 + q^2 M0, q = R - t1;
//   t2 < p <= t3:  G = 1/2 + (s - p)/A,        sum f (s - p) = d M0 - M1,            d = s - R;
//   t3 < p <  t4:  G = (t4 - p)^2/(2AB),       sum f (t4 - p)^2 = r^2 M0 - 2r M1 + M2, r = t4 - R.
double ProfileTable::trailing(double s) const {
  const std::size_t g = segment_of(s);
  return g < segs_.size() ? read(s, segs_[g]) : outside_segments(s);
}

std::size_t ProfileTable::segment_of(double s) const {
  if (!(s >= seg_lo_ && s <= seg_hi_)) return segs_.size();
  return std::min(static_cast<std::size_t>(std::max(0.0, (s - seg_lo_) * inv_h_)), segs_.size() - 1);
}

[[gnu::always_inline]] inline double ProfileTable::read(double s, const Segment& sg) const {
  const PixelTrapezoid& sh = e_->shape_;
  const double t1 = s - sh.w1, t2 = s - sh.w0, t3 = s + sh.w0, t4 = s + sh.w1;
  // Estimated bins of the cuts (count_below corrects them).
  const double u = (s - e_->smin_) * inv_delta_;
  double F = 0.0;
  const std::size_t i1 = count_below(t1, u - w1_bins_, &F), i2 = count_below(t2, u - w0_bins_, nullptr),
                    i3 = count_below(t3, u + w0_bins_, nullptr), i4 = count_below(t4, u + w1_bins_, nullptr);
  if (i1 < sg.first || i4 > sg.last) return F + quadratic_pixels(i1, i4, s);  // (rounding at a segment's edge)
  const double* P = &moments_[sg.offset];
  double m0 = 0.0, m1 = 0.0, m2 = 0.0;
  auto moments = [&](std::size_t a, std::size_t b) {
    const double* pa = P + 3 * (a - sg.first);
    const double* pb = P + 3 * (b - sg.first);
    m0 = pb[0] - pa[0];
    m1 = pb[1] - pa[1];
    m2 = pb[2] - pa[2];
  };
  const bool pixelwise = sh.B < pixelwise_below_b_;
  if (i2 > i1) {
    if (pixelwise || i2 - i1 <= 2) {
      F += quadratic_pixels(i1, i2, s);
    } else {
      moments(i1, i2);
      const double q = sg.anchor - t1;
      F += m0 - (m2 + 2.0 * q * m1 + q * q * m0) * sh.inv_2ab;
    }
  }
  if (i3 > i2) {
    moments(i2, i3);
    const double d = s - sg.anchor;
    F += 0.5 * m0 + (d * m0 - m1) * sh.inv_a;
  }
  if (i4 > i3) {
    if (pixelwise || i4 - i3 <= 2) {
      F += quadratic_pixels(i3, i4, s);
    } else {
      moments(i3, i4);
      const double r = t4 - sg.anchor;
      F += (r * r * m0 - 2.0 * r * m1 + m2) * sh.inv_2ab;
    }
  }
  return F;
}

void ProfileTable::trailing_many(std::span<const double> s, std::span<double> out) {
  FULCRUM_CHECK(out.size() == s.size(), s.size(), out.size());
  const std::size_t G = segs_.size(), n = s.size();
  // Counting sort of the reads by segment (bucket G: outside every segment).
  bucket_start_.assign(G + 2, 0);
  bucket_of_.resize(n);
  for (std::size_t q = 0; q < n; ++q) {
    const std::size_t g = segment_of(s[q]);
    bucket_of_[q] = static_cast<unsigned>(g);
    ++bucket_start_[g + 1];
  }
  for (std::size_t g = 0; g <= G; ++g) bucket_start_[g + 1] += bucket_start_[g];
  order_.resize(n);
  for (std::size_t q = 0; q < n; ++q) order_[bucket_start_[bucket_of_[q]]++] = static_cast<unsigned>(q);
  // (bucket_start_[g] is now the end of bucket g.)
  std::size_t j = 0;
  for (std::size_t g = 0; g < G; ++g) {
    const Segment& sg = segs_[g];
    for (; j < bucket_start_[g]; ++j) out[order_[j]] = read(s[order_[j]], sg);
  }
  for (; j < n; ++j) out[order_[j]] = outside_segments(s[order_[j]]);
}

}  // namespace fulcrum::split
