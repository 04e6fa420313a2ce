// A confidence interval for a binomial proportion k/n: the Wilson score
// interval (Wilson 1927, J. Am. Stat. Assoc. 22, 209).
//
// Used wherever a rate from a finite number of mocks is stated (e.g. "called
// robust in 0 of 40 matched mocks"): unlike k/n +- sqrt(p(1-p)/n), it does
// not collapse to zero width at k = 0 or k = n (0 of 40 gives 0 to 8.8% at
// 95%), and it stays inside [0, 1].
//
//   centre = (k + z^2/2) / (n + z^2),
//   half   = z / (n + z^2) * sqrt(k (n - k) / n + z^2 / 4),
//
// with z the two-sided normal quantile (1.959964 for 95%). n = 0 gives the
// uninformative [0, 1].
#pragma once

#include <cstddef>

namespace fulcrum {

struct ProportionInterval {
  double lo = 0.0, hi = 1.0;
};

ProportionInterval wilson_interval(std::size_t k, std::size_t n, double z = 1.959963984540054);

}  // namespace fulcrum
