// The profile table: the trailing profile F(s) of one split angle, built
// straight from the pixel set and prepared for many reads (the scan reads
// ~10^4 centres per angle), at a fixed cost per read with no pixel-by-pixel
// work.
//
// Units and conventions: those of split/projection_engine.hpp (s = n.c in
// arcsec, n = leading_normal(tail PA), sums in BUNIT x pixel); trailing(s)
// is the engine's trailing(s, ch) for the same pixels, angle and window up
// to rounding (not bit for bit: the sums are grouped differently).
//
// How. One pass over the tiles of the PixelSet that reach the window (as a
// windowed engine makes) projects their pixels; those within w1 of the
// window are kept, the others enter two running totals (G = 1 below the
// window, G = 0 above it). A kept pixel's bin, k = floor((p - p_lo)/delta)
// over the kept range, is taken in the same pass, so a counting sort puts
// the kept pixels in bin order and an insertion within each bin (a bin holds
// one or two pixels) leaves them sorted by p. For a query s the four cuts
// t1..t4 = s - w1, s - w0, s + w0, s + w1 (the engine's five intervals of p)
// then become four pixel indices i1..i4: the cut's bin, computed by the same
// formula as the pixels' bins (so every pixel of an earlier bin lies below
// the cut and every pixel of a later one above it: floating-point rounding is
// monotone), plus a short walk that compares p within that bin. On each of
// the three middle intervals G is a polynomial of degree <= 2 in p, so that
// interval contributes a combination of the moments M0 = sum f,
// M1 = sum f e, M2 = sum f e^2 of its pixels (the engine's expansions).
// Those moments are differences of prefix sums over the pixels in p order,
// taken about a local anchor R (e = p - R): the query range is cut into
// segments of width h = 4 w1, and segment g keeps prefix sums about its own
// centre over the pixels within w1 of it (1.5 times the kept pixels in all),
// so that every number is local and small (|e|, |R - t| <= 3 w1 + a bin).
// Everything below t1 (G = 1) is the segment's base (the compensated sum of
// the pixels below the segment and of the total below the window) plus the
// M0 prefix at i1.
//
// Rounding. The quadratic intervals have width B (the shorter projected
// pixel edge); their moment form loses about (3 w1 / B)^2 to cancellation,
// so when B < 3 w1 / 64 (a split line within ~2 degrees of a pixel axis), or
// when an interval holds at most two pixels, they are summed pixel by pixel
// as the engine sums its cut bins; so are all three intervals of a query
// whose cuts leave its segment's pixels (rounding at a segment's edge).
// Queries outside the window are the direct sum over the pixel set (exact,
// slow), as for a windowed engine. tests/split/test_profile_table.cpp
// compares the table with the engine and the direct sum.
#pragma once

#include <cstddef>
#include <limits>
#include <span>
#include <vector>

#include "fulcrum/sky/angle.hpp"
#include "fulcrum/split/pixel_fraction.hpp"
#include "fulcrum/split/pixel_set.hpp"

namespace fulcrum::split {

class ProfileTable {
 public:
  ProfileTable() = default;
  // Tabulate channel `ch` (0 = value, 1 = variance; a variance channel of a
  // set without noise is 0 everywhere) of `pixels` at `tail_pa` for reads in
  // the window [window_lo, window_hi] of s (arcsec; window_lo > window_hi:
  // the whole map), the window of EngineOptions. `pixels` must outlive the
  // table's reads; rebuilding reuses the table's storage.
  void rebuild(const PixelSet& pixels, Angle tail_pa, double window_lo, double window_hi, int ch = 0);
  // F(s): the engine's trailing(s, ch), up to rounding.
  double trailing(double s) const;
  // out[q] = trailing(s[q]) for every q, the same numbers, read in the order
  // of the segments (the reads of one segment touch only its few kilobytes
  // of pixels and moments, which then stay in cache).
  void trailing_many(std::span<const double> s, std::span<double> out);
  // The sum of the channel over the whole set (L + T).
  double total() const { return total_; }
  // A = (S - 2 F(s)) / S with S the total.
  double asymmetry(double s) const { return (total_ - 2.0 * trailing(s)) / total_; }

