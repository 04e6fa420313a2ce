// A typed angle, so that degrees and radians cannot be mixed up.
//
//   Angle pa = 123.0 * degrees;      double r = pa.rad();   double d = pa.deg();
//
// Position angles on the sky follow DESIGN.md §2: measured from north through
// east, in degrees, reported in [0, 360). `wrap360()` gives that range and
// `wrap180()` gives (-180, 180] for differences between two angles.
#pragma once

#include <cmath>
#include <numbers>

namespace fulcrum {

// pi / 180: a plain number for code that works in radians (Ceres functors,
// trigonometry on raw parameters); interfaces use Angle.
inline constexpr double kRadPerDeg = std::numbers::pi / 180.0;
// Arcseconds per radian, for offsets on the sky from radians.
inline constexpr double kArcsecPerRad = 180.0 / std::numbers::pi * 3600.0;

class Angle {
 public:
  constexpr Angle() = default;
  static constexpr Angle from_radians(double r) { return Angle(r); }
  static constexpr Angle from_degrees(double d) { return Angle(d * std::numbers::pi / 180.0); }

  constexpr double rad() const { return rad_; }
  constexpr double deg() const { return rad_ * 180.0 / std::numbers::pi; }
  double sin() const { return std::sin(rad_); }
  double cos() const { return std::cos(rad_); }

  // Same direction, in [0, 360) degrees.
  Angle wrap360() const {
    double r = std::fmod(rad_, 2.0 * std::numbers::pi);
    if (r < 0) r += 2.0 * std::numbers::pi;
    if (r >= 2.0 * std::numbers::pi) r = 0.0;
    return Angle(r);
  }
  // Same direction, in (-180, 180] degrees.
  Angle wrap180() const {
    double r = wrap360().rad_;
    if (r > std::numbers::pi) r -= 2.0 * std::numbers::pi;
    return Angle(r);
  }

  constexpr Angle operator+(Angle o) const { return Angle(rad_ + o.rad_); }
  constexpr Angle operator-(Angle o) const { return Angle(rad_ - o.rad_); }
  constexpr Angle operator-() const { return Angle(-rad_); }
  constexpr Angle operator*(double k) const { return Angle(rad_ * k); }
  constexpr Angle operator/(double k) const { return Angle(rad_ / k); }
  constexpr double operator/(Angle o) const { return rad_ / o.rad_; }
  constexpr bool operator<(Angle o) const { return rad_ < o.rad_; }

 private:
  explicit constexpr Angle(double r) : rad_(r) {}
  double rad_ = 0.0;
};

struct AngleUnit {
  double radians_per_unit;
};
inline constexpr AngleUnit radians{1.0};
inline constexpr AngleUnit degrees{kRadPerDeg};
inline constexpr AngleUnit arcsec{std::numbers::pi / 180.0 / 3600.0};

constexpr Angle operator*(double v, AngleUnit u) { return Angle::from_radians(v * u.radians_per_unit); }
constexpr Angle operator*(double k, Angle a) { return a * k; }

// Wrap a position angle in degrees to [0, 360).
inline double wrap_pa_deg(double pa_deg) { return Angle::from_degrees(pa_deg).wrap360().deg(); }
// Signed difference a - b of two angles in degrees, in (-180, 180].
inline double angle_diff_deg(double a_deg, double b_deg) {
  return Angle::from_degrees(a_deg - b_deg).wrap180().deg();
}

}  // namespace fulcrum
