// The Wilson score interval of a binomial proportion (see the header).
#include "fulcrum/core/binomial_interval.hpp"

#include <algorithm>
#include <cmath>

namespace fulcrum {

ProportionInterval wilson_interval(std::size_t k, std::size_t n, double z) {
  if (n == 0) return {};
  const double kk = static_cast<double>(std::min(k, n)), nn = static_cast<double>(n), z2 = z * z;
  const double centre = (kk + 0.5 * z2) / (nn + z2);
  const double half = z / (nn + z2) * std::sqrt(kk * (nn - kk) / nn + 0.25 * z2);
  // At k = 0 (k = n) the bound is 0 (1) exactly; clamp the round-off.
  return {kk == 0.0 ? 0.0 : std::max(0.0, centre - half), kk == nn ? 1.0 : std::min(1.0, centre + half)};
}

}  // namespace fulcrum
