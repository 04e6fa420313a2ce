// The profile table (see the header): one pass over the tiles that reach the
// window into bins, a counting sort that leaves the kept pixels sorted by p,
// prefix moments per segment about local anchors, and the read.
#include "fulcrum/split/profile_table.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "fulcrum/core/compensated_sum.hpp"
#include "fulcrum/core/error.hpp"
#include "fulcrum/split/projection_engine.hpp"

namespace fulcrum::split {

namespace {
// Segments per kept pixel at most (guards a degenerate, very thin pixel shape).
constexpr double kMaxSegmentsPerPixel = 4.0;
// Quadratic intervals go pixel by pixel when B < (largest |e|) / this.
constexpr double kQuadraticConditioning = 64.0;
// Kept pixels per bin aimed at (from the tiles' estimate): a read walks
// about half a bin per cut, a build pays for the bins' fill pointers.
constexpr double kPixelsPerBin = 1.5;

// The window as a windowed engine pads it (projection_engine.cpp), and the
// range of p it keeps: pixels within w1 (and a rounding margin) of it.
struct TableWindow {
  bool full = true;
  double wlo = 0.0, whi = 0.0;  // the exact-and-fast range of s
  double flo = 0.0, fhi = 0.0;  // the kept range of p
};
TableWindow table_window(double lo, double hi, double w1) {
  TableWindow w;
  w.full = !(lo <= hi);
  const double inf = std::numeric_limits<double>::infinity();
  const double wpad = 1e-9 * (1.0 + std::abs(lo) + std::abs(hi));
  w.wlo = w.full ? -inf : lo - wpad;
  w.whi = w.full ? inf : hi + wpad;
  const double margin = w1 * (1.0 + 1e-9) + 1e-9;
  w.flo = w.wlo - margin;
  w.fhi = w.whi + margin;
  return w;
}

// The fraction of a tile's projected extent [pc - r, pc + r] inside [lo, hi].
double overlap_fraction(double pc, double r, double lo, double hi) {
  const double a = std::max(pc - r, lo), b = std::min(pc + r, hi);
  return b > a ? std::min(1.0, (b - a) / (2.0 * r)) : 0.0;
}
}  // namespace

double ProfileTable::expected_pixels(const PixelSet& px, Angle tail_pa, double window_lo, double window_hi) {
  const SkyOffset n = leading_normal(tail_pa);
  const TableWindow w = table_window(window_lo, window_hi, PixelTrapezoid(px.jacobian, n).w1);
  if (w.full || px.tiles.empty()) return double(px.size());
  double m = 0.0;
  for (const PixelTile& t : px.tiles)
    m += double(t.end - t.begin) * overlap_fraction(n.east * t.east + n.north * t.north, t.radius, w.flo, w.fhi);
  return m;
}

void ProfileTable::rebuild(const PixelSet& px, Angle tail_pa, double window_lo, double window_hi, int ch) {
  const std::size_t n = px.size();
  FULCRUM_CHECK(px.east.size() == n && px.north.size() == n, n, px.east.size());
  FULCRUM_CHECK(n < std::numeric_limits<unsigned>::max(), std::numeric_limits<unsigned>::max(), n);
  px_ = &px;
  ch_ = ch;
  tail_pa_ = tail_pa;
  n_ = leading_normal(tail_pa);
  shape_ = PixelTrapezoid(px.jacobian, n_);
  const TableWindow w = table_window(window_lo, window_hi, shape_.w1);
  wlo_ = w.wlo;
  whi_ = w.whi;
  valid_ = ch == 0 || (ch == 1 && px.has_variance());
  m_ = 0;
  below_ = top_ = total_ = 0.0;
  pmin_ = pmax_ = 0.0;
  segs_.clear();
  seg_lo_ = 0.0;
  seg_hi_ = -1.0;  // no segment
  if (kept_.empty()) kept_.resize(1);
  kept_[0] = {std::numeric_limits<double>::infinity(), 0.0};
  start_.assign(2, 0);
  p_lo_ = 0.0;
  inv_delta_ = 0.0;
  last_bin_ = 0.0;
  if (!valid_ || n == 0) return;
  project(px, ch);
  sort_kept();
  make_segments();
}

// Pass A: classify the tiles (plan_runs), lay out the bins (set_bins), then
// project the pixels of the tiles that reach the window, keeping the ones
// within w1 of it with their bins (counted in start_[k + 1]) and totalling
// the rest (project_runs). pmin/pmax as the engine keeps them (every
// projected pixel; a tile wholly below or above bounds one side).
void ProfileTable::project(const PixelSet& px, int ch) {
  const double margin = shape_.w1 * (1.0 + 1e-9) + 1e-9;
  const double flo = wlo_ - margin, fhi = whi_ + margin;
  below_ = top_ = 0.0;  // (plain sums here; compensated totals in make_segments)
  pmin_ = std::numeric_limits<double>::infinity();
  pmax_ = -pmin_;
  set_bins(plan_runs(px, ch, flo, fhi));
  project_runs(px, ch, flo, fhi);
}

// The runs of pixels to project (reach_: begin, end, and whether every pixel
// of the run lies inside the kept range [flo, fhi], a tile wholly inside
// it); tiles wholly beside the range add their sums and bounds.
ProfileTable::RunPlan ProfileTable::plan_runs(const PixelSet& px, int ch, double flo, double fhi) {
  const bool full = std::isinf(wlo_);  // (no window: table_window made it -inf)
  const std::size_t n = px.size();
  reach_.clear();
  RunPlan plan;
  if (full || px.tiles.empty()) {
    reach_.insert(reach_.end(), {0, n, full ? std::size_t{1} : std::size_t{0}});
    plan.bound = n;
    plan.expected = double(n);
    double r = px.max_radius;
    if (!(r > 0.0))
      for (std::size_t i = 0; i < n; ++i) r = std::max(r, std::hypot(px.east[i], px.north[i]));
    r = r * (1.0 + 1e-12) + 1e-9;
    plan.lo = std::max(flo, -r);
    plan.hi = std::min(fhi, r);
    return plan;
  }
  const double ne = n_.east, nn = n_.north;
  for (const PixelTile& t : px.tiles) {
    const double pc = ne * t.east + nn * t.north;
    if (pc + t.radius < flo) {
      below_ += ch == 0 ? t.sum_value : t.sum_variance;
      pmin_ = std::min(pmin_, pc - t.radius);
    } else if (pc - t.radius > fhi) {
      top_ += ch == 0 ? t.sum_value : t.sum_variance;
      pmax_ = std::max(pmax_, pc + t.radius);
    } else {
      const bool inside = pc - t.radius >= flo && pc + t.radius <= fhi;
      reach_.insert(reach_.end(), {t.begin, t.end, inside ? std::size_t{1} : std::size_t{0}});
      plan.bound += t.end - t.begin;
      plan.expected += double(t.end - t.begin) * overlap_fraction(pc, t.radius, flo, fhi);
      plan.lo = std::min(plan.lo, pc - t.radius);
      plan.hi = std::max(plan.hi, pc + t.radius);
    }
  }
  plan.lo = std::max(plan.lo, flo);
  plan.hi = std::min(plan.hi, fhi);
  return plan;
}

// The bins over [plan.lo, plan.hi]: about kPixelsPerBin of the expected kept
// pixels each (one bin when nothing is expected); the bin counts zeroed and
// the working memory sized for the most pixels the runs can keep.
void ProfileTable::set_bins(const RunPlan& plan) {
  const double range = plan.hi - plan.lo;
  double nb = 1.0;
  if (range > 0.0 && std::isfinite(range) && plan.expected >= 1.0)
    nb = std::clamp(std::floor(plan.expected / kPixelsPerBin), 1.0,
                    std::min(2.0 * double(plan.bound) + 1.0, double(std::numeric_limits<unsigned>::max())));
  p_lo_ = std::isfinite(plan.lo) ? plan.lo : 0.0;
  inv_delta_ = nb > 1.0 ? nb / range : 0.0;
  last_bin_ = nb - 1.0;
  start_.assign(static_cast<std::size_t>(nb) + 1, 0);
  if (projected_.size() < plan.bound) {
    projected_.resize(plan.bound);
    tk_.resize(plan.bound);
  }
}

void ProfileTable::project_runs(const PixelSet& px, int ch, double flo, double fhi) {
  const double ne = n_.east, nn = n_.north;
  const double* E = px.east.data();
  const double* N = px.north.data();
  // The channel's values: an array, or every pixel the uniform variance.
  const double* F = ch == 0 ? px.value.data() : (px.variance.empty() ? nullptr : px.variance.data());
  const double uv = px.uniform_variance;
  Kept* tp = projected_.data();
  unsigned* tk = tk_.data();
  unsigned* count = start_.data() + 1;
  double below = below_, above = top_, pmin = pmin_, pmax = pmax_;
  std::size_t m = 0;
  auto keep = [&](double p, double f) {
    const std::size_t k = bin_of(p);
    tp[m] = {p, f};
    tk[m] = static_cast<unsigned>(k);
    ++count[k];
    ++m;
  };
  for (std::size_t r = 0; r < reach_.size(); r += 3) {
    const std::size_t b = reach_[r], e = reach_[r + 1];
    if (reach_[r + 2]) {
      if (F)
        for (std::size_t i = b; i < e; ++i) keep(ne * E[i] + nn * N[i], F[i]);
      else
        for (std::size_t i = b; i < e; ++i) keep(ne * E[i] + nn * N[i], uv);
      continue;
    }
    for (std::size_t i = b; i < e; ++i) {
      const double p = ne * E[i] + nn * N[i];
      const double f = F ? F[i] : uv;
      if (p < flo || p > fhi) {
        (p < flo ? below : above) += f;
        pmin = std::min(pmin, p);
        pmax = std::max(pmax, p);
      } else {
        keep(p, f);
      }
    }
  }
  m_ = m;
  below_ = below;
  top_ = above;
  pmin_ = pmin;
  pmax_ = pmax;
}

// The counting sort of the kept pixels into their bins, each pixel inserted
// in p order among those of its bin already placed (a bin holds one or two
// pixels; pixels of equal p keep their order of projection).
void ProfileTable::sort_kept() {
  const std::size_t m = m_, nbins = start_.size() - 1;
  unsigned* start = start_.data();
  for (std::size_t k = 0; k < nbins; ++k) start[k + 1] += start[k];
  fill_.assign(start_.begin(), start_.end() - 1);
  if (kept_.size() < m + 1) kept_.resize(m + 1);
  Kept* P = kept_.data();
  const Kept* T = projected_.data();
  unsigned* fill = fill_.data();
  for (std::size_t j = 0; j < m; ++j) {
    const unsigned k = tk_[j];
    const Kept t = T[j];
    std::size_t i = fill[k]++;
    for (const std::size_t b = start[k]; i > b && P[i - 1].p > t.p; --i) P[i] = P[i - 1];
    P[i] = t;
  }
  P[m] = {std::numeric_limits<double>::infinity(), 0.0};  // the walks' sentinel
  if (m) {
    pmin_ = std::min(pmin_, P[0].p);
    pmax_ = std::max(pmax_, P[m - 1].p);
  }
}

// The segments over the part of the window where F changes, their prefix
// moments, and the compensated totals: each segment's base (below + the
// pixels before its first) is the previous base plus the previous segment's
// M0 prefix up to this segment's first pixel (segments overlap), so that the
// compensated sum runs over the segments, not over the pixels.
void ProfileTable::make_segments() {
  const std::size_t m = m_;
  const double above = top_;
  CompensatedSum acc;
  acc.add(below_);
  below_ = acc.value();
  const double w1 = shape_.w1;
  const double kmin = m ? kept_[0].p : 0.0, kmax = m ? kept_[m - 1].p : 0.0;
  const double lo = std::max(wlo_, kmin - w1), hi = std::min(whi_, kmax + w1);
  auto finish = [&](std::size_t from) {
    for (std::size_t i = from; i < m; ++i) acc.add(kept_[i].f);
    top_ = acc.value();
    acc.add(above);
    total_ = acc.value();
  };
  if (m == 0 || !(lo <= hi) || !std::isfinite(lo) || !std::isfinite(hi) || !(w1 > 0.0)) {
    finish(0);
    return;
  }
  double h = 4.0 * w1;
  const double max_segs = kMaxSegmentsPerPixel * double(m) + 64.0;
  if ((hi - lo) / h > max_segs) h = (hi - lo) / max_segs;
  const std::size_t G = static_cast<std::size_t>(std::floor((hi - lo) / h)) + 1;
  const double pad = 1e-9 * (1.0 + std::abs(lo) + std::abs(hi));
  pixelwise_below_b_ = (0.5 * h + w1 + pad) / kQuadraticConditioning;
  seg_lo_ = lo;
  seg_hi_ = hi;
  h_ = h;
  inv_h_ = 1.0 / h;
  segs_.resize(G);
  std::size_t total = 0;
  for (std::size_t g = 0; g < G; ++g) {
    Segment& sg = segs_[g];
    sg.anchor = lo + (double(g) + 0.5) * h;
    sg.first = count_below(lo + double(g) * h - w1 - pad);
    sg.last = count_below(lo + double(g + 1) * h + w1 + pad);
    sg.offset = total;
    total += 3 * (sg.last - sg.first + 1);
  }
  if (moments_.size() < total) moments_.resize(total);
  for (std::size_t i = 0; i < segs_[0].first; ++i) acc.add(kept_[i].f);
  for (std::size_t g = 0; g < G; ++g) {
    Segment& sg = segs_[g];
    if (g > 0) {  // (segment g - 1 reaches past this one's first pixel)
      const Segment& pr = segs_[g - 1];
      acc.add(moments_[pr.offset + 3 * (sg.first - pr.first)]);
    }
    sg.base = acc.value();
    double* P = &moments_[sg.offset];
    double m0 = 0.0, m1 = 0.0, m2 = 0.0;
    P[0] = P[1] = P[2] = 0.0;
    for (std::size_t i = sg.first; i < sg.last; ++i) {
      const double f = kept_[i].f, x = kept_[i].p - sg.anchor;
      m0 += f;
      m1 += f * x;
      m2 += f * x * x;
      P += 3;
      P[0] = m0;
      P[1] = m1;
      P[2] = m2;
    }
  }
  const Segment& sl = segs_[G - 1];
  acc.add(moments_[sl.offset + 3 * (sl.last - sl.first)]);
  finish(sl.last);
}

inline std::size_t ProfileTable::bin_of(double t) const {
  // (std::max(0.0, NaN) is 0.0: a NaN cut reads bin 0.)
  return static_cast<std::size_t>(std::min(std::max(0.0, (t - p_lo_) * inv_delta_), last_bin_));
}

// The number of sorted pixels with p <= t: every pixel of an earlier bin than
// t's lies below t and every pixel of a later one above it (bin_of is
// monotone), so only t's own bin is walked. The first two steps without
// branches (a bin holds one or two pixels, so a branch here would be
// mispredicted about every other time); the sentinel ends every walk.
[[gnu::always_inline]] inline std::size_t ProfileTable::count_below(double t) const {
  const Kept* p = kept_.data();
  std::size_t i = start_[bin_of(t)];
  i += p[i].p <= t ? 1 : 0;
  i += p[i].p <= t ? 1 : 0;
  while (p[i].p <= t) ++i;
  return i;
}

double ProfileTable::below_index(std::size_t i, const Segment& sg) const {
  if (i < sg.first) {
    double b = sg.base;
    for (std::size_t j = i; j < sg.first; ++j) b -= kept_[j].f;
    return b;
  }
  const std::size_t j0 = std::min(i, sg.last);
  double b = sg.base + moments_[sg.offset + 3 * (j0 - sg.first)];
  for (std::size_t j = j0; j < i; ++j) b += kept_[j].f;
  return b;
}

// Inside the window but beyond the kept pixels' reach F is a constant (every
// kept pixel above t4, or every one below t1); outside the window it is the
// direct sum, as a windowed engine answers there.
double ProfileTable::outside_segments(double s) const {
  if (!valid_ || px_ == nullptr) return 0.0;
  if (!in_window(s)) return direct_trailing(*px_, tail_pa_, s, ch_);
  if (m_ == 0 || s + shape_.w1 <= kept_[0].p) return below_;
  if (s - shape_.w1 >= kept_[m_ - 1].p) return top_;
  return direct_trailing(*px_, tail_pa_, s, ch_);  // not reached: the segments cover the rest
}

double ProfileTable::quadratic_pixels(std::size_t ia, std::size_t ib, double s) const {
  double F = 0.0;
  for (std::size_t i = ia; i < ib; ++i) F += kept_[i].f * shape_.below(s - kept_[i].p);
  return F;
}

// F(s) = (everything below t1) + the three middle intervals, each from its
// prefix moments about the segment's anchor R (e = p - R):
//   t1 < p <= t2:  G = 1 - (p - t1)^2/(2AB),  sum f (p - t1)^2 = M2 + 2q M1 + q^2 M0, q = R - t1;
//   t2 < p <= t3:  G = 1/2 + (s - p)/A,        sum f (s - p) = d M0 - M1,            d = s - R;
//   t3 < p <  t4:  G = (t4 - p)^2/(2AB),       sum f (t4 - p)^2 = r^2 M0 - 2r M1 + M2, r = t4 - R.
double ProfileTable::trailing(double s) const {
  if (!valid_) return 0.0;
  const std::size_t g = segment_of(s);
  return g < segs_.size() ? read(s, segs_[g]) : outside_segments(s);
}

std::size_t ProfileTable::segment_of(double s) const {
  if (!(s >= seg_lo_ && s <= seg_hi_)) return segs_.size();
  return std::min(static_cast<std::size_t>(std::max(0.0, (s - seg_lo_) * inv_h_)), segs_.size() - 1);
}

[[gnu::always_inline]] inline double ProfileTable::read(double s, const Segment& sg) const {
  const PixelTrapezoid& sh = shape_;
  const double t1 = s - sh.w1, t2 = s - sh.w0, t3 = s + sh.w0, t4 = s + sh.w1;
  const std::size_t i1 = count_below(t1), i2 = count_below(t2), i3 = count_below(t3), i4 = count_below(t4);
  if (i1 < sg.first || i4 > sg.last)  // (rounding at a segment's edge)
    return below_index(i1, sg) + quadratic_pixels(i1, i4, s);
  const double* P = &moments_[sg.offset];
  const double* r1 = P + 3 * (i1 - sg.first);
  double F = sg.base + r1[0];
  const bool pixelwise = sh.B < pixelwise_below_b_;
  if (i2 > i1) {
    if (pixelwise || i2 - i1 <= 2) {
      F += quadratic_pixels(i1, i2, s);
    } else {
      const double* r2 = P + 3 * (i2 - sg.first);
      const double m0 = r2[0] - r1[0], m1 = r2[1] - r1[1], m2 = r2[2] - r1[2];
      const double q = sg.anchor - t1;
      F += m0 - (m2 + 2.0 * q * m1 + q * q * m0) * sh.inv_2ab;
    }
  }
  if (i3 > i2) {
    const double* r2 = P + 3 * (i2 - sg.first);
    const double* r3 = P + 3 * (i3 - sg.first);
    const double m0 = r3[0] - r2[0], m1 = r3[1] - r2[1];
    const double d = s - sg.anchor;
    F += 0.5 * m0 + (d * m0 - m1) * sh.inv_a;
  }
  if (i4 > i3) {
    if (pixelwise || i4 - i3 <= 2) {
      F += quadratic_pixels(i3, i4, s);
    } else {
      const double* r3 = P + 3 * (i3 - sg.first);
      const double* r4 = P + 3 * (i4 - sg.first);
      const double m0 = r4[0] - r3[0], m1 = r4[1] - r3[1], m2 = r4[2] - r3[2];
      const double r = t4 - sg.anchor;
      F += (r * r * m0 - 2.0 * r * m1 + m2) * sh.inv_2ab;
    }
  }
  return F;
}

void ProfileTable::trailing_many(std::span<const double> s, std::span<double> out) {
  FULCRUM_CHECK(out.size() == s.size(), s.size(), out.size());
  const std::size_t n = s.size();
  if (!valid_) {
    std::fill(out.begin(), out.end(), 0.0);
    return;
  }
  const std::size_t G = segs_.size();
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
