// Standard coordinates of pixel centres for TAN and SIN maps as rotations of
// the native direction (zenithal_offsets.hpp).
#include "fulcrum/sky/zenithal_offsets.hpp"

#include <algorithm>
#include <cmath>

#include "fulcrum/sky/angle.hpp"

namespace fulcrum {

std::optional<ZenithalOffsets> ZenithalOffsets::make(const CelestialWcs& wcs, const OffsetFrame& frame,
                                                     int nx, int ny) {
  if (nx <= 0 || ny <= 0) return std::nullopt;
  const std::optional<ZenithalChain> chain = wcs.zenithal_chain();
  if (!chain) return std::nullopt;
  ZenithalOffsets z;
  z.chain_ = *chain;
  const double a0 = frame.reference().ra_deg * kRadPerDeg, d0 = frame.reference().dec_deg * kRadPerDeg;
  const double basis[3][3] = {{std::cos(d0) * std::cos(a0), std::cos(d0) * std::sin(a0), std::sin(d0)},
                              {-std::sin(a0), std::cos(a0), 0.0},
                              {-std::sin(d0) * std::cos(a0), -std::sin(d0) * std::sin(a0), std::cos(d0)}};
  for (int i = 0; i < 3; ++i)
    for (int j = 0; j < 3; ++j) {
      double v = 0.0;
      for (int k = 0; k < 3; ++k) v += basis[i][k] * chain->rotation[k][j];
      z.m_[i][j] = v;
    }
  // The same numbers as wcslib's path at the corners and the middle, or not used.
  const double xs[5] = {0.0, nx - 1.0, 0.0, nx - 1.0, 0.5 * (nx - 1)};
  const double ys[5] = {0.0, 0.0, ny - 1.0, ny - 1.0, 0.5 * (ny - 1)};
  for (int k = 0; k < 5; ++k) {
    SkyOffset fast;
    if (!z.at(xs[k], ys[k], fast)) return std::nullopt;
    try {
      const SkyOffset ref = frame.to_offset(wcs.pixel_to_world({xs[k], ys[k]}));
      const double tol = 1e-9 + 1e-12 * std::hypot(ref.east, ref.north);
      if (!(std::abs(fast.east - ref.east) <= tol && std::abs(fast.north - ref.north) <= tol))
        return std::nullopt;
    } catch (const std::exception&) {
      return std::nullopt;
    }
  }
  return z;
}

bool ZenithalOffsets::at(double x, double y, SkyOffset& out) const {
  const ZenithalChain& c = chain_;
  const double dx = x - c.crpix[0], dy = y - c.crpix[1];
  const double ix = c.linear[0][0] * dx + c.linear[0][1] * dy;
  const double iy = c.linear[1][0] * dx + c.linear[1][1] * dy;
  double n0, n1, n2;
  if (c.sine) {
    const double u = -iy / c.r0, w = ix / c.r0, z2 = 1.0 - u * u - w * w;
    if (!(z2 >= 0.0)) return false;
    n0 = u;
    n1 = w;
    n2 = std::sqrt(z2);
  } else {
    n0 = -iy;  // unnormalised: the ratios below do not need |n|
    n1 = ix;
    n2 = c.r0;
  }
  const double v0 = m_[0][0] * n0 + m_[0][1] * n1 + m_[0][2] * n2;
  const double v1 = m_[1][0] * n0 + m_[1][1] * n1 + m_[1][2] * n2;
  const double v2 = m_[2][0] * n0 + m_[2][1] * n1 + m_[2][2] * n2;
  out = {v1 / v0 * kArcsecPerRad, v2 / v0 * kArcsecPerRad};
  return true;
}

bool ZenithalOffsets::rows(int nx, int y0, int y1, double* east, double* north) const {
  std::size_t i = 0;
  for (int y = y0; y < y1; ++y)
    for (int x = 0; x < nx; ++x, ++i) {
      SkyOffset o;
      if (!at(x, y, o)) return false;
      east[i] = o.east;
      north[i] = o.north;
    }
  return true;
}

}  // namespace fulcrum
