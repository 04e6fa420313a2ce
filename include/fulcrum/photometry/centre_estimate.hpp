// What one centre estimator returns in pixel space, before it is put on the
// sky: a 0-based pixel position, or a failure with its reason, plus the
// estimator's own covariance (pixel^2) when it has one, and details (its
// fitted parameters, iterations) for the report.
#pragma once

#include <Eigen/Dense>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>

#include "fulcrum/io/wcs.hpp"

namespace fulcrum::photometry {

struct PixelEstimate {
  bool ok = false;
  std::string reason;                        // when !ok
  PixelCoord centre;                         // 0-based pixel
  std::optional<Eigen::Matrix2d> cov_pixels;  // (x, y) covariance, pixel^2
  nlohmann::json details = nlohmann::json::object();

  static PixelEstimate failure(std::string why) {
    PixelEstimate e;
    e.reason = std::move(why);
    return e;
  }
};

}  // namespace fulcrum::photometry
