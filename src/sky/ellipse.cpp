// Sky ellipses and disc-plane coordinates.
#include "fulcrum/sky/ellipse.hpp"

#include <cmath>

namespace fulcrum {

namespace {
// Coordinates of `d` along the major axis (towards PA = pa) and along the
// direction PA = pa + 90 deg; s and c are the sine and cosine of pa.
inline void major_minor(SkyOffset d, double s, double c, double& x, double& y) {
  x = d.east * s + d.north * c;
  y = d.east * c - d.north * s;
}
inline void major_minor(SkyOffset d, Angle pa, double& x, double& y) {
  major_minor(d, pa.sin(), pa.cos(), x, y);
}
}  // namespace

double SkyEllipse::scaled_radius(SkyOffset p) const { return scaled_radius(p, pa.sin(), pa.cos()); }

double SkyEllipse::scaled_radius(SkyOffset p, double sin_pa, double cos_pa) const {
  double x, y;
  major_minor(p - centre, sin_pa, cos_pa, x, y);
  return std::hypot(x / a_arcsec, y / (q * a_arcsec));
}

SkyOffset SkyEllipse::point_at(double t) const {
  const double x = a_arcsec * std::cos(t), y = q * a_arcsec * std::sin(t);
  const double s = pa.sin(), c = pa.cos();
  return centre + SkyOffset{x * s + y * c, x * c - y * s};
}

DiscPoint disc_coordinates(SkyOffset p, SkyOffset centre, Angle pa, Angle inc) {
  double x, y;
  major_minor(p - centre, pa, x, y);
  const double yd = y / inc.cos();
  DiscPoint d;
  d.radius_arcsec = std::hypot(x, yd);
  if (d.radius_arcsec > 0) {
    d.cos_theta = x / d.radius_arcsec;
    d.sin_theta = yd / d.radius_arcsec;
  }
  return d;
}

}  // namespace fulcrum
