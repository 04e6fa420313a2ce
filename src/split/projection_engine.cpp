// The projection engine (see the header for the derivation): counting sort of
// projected pixel centres into bins, per-bin moments, prefix sums, and the
// exact five-interval evaluation of F(s).
#include "fulcrum/split/projection_engine.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "fulcrum/core/compensated_sum.hpp"
#include "fulcrum/core/error.hpp"

namespace fulcrum::split {

ProjectionEngine::ProjectionEngine(const PixelSet& px, Angle tail_pa, const EngineOptions& opt) {
  rebuild(px, tail_pa, opt);
}

void ProjectionEngine::rebuild(const PixelSet& px, Angle tail_pa, const EngineOptions& opt,
                               EngineScratch* scratch) {
  EngineScratch local;
  EngineScratch& w = scratch ? *scratch : local;
  px_ = &px;
  tail_pa_ = tail_pa;
  n_ = leading_normal(tail_pa);
  shape_ = PixelTrapezoid(px.jacobian, n_);
  total_[0] = total_[1] = 0.0;
  const std::size_t n = px.size();
  FULCRUM_CHECK(px.east.size() == n && px.north.size() == n, n, px.east.size());
  const bool var = opt.with_variance && px.has_variance();
  channels_ = var ? 2 : 1;
  const double w1 = shape_.w1;

  // The exact-and-fast window and the stored range around it.
  const bool full = !(opt.window_lo <= opt.window_hi);
  // (widened by a rounding margin so that queries computed from the same
  // corners never fall just outside)
  const double wpad = 1e-9 * (1.0 + std::abs(opt.window_lo) + std::abs(opt.window_hi));
  wlo_ = full ? -std::numeric_limits<double>::infinity() : opt.window_lo - wpad;
  whi_ = full ? std::numeric_limits<double>::infinity() : opt.window_hi + wpad;
  const double margin = w1 * (1.0 + 1e-9) + 1e-9;
  const double flo = wlo_ - margin, fhi = whi_ + margin;
  // Pass A (streaming over the tiles that reach the window): project, keep
  // the pixels near the window, total the rest. Tiles wholly outside the
  // stored range add their precomputed sums.
  double below[2] = {0.0, 0.0}, above[2] = {0.0, 0.0};
  double pmin = std::numeric_limits<double>::infinity(), pmax = -pmin;
  double kmin = pmin, kmax = pmax;  // of the kept pixels (the stored range)
  std::vector<double>& tp = w.projected;
  std::vector<unsigned>& ti = w.index;
  tp.clear();
  ti.clear();
  if (full) {
    tp.reserve(n);
    ti.reserve(n);
  }
  const double* E = px.east.data();
  const double* N = px.north.data();
  const double* F = px.value.data();
  // Per-pixel variances, or null with var: every pixel's is uniform_variance.
  const double* V = var && !px.variance.empty() ? px.variance.data() : nullptr;
  const double uv = px.uniform_variance;
  auto scan_pixels = [&](std::size_t b, std::size_t e) {
    for (std::size_t i = b; i < e; ++i) {
      const double p = n_.east * E[i] + n_.north * N[i];
      pmin = std::min(pmin, p);
      pmax = std::max(pmax, p);
      if (p < flo) {
        below[0] += F[i];
        if (var) below[1] += V ? V[i] : uv;
      } else if (p > fhi) {
        above[0] += F[i];
        if (var) above[1] += V ? V[i] : uv;
      } else {
        kmin = std::min(kmin, p);
        kmax = std::max(kmax, p);
        tp.push_back(p);
        ti.push_back(static_cast<unsigned>(i));
      }
    }
  };
  if (px.tiles.empty() || full) {
    scan_pixels(0, n);
  } else {
    for (const PixelTile& t : px.tiles) {
      const double pc = n_.east * t.east + n_.north * t.north;
      if (pc + t.radius < flo) {
        below[0] += t.sum_value;
        below[1] += var ? t.sum_variance : 0.0;
        pmin = std::min(pmin, pc - t.radius);
      } else if (pc - t.radius > fhi) {
        above[0] += t.sum_value;
        above[1] += var ? t.sum_variance : 0.0;
        pmax = std::max(pmax, pc + t.radius);
      } else {
        scan_pixels(t.begin, t.end);
      }
    }
  }
  pmin_ = n ? pmin : 0.0;
  pmax_ = n ? pmax : 0.0;
  const std::size_t m = tp.size();
  smin_ = smax_ = 0.0;
  if (m) {  // (the min and max of tp, kept while streaming)
    smin_ = kmin;
    smax_ = kmax;
  }
  const double range = std::max(smax_ - smin_, 1e-9 * (1.0 + w1));
  // Bin width: balance 2 w1/(kBlock delta) blocks against 4 (m delta/range)
  // pixels in the cut bins.
  delta_ = opt.bin_width_arcsec > 0.0
               ? opt.bin_width_arcsec
               : std::sqrt(w1 * range / (2.0 * kBlock * std::max<double>(1.0, double(m))));
  delta_ = std::max(delta_, range / 2.0e7);  // cap the bin count
  if (!(delta_ > 0.0) || !std::isfinite(delta_)) delta_ = 1.0;
  nbins_ = m ? static_cast<long long>(std::floor(range / delta_)) + 1 : 0;

  sort_into_bins(w, px, var, below, above);
}

// Pass B: counting sort of the kept pixels (w.projected, w.index) into bins,
// then the moments per bin, the prefix and the running sums.
void ProjectionEngine::sort_into_bins(EngineScratch& w, const PixelSet& px, bool var, const double below[2],
                                      const double above[2]) {
  const std::size_t m = w.projected.size();
  const int nc = channels_;
  const std::vector<double>& tp = w.projected;
  const std::vector<unsigned>& ti = w.index;
  const double* F = px.value.data();
  const double* V = var && !px.variance.empty() ? px.variance.data() : nullptr;
  const double uv = px.uniform_variance;
  std::vector<unsigned>& bin = w.bin;
  bin.resize(m);
  start_.assign(static_cast<std::size_t>(nbins_) + 1, 0);
  for (std::size_t j = 0; j < m; ++j) {
    long long k = static_cast<long long>((tp[j] - smin_) / delta_);
    k = std::clamp<long long>(k, 0, nbins_ - 1);
    bin[j] = static_cast<unsigned>(k);
    ++start_[static_cast<std::size_t>(k) + 1];
  }
  for (long long k = 0; k < nbins_; ++k) start_[k + 1] += start_[k];
  std::vector<std::size_t>& fill = w.fill;
  fill.assign(start_.begin(), start_.end() - 1);
  proj_.resize(m);
  val_.resize(m * nc);
  for (std::size_t j0 = 0; j0 < m; ++j0) {
    const std::size_t j = fill[bin[j0]]++;
    const std::size_t i = ti[j0];
    proj_[j] = tp[j0];
    val_[j * nc] = F[i];
    if (nc == 2) val_[j * nc + 1] = V ? V[i] : uv;
  }
  // The moments bin by bin over the sorted pixels: the order in which the
  // stable sort placed them, so the same sums as adding each pixel while it
  // is placed, but read in sequence (at 2048^2 the placing order scatters
  // the moments of ~10^5 bins over several megabytes).
  mom_.assign(static_cast<std::size_t>(nbins_) * nc * 3, 0.0);
  for (long long k = 0; k < nbins_; ++k) {
    const double c = block_centre(k / kBlock);
    double* mm = &mom_[(static_cast<std::size_t>(k) * nc) * 3];
    for (std::size_t j = start_[k]; j < start_[k + 1]; ++j) {
      const double e = proj_[j] - c;
      const double f = val_[j * nc];
      mm[0] += f;
      mm[1] += f * e;
      mm[2] += f * e * e;
      if (nc == 2) {
        const double v = val_[j * nc + 1];
        mm[3] += v;
        mm[4] += v * e;
        mm[5] += v * e * e;
      }
    }
  }
  running_sums(below, above);
}

// The prefix of M0 over all bins (for the G = 1 part) first, then the
// moments turn into running sums within each block (Q[k] = sum of bins
// from the block's first to k, about the block centre).
void ProjectionEngine::running_sums(const double below[2], const double above[2]) {
  const int nc = channels_;
  prefix_.resize((static_cast<std::size_t>(nbins_) + 1) * nc);  // (every entry is written below)
  for (int c = 0; c < nc; ++c) {
    CompensatedSum acc;
    acc.add(below[c]);
    prefix_[c] = acc.value();
    for (long long k = 0; k < nbins_; ++k) {
      acc.add(mom_[(static_cast<std::size_t>(k) * nc + c) * 3]);
      prefix_[(k + 1) * nc + c] = acc.value();
    }
    acc.add(above[c]);
    total_[c] = acc.value();
  }
  block_running_sums();
}

// The per-bin moments summed in the blocks' running sums (in place).
void ProjectionEngine::block_running_sums() {
  const int nc = channels_;
  for (long long k = 0; k < nbins_; ++k) {
    if (k % kBlock == 0) continue;
    double* q = &mom_[(static_cast<std::size_t>(k) * nc) * 3];
    const double* qp = q - nc * 3;
    for (int j = 0; j < nc * 3; ++j) q[j] += qp[j];
  }
}

double ProjectionEngine::fallback(double s, int ch) const { return direct_trailing(*px_, tail_pa_, s, ch); }

// F(s) for one channel: the five-interval evaluation described in the header.
// In p-space the cuts are t1 = s - w1 < t2 = s - w0 <= t3 = s + w0 < t4 = s + w1:
//   p <= t1: G = 1;  t1 < p <= t2: G = 1 - (w1 - u)^2/(2AB)  (u = s - p);
//   t2 < p <= t3: G = 1/2 + u/A;  t3 < p < t4: G = (u + w1)^2/(2AB);  p >= t4: 0.
// For a bin with centre c and e = p - c, u = d - e with d = s - c, so
//   sum f (w1 - u)^2 = (w1 - d)^2 M0 + 2 (w1 - d) M1 + M2,
//   sum f u          = d M0 - M1,
//   sum f (u + w1)^2 = (d + w1)^2 M0 - 2 (d + w1) M1 + M2.
double ProjectionEngine::trailing(double s, int ch) const {
  if (ch >= channels_ || px_ == nullptr) return 0.0;
  if (!in_window(s)) return fallback(s, ch);
  const int nc = channels_;
  if (nbins_ == 0) return prefix_[ch];
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
  // Whole bins strictly between two cuts, as at most two partial blocks
  // (differences of running sums) plus whole blocks, each about its block
  // centre C: with d = s - C the polynomial sums are
  //   sum f (w1 - u)^2 = (w1 - d)^2 M0 + 2 (w1 - d) M1 + M2, etc. (above).
  auto poly = [&](int which, double d, double m0, double m1, double m2) {
    if (which == 1) {
      const double q = w1 - d;
      return m0 - (q * q * m0 + 2.0 * q * m1 + m2) * shape_.inv_2ab;
    }
    if (which == 2) return 0.5 * m0 + (d * m0 - m1) * shape_.inv_a;
    const double q = d + w1;
    return (q * q * m0 - 2.0 * q * m1 + m2) * shape_.inv_2ab;
  };
  // Q at bin k (running sum within k's block), or 0 for k before the block start.
  auto run = [&](long long k, long long block_first, int j) {
    return k < block_first ? 0.0 : mom_[(static_cast<std::size_t>(k) * nc + ch) * 3 + j];
  };
  auto span = [&](int which, long long lo, long long hi) {  // bins [lo, hi] in one block
    const long long b = lo / kBlock, first = b * kBlock;
    const double d = s - block_centre(b);
    const double m0 = run(hi, first, 0) - run(lo - 1, first, 0);
    const double m1 = run(hi, first, 1) - run(lo - 1, first, 1);
    const double m2 = run(hi, first, 2) - run(lo - 1, first, 2);
    F += poly(which, d, m0, m1, m2);
  };
  auto region = [&](long long ka, long long kb, int which) {
    long long lo = std::max<long long>(ka + 1, 0);
    const long long hi = std::min<long long>(kb, nbins_) - 1;  // inclusive
    while (lo <= hi) {
      const long long block_last = std::min<long long>((lo / kBlock + 1) * kBlock - 1, nbins_ - 1);
      const long long end = std::min(block_last, hi);
      span(which, lo, end);
      lo = end + 1;
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
  double F = 0.0;
  if (ch != 0 && !px.has_variance()) return F;
  for (std::size_t i = 0; i < px.size(); ++i)
    F += (ch == 0 ? px.value[i] : px.variance_at(i)) *
         shape.below(s - (n.east * px.east[i] + n.north * px.north[i]));
  return F;
}

HalfSums direct_halves(const PixelSet& px, Angle tail_pa, SkyOffset c) {
  const SkyOffset n = leading_normal(tail_pa);
  const PixelTrapezoid shape(px.jacobian, n);
  const double s = n.east * c.east + n.north * c.north;
  HalfSums h;
  const bool var = px.has_variance();
  for (std::size_t i = 0; i < px.size(); ++i) {
    const double t = s - (n.east * px.east[i] + n.north * px.north[i]);
    const double below = shape.below(t), above = shape.above(t);
    h.trailing += px.value[i] * below;
    h.leading += px.value[i] * above;
    if (var) {
      h.trailing_var += px.variance_at(i) * below;
      h.leading_var += px.variance_at(i) * above;
    }
  }
  return h;
}

}  // namespace fulcrum::split