  // What a projection engine of the same pixels, angle and window reports
  // (the zero search of robustness/flip_distance.hpp reads them).
  Angle tail_pa() const { return tail_pa_; }
  SkyOffset normal() const { return n_; }
  double s_of(SkyOffset centre) const { return n_.east * centre.east + n_.north * centre.north; }
  const PixelTrapezoid& shape() const { return shape_; }
  double s_min() const { return pmin_ - shape_.w1; }
  double s_max() const { return pmax_ + shape_.w1; }
  double window_lo() const { return wlo_; }
  double window_hi() const { return whi_; }
  bool in_window(double s) const { return s >= wlo_ && s <= whi_; }
  // The pixels kept near the window (those the reads walk over).
  std::size_t pixel_count() const { return m_; }

  // The number of pixels a table (or a windowed engine) of this angle and
  // window keeps, estimated from the set's tiles without reading a pixel: a
  // tile that straddles the window counts with the fraction of its
  // projected extent inside it. (The scan chooses a table or an engine by
  // it.)
  static double expected_pixels(const PixelSet& pixels, Angle tail_pa, double window_lo, double window_hi);

 private:
  struct Kept {  // a kept pixel: its p and its channel value
    double p, f;
  };
  struct Segment {
    double anchor;
    double base;              // everything below pixel `first` (G = 1), compensated
    std::size_t first, last;  // pixel indices [first, last] the segment covers
    std::size_t offset;       // into moments_: 3 (last - first + 1) values
  };
  // The bin of a pixel or a cut at t (the same formula for both).
  std::size_t bin_of(double t) const;
  // The number of sorted pixels with p <= t.
  std::size_t count_below(double t) const;
  // The sum of the pixels before index i (G = 1 for them) plus the total
  // below the window, from segment `sg`'s base.
  double below_index(std::size_t i, const Segment& sg) const;
  double quadratic_pixels(std::size_t ia, std::size_t ib, double s) const;
  double outside_segments(double s) const;
  // What the tiles say before a pixel is read: the pixels the runs hold, the
  // estimate of those kept, and the bounds of their p.
  struct RunPlan {
    std::size_t bound = 0;
    double expected = 0.0;
    double lo = std::numeric_limits<double>::infinity(), hi = -std::numeric_limits<double>::infinity();
  };
  void project(const PixelSet& px, int ch);
  RunPlan plan_runs(const PixelSet& px, int ch, double flo, double fhi);
  void set_bins(const RunPlan& plan);
  void project_runs(const PixelSet& px, int ch, double flo, double fhi);
  void sort_kept();
  void make_segments();
  // The segment that answers s (segs_.size(): none), and the read in it.
  std::size_t segment_of(double s) const;
  double read(double s, const Segment& segment) const;

  const PixelSet* px_ = nullptr;
  int ch_ = 0;
  bool valid_ = false;  // a channel the set has
  Angle tail_pa_;
  SkyOffset n_;
  PixelTrapezoid shape_;
  double wlo_ = 0.0, whi_ = 0.0;    // the window (padded as the engine pads it)
  double pmin_ = 0.0, pmax_ = 0.0;  // all projected centres (with tiles' bounds)
  double below_ = 0.0, top_ = 0.0, total_ = 0.0;  // below the window; below + kept; all
  std::size_t m_ = 0;  // kept pixels
  // Bins of the kept pixels: bin k covers [p_lo + k delta, p_lo + (k + 1) delta).
  double p_lo_ = 0.0, inv_delta_ = 1.0, last_bin_ = 0.0;
  std::vector<unsigned> start_;  // nbins + 1: the first sorted pixel of each bin
  std::vector<Kept> kept_;       // kept pixels sorted by p (+ a sentinel at p = +inf)
  // Segments: [seg_lo_ + g h_, seg_lo_ + (g + 1) h_), anchor R_g at the centre.
  double seg_lo_ = 0.0, seg_hi_ = -1.0, h_ = 1.0, inv_h_ = 1.0;
  double pixelwise_below_b_ = 0.0;  // B below this: quadratic intervals pixel by pixel
  std::vector<Segment> segs_;
  std::vector<double> moments_;  // per segment: prefix (M0, M1, M2) about its anchor
  // The build's working memory: kept pixels in projection order and their
  // bins, the tiles that reach the window, the fill pointers of the sort.
  std::vector<Kept> projected_;
  std::vector<unsigned> tk_, fill_;
  std::vector<std::size_t> reach_;
  // trailing_many's working memory: each read's segment, bucket starts, read order.
  std::vector<unsigned> bucket_of_, order_;
  std::vector<std::size_t> bucket_start_;
};

}  // namespace fulcrum::split
