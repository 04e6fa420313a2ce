// Per-pixel sky offsets and the local Jacobian of a pixel grid.
#include "fulcrum/sky/pixel_offsets.hpp"

#include <Eigen/LU>
#include <algorithm>
#include <cmath>

#include "fulcrum/sky/angle.hpp"
#include "fulcrum/sky/zenithal_offsets.hpp"
#include "fulcrum/core/error.hpp"

namespace fulcrum {

Eigen::Matrix2d local_jacobian(const CelestialWcs& wcs, const OffsetFrame& frame, PixelCoord p) {
  const double h = 0.5;
  auto off = [&](double dx, double dy) { return frame.to_offset(wcs.pixel_to_world({p.x + dx, p.y + dy})); };
  SkyOffset xp = off(h, 0), xm = off(-h, 0), yp = off(0, h), ym = off(0, -h);
  Eigen::Matrix2d J;
  J(0, 0) = (xp.east - xm.east) / (2 * h);
  J(1, 0) = (xp.north - xm.north) / (2 * h);
  J(0, 1) = (yp.east - ym.east) / (2 * h);
  J(1, 1) = (yp.north - ym.north) / (2 * h);
  return J;
}

void grid_row_offsets(const CelestialWcs& wcs, const OffsetFrame& frame, int nx, int ny, int y0,
                      int y1, double* east, double* north) {
  FULCRUM_CHECK(nx > 0 && 0 <= y0 && y0 <= y1 && y1 <= ny, "rows inside the grid", y1);
  const std::size_t first = static_cast<std::size_t>(nx) * static_cast<std::size_t>(y0);
  const std::size_t n = static_cast<std::size_t>(nx) * static_cast<std::size_t>(y1 - y0);
  // The world positions of the pixel centres: kept by the WCS when a caller
  // asked for it (CelestialWcs::keep_grid_world: the same numbers), else
  // through wcslib now, a chunk at a time.
  // TAN and SIN maps: the offsets as rotations, without trigonometry
  // (zenithal_offsets.hpp; the same numbers to round-off).
  if (const auto fast = ZenithalOffsets::make(wcs, frame, nx, ny); fast && fast->rows(nx, y0, y1, east, north))
    return;
  const std::shared_ptr<const std::vector<WorldCoord>> kept = wcs.kept_grid_world(nx, ny);
  if (kept) {
    for (std::size_t i = 0; i < n; ++i) {
      const SkyOffset o = frame.to_offset((*kept)[first + i]);
      east[i] = o.east;
      north[i] = o.north;
    }
    return;
  }
  constexpr std::size_t kChunk = 4096;
  std::vector<double> xs(std::min(n, kChunk)), ys(xs.size());
  std::vector<WorldCoord> world(xs.size());
  for (std::size_t start = 0; start < n; start += kChunk) {
    const std::size_t m = std::min(kChunk, n - start);
    for (std::size_t i = 0; i < m; ++i) {
      const std::size_t k = first + start + i;
      xs[i] = static_cast<double>(k % static_cast<std::size_t>(nx));
      ys[i] = static_cast<double>(k / static_cast<std::size_t>(nx));
    }
    wcs.pixels_to_world(xs.data(), ys.data(), m, world.data());
    for (std::size_t i = 0; i < m; ++i) {
      const SkyOffset o = frame.to_offset(world[i]);
      east[start + i] = o.east;
      north[start + i] = o.north;
    }
  }
}

PixelOffsets::PixelOffsets(int nx, int ny, const CelestialWcs& wcs, WorldCoord reference, Holds holds)
    : nx_(nx), ny_(ny), frame_(reference) {
  FULCRUM_CHECK(nx > 0 && ny > 0, "positive grid size", nx * ny);
  if (holds == Holds::every_pixel) {
    const std::size_t n = static_cast<std::size_t>(nx) * static_cast<std::size_t>(ny);
    east_.resize(n);
    north_.resize(n);
    grid_row_offsets(wcs, frame_, nx, ny, 0, ny, east_.data(), north_.data());
  }
  cx_ = 0.5 * (nx - 1);
  cy_ = 0.5 * (ny - 1);
  jac_ = local_jacobian(wcs, frame_, {cx_, cy_});
  if (!(std::abs(jac_.determinant()) > 0.0) || !jac_.allFinite())
    throw InputError(wcs.source(), "the pixel grid has a degenerate sky transformation (zero "
                                   "pixel area)");
  centre_offset_ = frame_.to_offset(wcs.pixel_to_world({cx_, cy_}));
  const double norm = jac_.norm();
  for (auto [px, py] : {std::pair{0.0, 0.0}, {nx - 1.0, 0.0}, {0.0, ny - 1.0}, {nx - 1.0, ny - 1.0}}) {
    Eigen::Matrix2d Jc = local_jacobian(wcs, frame_, {px, py});
    jac_variation_ = std::max(jac_variation_, (Jc - jac_).norm() / norm);
  }
}

PixelCoord PixelOffsets::offset_to_pixel_linear(SkyOffset o) const {
  Eigen::Vector2d d = jac_.inverse() * Eigen::Vector2d(o.east - centre_offset_.east,
                                                       o.north - centre_offset_.north);
  return {cx_ + d(0), cy_ + d(1)};
}

GridOrientation grid_orientation(const CelestialWcs& wcs, PixelCoord at) {
  OffsetFrame frame(wcs.pixel_to_world(at));
  Eigen::Matrix2d J = local_jacobian(wcs, frame, at);
  GridOrientation g;
  SkyOffset cx{J(0, 0), J(1, 0)}, cy{J(0, 1), J(1, 1)};
  g.pa_of_plus_x_deg = cx.pa_deg();
  g.north_pa_of_plus_y_deg = cy.pa_deg();
  g.east_left_when_north_up = J.determinant() < 0;
  g.pixel_scale_x_arcsec = cx.norm();
  g.pixel_scale_y_arcsec = cy.norm();
  const double cosang = (cx.east * cy.east + cx.north * cy.north) / (cx.norm() * cy.norm());
  g.skew_deg = Angle::from_radians(std::acos(std::clamp(cosang, -1.0, 1.0))).deg() - 90.0;
  return g;
}

}  // namespace fulcrum
