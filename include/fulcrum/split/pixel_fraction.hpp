// Exact fraction of a pixel on one side of a straight line on the sky.
//
// Units and conventions: lengths in arcsec on the (east, north) offset plane of
// sky/offset_frame.hpp; the line is {x : n.x = s} for a unit normal n; the
// pixel is the parallelogram spanned by the columns j1, j2 of the Jacobian
// J = d(east, north)/d(x, y) (sky/pixel_offsets.hpp) centred on the pixel's
// offset p_c. The split convention of DESIGN.md §2: n points to the leading
// side (tail PA + 180 deg).
//
// Derivation (the kernel every split goes through).
// A point of the pixel is x = p_c + alpha j1 + beta j2 with alpha, beta
// uniform on [-1/2, 1/2] (area measure of a parallelogram is uniform in its
// affine coordinates). Its projection is n.x = p + alpha a + beta b with
// p = n.p_c, a = n.j1, b = n.j2. The density of t = alpha a + beta b is the
// convolution of two boxes of widths |a| and |b|: a trapezoid. With
// A = max(|a|, |b|), B = min(|a|, |b|), w1 = (A + B)/2 (half the full extent,
// the projected corners sit at p +- w0 and p +- w1), w0 = (A - B)/2 (half the
// plateau), the density is 1/A on |t| <= w0 and falls linearly to zero at
// |t| = w1. Its cumulative G(t) = P(T < t), the fraction of the pixel's area
// on the side n.x < p + t, is
//   t <= -w1:          0
//   -w1 < t <= -w0:    (t + w1)^2 / (2AB)
//   -w0 < t <= w0:     1/2 + t/A
//   w0 < t < w1:       1 - (w1 - t)^2 / (2AB)
//   t >= w1:           1
// (continuity at -w0: B^2/(2AB) = B/(2A) = 1/2 - w0/A). For B = 0 (an edge
// parallel to the line) the trapezoid is a box and the quadratic pieces have
// zero width; the comparisons below never reach them, so no division by zero
// occurs. The fraction on the leading side n.x > s of a pixel whose centre
// projects to p is 1 - G(s - p). This is exact: no sub-pixel sampling.
#pragma once

#include <Eigen/Core>
#include <algorithm>
#include <cmath>

#include "fulcrum/sky/angle.hpp"
#include "fulcrum/sky/offset_frame.hpp"

namespace fulcrum::split {

// The unit normal of the split line for a tail position angle: it points to the
// leading side, PA = tail PA + 180 deg, (east, north) = -(sin tail, cos tail).
inline SkyOffset leading_normal(Angle tail_pa) { return direction_of(tail_pa + 180.0 * degrees); }

// The projected shape of one pixel along a normal: the trapezoid above.
struct PixelTrapezoid {
  double A = 1.0, B = 0.0;  // longer and shorter projected edge (arcsec)
  double w0 = 0.5, w1 = 0.5;
  double inv_2ab = 0.0;     // 1/(2AB), 0 when B == 0
  double inv_a = 1.0;

  PixelTrapezoid() = default;
  PixelTrapezoid(const Eigen::Matrix2d& jac, SkyOffset n) {
    const double a = std::abs(n.east * jac(0, 0) + n.north * jac(1, 0));
    const double b = std::abs(n.east * jac(0, 1) + n.north * jac(1, 1));
    A = std::max(a, b);
    B = std::min(a, b);
    w1 = 0.5 * (A + B);
    w0 = 0.5 * (A - B);
    inv_a = 1.0 / A;
    inv_2ab = B > 0.0 ? 1.0 / (2.0 * A * B) : 0.0;
  }

  // G(t): fraction of the pixel's area with n.x < p + t.
  double below(double t) const {
    if (t <= -w1) return 0.0;
    if (t >= w1) return 1.0;
    if (t <= -w0) {
      const double v = t + w1;
      return v * v * inv_2ab;
    }
    if (t >= w0) {
      const double v = w1 - t;
      return 1.0 - v * v * inv_2ab;
    }
    return 0.5 + t * inv_a;
  }
  // 1 - G(t): fraction with n.x > p + t, computed without cancellation.
  double above(double t) const { return below(-t); }
};

}  // namespace fulcrum::split
