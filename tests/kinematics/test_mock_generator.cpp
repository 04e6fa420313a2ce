// The independent mock generator used by the coverage checks
// (tests/python/mockgen.py) checks itself against the FITS WCS standard
// (astropy.wcs), the derived noise correlation, the tilted-ring formula and
// the symmetry of its null galaxy (tests/python/check_mockgen.py).
#include <catch2/catch.hpp>

#include "../support/test_support.hpp"

TEST_CASE("independent mock generator checks itself", "[python][mockgen]") {
  const auto dir = fulcrum::test::temp_dir("mockgen");
  const auto r = fulcrum::test::run_python("check_mockgen.py", dir.string());
  INFO(r.out << r.err);
  CHECK(r.exit_code == 0);
  WARN(r.out);
}
