// Tangent-plane offsets and spherical position angles.
#include "fulcrum/sky/offset_frame.hpp"

#include <cmath>
#include <numbers>

#include "fulcrum/sky/angle.hpp"

namespace fulcrum {

SkyOffset OffsetFrame::to_offset(WorldCoord w) const {
  const double a0 = ref_.ra_deg * kRadPerDeg, d0 = ref_.dec_deg * kRadPerDeg;
  const double a = w.ra_deg * kRadPerDeg, d = w.dec_deg * kRadPerDeg;
  const double da = a - a0;
  const double cosd = std::cos(d), sind = std::sin(d), cosd0 = std::cos(d0), sind0 = std::sin(d0);
  const double D = sind0 * sind + cosd0 * cosd * std::cos(da);
  const double xi = cosd * std::sin(da) / D;
  const double eta = (cosd0 * sind - sind0 * cosd * std::cos(da)) / D;
  return {xi * kArcsecPerRad, eta * kArcsecPerRad};
}

WorldCoord OffsetFrame::to_world(SkyOffset o) const {
  const double a0 = ref_.ra_deg * kRadPerDeg, d0 = ref_.dec_deg * kRadPerDeg;
  const double xi = o.east / kArcsecPerRad, eta = o.north / kArcsecPerRad;
  const double cosd0 = std::cos(d0), sind0 = std::sin(d0);
  const double den = cosd0 - eta * sind0;
  const double da = std::atan2(xi, den);
  const double d = std::atan2(sind0 + eta * cosd0, std::hypot(xi, den));
  double ra = (a0 + da) / kRadPerDeg;
  ra = std::fmod(ra, 360.0);
  if (ra < 0) ra += 360.0;
  return {ra, d / kRadPerDeg};
}

double position_angle_deg(WorldCoord from, WorldCoord to) {
  const double d1 = from.dec_deg * kRadPerDeg, d2 = to.dec_deg * kRadPerDeg;
  const double da = (to.ra_deg - from.ra_deg) * kRadPerDeg;
  const double y = std::sin(da) * std::cos(d2);
  const double x = std::cos(d1) * std::sin(d2) - std::sin(d1) * std::cos(d2) * std::cos(da);
  return wrap_pa_deg(std::atan2(y, x) / kRadPerDeg);
}

double separation_arcsec(WorldCoord a, WorldCoord b) {
  const double d1 = a.dec_deg * kRadPerDeg, d2 = b.dec_deg * kRadPerDeg;
  const double da = (b.ra_deg - a.ra_deg) * kRadPerDeg;
  const double num1 = std::cos(d2) * std::sin(da);
  const double num2 = std::cos(d1) * std::sin(d2) - std::sin(d1) * std::cos(d2) * std::cos(da);
  const double den = std::sin(d1) * std::sin(d2) + std::cos(d1) * std::cos(d2) * std::cos(da);
  return std::atan2(std::hypot(num1, num2), den) * kArcsecPerRad;
}

}  // namespace fulcrum
