// The Wilson score interval (core/binomial_interval.hpp) against
// scipy.stats.binomtest(k, n).proportion_ci(confidence_level=0.95,
// method="wilson") (scipy 1.10.1, Debian 12's python3-scipy), values
// computed once and written here.
#include <catch2/catch.hpp>

#include "fulcrum/core/binomial_interval.hpp"

using namespace fulcrum;

TEST_CASE("Wilson interval matches scipy's binomtest proportion_ci", "[core][statistics]") {
  struct Case {
    std::size_t k, n;
    double lo, hi;
  };
  const Case cases[] = {{0, 40, 0.0, 0.08762160119728662},
                        {2, 40, 0.013820667386148358, 0.16503877369140962},
                        {40, 40, 0.9123783988027133, 1.0},
                        {7, 100, 0.03431926106727269, 0.13749514739073504},
                        {1, 3, 0.06149194472039626, 0.7923403991979523}};
  for (const auto& c : cases) {
    const auto ci = wilson_interval(c.k, c.n);
    INFO("k = " << c.k << ", n = " << c.n);
    CHECK(ci.lo == Approx(c.lo).margin(1e-12));
    CHECK(ci.hi == Approx(c.hi).margin(1e-12));
  }
}

TEST_CASE("Wilson interval of no trials is the whole of 0 to 1", "[core][statistics]") {
  const auto ci = wilson_interval(0, 0);
  CHECK(ci.lo == 0.0);
  CHECK(ci.hi == 1.0);
}
