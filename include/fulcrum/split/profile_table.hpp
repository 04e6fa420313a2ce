// The profile table: one projection engine's F(s) prepared for many reads
// (the scan reads ~10^4 centres per angle), at a fixed cost per read with no
// pixel-by-pixel work.
//
// Units and conventions: those of split/projection_engine.hpp (s = n.c in
// arcsec, sums in BUNIT x pixel); trailing(s) is the engine's trailing(s, ch)
// up to rounding (not bit for bit: the sums are grouped differently).
//
// How. The engine's kept pixels are already counting-sorted into bins; the
// table sorts each bin (a few pixels) so that they are sorted by p. For a
// query s the four cuts t1..t4 = s - w1, s - w0, s + w0, s + w1 (the
// engine's five intervals of p) then become four pixel indices i1..i4, each
// found from the cut's (estimated) bin and a short walk that compares p. The pixels below t1
// contribute the engine's compensated prefix of whole bins plus the walked
// pixels of t1's bin; on each of the three middle intervals G is a polynomial
// of degree <= 2 in p, so that interval contributes a combination of the
// moments M0 = sum f, M1 = sum f e, M2 = sum f e^2 of its pixels (the same
// expansions as the engine's). Those moments are differences of prefix sums
// over the pixels in p order, taken about a local anchor R (e = p - R): the
// query range is cut into segments of width h = 4 w1, and segment g keeps
// prefix sums about its own centre over the pixels within w1 of it (1.5 times
// the kept pixels in all), so that every number is local and small (|e|,
// |R - t| <= 3 w1 + a bin).
//
// The table reads only the engine's bins and prefix sums, so the engine may
// be built without its block moments (EngineOptions::block_moments = false).
//
// Rounding. The quadratic intervals have width B (the shorter projected
// pixel edge); their moment form loses about (3 w1 / B)^2 to cancellation,
// so when B < 3 w1 / 64 (a split line within ~2 degrees of a pixel axis), or
// when an interval holds at most two pixels, they are summed pixel by pixel
// as the engine sums its cut bins; so are all three intervals of a query
// whose cuts leave its segment's pixels (rounding at a segment's edge).
// Queries outside the engine's window are answered by the engine (its exact
// direct sum, slow). tests/split/test_profile_table.cpp compares
// the table with the engine and the direct sum.
#pragma once

#include <cstddef>
#include <span>
#include <vector>

#include "fulcrum/split/projection_engine.hpp"

namespace fulcrum::split {

class ProfileTable {
 public:
  ProfileTable() = default;
  // Tabulate channel `ch` of `engine` (0 = value, 1 = variance). The engine
  // must outlive the table's reads and not be rebuilt meanwhile; rebuilding
  // the table reuses its storage.
  void rebuild(const ProjectionEngine& engine, int ch = 0);
  // F(s): the engine's trailing(s, ch), up to rounding.
  double trailing(double s) const;
  // out[q] = trailing(s[q]) for every q, the same numbers, read in the order
  // of the segments (the reads of one segment touch only its few kilobytes
  // of pixels and moments, which then stay in cache).
  void trailing_many(std::span<const double> s, std::span<double> out);
  // A = (S - 2 F(s)) / S with S the engine's total.
  double asymmetry(double s) const {
    const double S = e_->total(ch_);
    return (S - 2.0 * trailing(s)) / S;
  }
  const ProjectionEngine& engine() const { return *e_; }

 private:
  // Number of sorted pixels with p <= t, and the sum of everything below t
  // (G = 1) when `below` is not null.
  // (kf: an estimate of t's bin.)
  std::size_t count_below(double t, double kf, double* below) const;
  double quadratic_pixels(std::size_t ia, std::size_t ib, double s) const;
  double outside_segments(double s) const;
  struct Segment;
  // The segment that answers s (segs_.size(): none), and the read in it.
  std::size_t segment_of(double s) const;
  double read(double s, const Segment& segment) const;

  const ProjectionEngine* e_ = nullptr;
  int ch_ = 0;
  std::vector<double> p_, f_;  // kept pixels sorted by p, and their channel value
  // Segments: [seg_lo_ + g h_, seg_lo_ + (g + 1) h_), anchor R_g at the centre.
  double seg_lo_ = 0.0, seg_hi_ = -1.0, h_ = 1.0, inv_h_ = 1.0;
  double inv_delta_ = 1.0, w0_bins_ = 0.0, w1_bins_ = 0.0;  // 1/delta, w0/delta, w1/delta
  double last_bin_ = 0.0;                                   // nbins - 1
  double pixelwise_below_b_ = 0.0;  // B below this: quadratic intervals pixel by pixel
  struct Segment {
    double anchor;
    std::size_t first, last;  // pixel indices [first, last] the table covers
    std::size_t offset;       // into moments_: 3 (last - first + 1) values
  };
  std::vector<Segment> segs_;
  std::vector<double> moments_;  // per segment: prefix (M0, M1, M2) about its anchor
  // trailing_many's working memory: each read's segment, bucket starts, read order.
  std::vector<unsigned> bucket_of_, order_;
  std::vector<std::size_t> bucket_start_;
};

}  // namespace fulcrum::split
