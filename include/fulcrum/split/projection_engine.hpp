// The projection engine: exact leading and trailing sums for any centre, at
// one split angle, in O(1) work per centre after one pass over the map.
//
// Units and conventions: offsets (east, north) in arcsec from the PixelSet's
// frame reference; the split angle is the tail PA (north through east, deg);
// n = leading_normal(tail PA); s = n.c for a centre c. Sums are in the map's
// BUNIT times pixels (raw pixel sums; split/half_split.hpp converts to flux).
//
// Why it works (DESIGN.md §4). The trailing sum about a centre c is
//   T(c) = sum_i f_i G(n.c - p_i),        p_i = n.(pixel centre i),
// with G the trapezoid cumulative of split/pixel_fraction.hpp, the same for
// every pixel (one Jacobian). T depends on c only through s = n.c, so for a
// fixed angle the whole 2-D grid of centres collapses onto the 1-D profile
//   F(s) = sum_i f_i G(s - p_i),
// piecewise quadratic with breakpoints at the projected corners p_i +- w0,
// p_i +- w1. L(s) = F(+inf) - F(s) because the aperture is fixed.
//
// How F(s) is evaluated exactly (the kernel, see projection_engine.cpp).
// The projected centres are counting-sorted into bins of width delta, grouped
// in blocks of 32 bins. Per bin and channel we keep the running sums, from
// the start of its block, of the moments M0 = sum f, M1 = sum f e,
// M2 = sum f e^2 of the offsets e = p - (block centre), and a prefix sum of
// M0 over all bins. For a
// query s, a pixel's G depends on which of five intervals of p it falls in,
// cut at t_j = s - w1, s - w0, s + w0, s + w1; on each interval G is a
// polynomial of degree <= 2 in p, so
//   * bins wholly below t_1 contribute the prefix sum of M0 (G = 1);
//   * bins wholly between two cuts contribute an exact combination of
//     M0, M1, M2 of their block (or of a run of bins inside a block: a
//     difference of two running sums), the polynomial expanded about the
//     block centre: only small, local numbers, no cancellation;
//   * the at most four bins that contain a cut are summed pixel by pixel.
// Nothing is approximated: the result equals the direct sum up to rounding.
// The cost per query is about 2 w1/(32 delta) blocks + 4 bins' pixels + six
// partial blocks; delta = sqrt(w1 range / (64 N)) balances them: O(sqrt N)
// worst case but a few dozen operations for a 1024x1024 map. (Sorting all
// 4N breakpoints with local prefix polynomials gives O(log N) queries as
// well; the binned form builds in O(N) without a comparison sort, which is
// what makes 181 angles of a 1024^2 map fit in a fraction of a second.)
#pragma once

#include <cstddef>
#include <vector>

#include "fulcrum/sky/angle.hpp"
#include "fulcrum/split/pixel_fraction.hpp"
#include "fulcrum/split/pixel_set.hpp"

namespace fulcrum::split {

struct EngineOptions {
  // Bin width in arcsec; 0 picks the balance above.
  double bin_width_arcsec = 0.0;
  // Project the variance channel too (needed for errors and noise draws).
  bool with_variance = true;
  // The range of s the caller will query, [window_lo, window_hi] (arcsec).
  // Pixels farther than w1 + 2 delta outside it enter only two running
  // totals (G = 1 below, G = 0 above for every s in the window), so a build
  // stores and bins only the pixels near the window: a scan of a +-2.5 arcsec
  // grid of a 1024^2 map bins a few per cent of the pixels. Queries outside
  // the window stay exact but fall back to the direct sum over the pixel set
  // (slow). window_lo > window_hi (the default) means the whole map. With
  // the PixelSet's tiles, tiles wholly outside the stored range are not
  // even read: a build costs the tiles that reach the window.
  double window_lo = 1.0;
  double window_hi = -1.0;
};

// Trailing and leading sums at one s (raw pixel sums, BUNIT x pixel) and the
// matching variances (BUNIT^2 x pixel; 0 when the set has no variance).
struct HalfSums {
  double leading = 0.0;
  double trailing = 0.0;
  double leading_var = 0.0;
  double trailing_var = 0.0;
  double total() const { return leading + trailing; }
  double asymmetry() const { return (leading - trailing) / (leading + trailing); }
};

// Working memory of an engine build that the engine does not keep (the kept
// pixels' projections and indices before the counting sort, their bins, the
// fill pointers). A caller that builds many engines in turn (the scan: one
// per angle) keeps one per thread and passes it to rebuild(), so that after
// the first build nothing is allocated, zeroed by the allocator or returned
// to the operating system.
struct EngineScratch {
  std::vector<double> projected;
  std::vector<unsigned> index;
  std::vector<unsigned> bin;
  std::vector<std::size_t> fill;
};

class ProjectionEngine {
 public:
  // An engine of no pixels (every sum 0); rebuild() before use.
  ProjectionEngine() = default;
  ProjectionEngine(const PixelSet& pixels, Angle tail_pa, const EngineOptions& options = {});
  // Rebuild this engine in place for another angle, window or pixel set: the
  // same engine, bit for bit, as constructing a new one, but reusing this
  // engine's storage and `scratch` (a temporary one when null). `pixels` must
  // outlive the engine's queries, as for the constructor.
  void rebuild(const PixelSet& pixels, Angle tail_pa, const EngineOptions& options = {},
               EngineScratch* scratch = nullptr);

