// A running sum with Neumaier's compensation (Neumaier 1974, Z. Angew. Math.
// Mech. 54, 39: the improved Kahan-Babuska summation): the rounding error
// of each addition is kept in a second term, so a sum of n terms is accurate
// to about one rounding of the result instead of n of them. The split's
// prefix sums run over up to 1e7 bins or pixels.
#pragma once

#include <cmath>

namespace fulcrum {

struct CompensatedSum {
  double sum = 0.0, comp = 0.0;
  void add(double v) {
    const double t = sum + v;
    if (std::abs(sum) >= std::abs(v))
      comp += (sum - t) + v;
    else
      comp += (v - t) + sum;
    sum = t;
  }
  double value() const { return sum + comp; }
};

}  // namespace fulcrum