  Angle tail_pa() const { return tail_pa_; }
  SkyOffset normal() const { return n_; }
  double s_of(SkyOffset centre) const { return n_.east * centre.east + n_.north * centre.north; }
  // F(s) of channel ch (0 = value, 1 = variance): the trailing sum.
  double trailing(double s, int ch = 0) const;
  HalfSums halves(double s) const;
  HalfSums halves(SkyOffset centre) const { return halves(s_of(centre)); }
  double asymmetry(double s) const;
  double total(int ch = 0) const { return channels_ > ch ? total_[ch] : 0.0; }
  // Bounds of the range of s over which L and T change (outside it one half
  // is empty; with tiles skipped these are the tiles' bounds, slightly wider).
  double s_min() const { return pmin_ - shape_.w1; }
  double s_max() const { return pmax_ + shape_.w1; }
  double bin_width() const { return delta_; }
  std::size_t pixel_count() const { return proj_.size(); }
  int channels() const { return channels_; }
  const PixelTrapezoid& shape() const { return shape_; }
  // The exact-and-fast query range (the whole map when no window was given).
  double window_lo() const { return wlo_; }
  double window_hi() const { return whi_; }
  bool in_window(double s) const { return s >= wlo_ && s <= whi_; }

 private:
  double fallback(double s, int ch) const;
  void sort_into_bins(EngineScratch& w, const PixelSet& pixels, bool with_variance, const double below[2],
                      const double above[2]);
  void running_sums(const double below[2], const double above[2]);
  void block_running_sums();
  static constexpr long long kBlock = 32;  // bins per block of running sums
  double block_centre(long long b) const { return smin_ + (double(b * kBlock) + 0.5 * kBlock) * delta_; }
  const PixelSet* px_ = nullptr;
  double wlo_ = 0.0, whi_ = 0.0;

  Angle tail_pa_;
  SkyOffset n_;
  PixelTrapezoid shape_;
  int channels_ = 1;
  double smin_ = 0.0, smax_ = 0.0, delta_ = 1.0;  // stored (binned) range
  double pmin_ = 0.0, pmax_ = 0.0;                 // all projected centres
  double total_[2] = {0.0, 0.0};
  long long nbins_ = 0;
  std::vector<std::size_t> start_;  // nbins+1: pixel range of each bin
  std::vector<double> proj_;        // p_i in bin order
  std::vector<double> val_;         // channel values in bin order, [i*channels + ch]
  std::vector<double> mom_;         // running sums in blocks: [(k*channels + ch)*3 + m]
  std::vector<double> prefix_;      // [(k)*channels + ch], k = 0..nbins
};

// The brute-force reference: sum_i f_i G(s - p_i) by a loop over all pixels
// (channel 0 = value, 1 = variance). The benchmark baseline and the check.
double direct_trailing(const PixelSet& pixels, Angle tail_pa, double s, int ch = 0);
HalfSums direct_halves(const PixelSet& pixels, Angle tail_pa, SkyOffset centre);

}  // namespace fulcrum::split
