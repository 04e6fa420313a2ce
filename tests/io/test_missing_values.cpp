// Reading maps as delivered (io/missing_values.hpp, io/fits_image.hpp):
// BLANK on float images (a common-practice deviation from the FITS standard
// 4.0, which defines BLANK for integer data only, sect. 4.4.2.5), infinite
// and absurd (|v| >= 1e30) values, and gzip- and tile-compressed files. The
// files are written by astropy (tests/python/make_delivered_fits.py), an
// outside writer; the expected counts are the ones that script planted.
#include <catch2/catch.hpp>

#include <cmath>
#include <limits>
#include <sstream>

#include "../support/test_support.hpp"
#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/imaging/inspect.hpp"
#include "fulcrum/io/missing_values.hpp"

using namespace fulcrum;

TEST_CASE("missing values are counted by kind", "[io][missing]") {
  const double inf = std::numeric_limits<double>::infinity();
  std::vector<double> v = {1.0, -999.0, inf, -inf, 1e38, -2e30, std::nan(""), 9.99e29, -999.0};
  std::string header;
  auto card = [](const std::string& k, const std::string& val) {
    std::string c = k;
    c.resize(8, ' ');
    c += "= " + val;
    c.resize(80, ' ');
    return c;
  };
  header = card("BLANK", "-999");
  SECTION("float image: BLANK honoured, compared exactly") {
    auto c = mark_missing_values(v, header, -32);
    CHECK(c.blank == 2);
    CHECK(c.infinite == 2);
    CHECK(c.absurd == 2);         // 1e38 and -2e30; 9.99e29 is below the limit
    CHECK(c.not_a_number == 1);
    CHECK(v[0] == 1.0);
    CHECK(v[7] == 9.99e29);
    CHECK(std::isnan(v[1]));
  }
  SECTION("BSCALE/BZERO apply to the BLANK value") {
    header += card("BSCALE", "2.0") + card("BZERO", "1.0");
    std::vector<double> w = {-1997.0, -999.0};
    auto c = mark_missing_values(w, header, -64);
    CHECK(c.blank == 1);
    CHECK(std::isnan(w[0]));
    CHECK(w[1] == -999.0);
  }
  SECTION("integer images: CFITSIO's own BLANK handling, nothing more") {
    std::vector<double> w = {-999.0};
    auto c = mark_missing_values(w, header, 16);
    CHECK(c.blank == 0);
    CHECK(w[0] == -999.0);
  }
}

TEST_CASE("delivered maps: plain, gzip and tile-compressed read alike", "[io][missing][python]") {
  auto dir = test::temp_dir("delivered");
  const std::string stem = (dir / "map").string();
  auto r = test::run_python("make_delivered_fits.py", stem);
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  CHECK(r.out.find("blank 40 inf 4 absurd 3 nan 1") != std::string::npos);
  MissingValueCounts plain_counts;
  const Image plain = read_image_counted(stem + ".fits", plain_counts);
  CHECK(plain_counts.blank == 40);
  CHECK(plain_counts.infinite == 4);
  CHECK(plain_counts.absurd == 3);
  CHECK(plain_counts.not_a_number == 1);
  CHECK(plain.finite_count() == 20 * 16 - 48);
  // value(x, y) = 1000 + 3 x - 2 y at a pixel the script left alone.
  CHECK(plain.at(5, 10) == 1000.0 + 15.0 - 20.0);
  for (const std::string& other : {stem + ".fits.gz", stem + ".fz"}) {
    INFO(other);
    MissingValueCounts c;
    const Image img = read_image_counted(other, c);
    REQUIRE(img.nx == plain.nx);
    REQUIRE(img.ny == plain.ny);
    CHECK(c.total() == plain_counts.total());
    REQUIRE(img.beam);
    CHECK(img.unit == "km/s");
    bool same = true;
    for (std::size_t i = 0; i < img.size(); ++i)
      same = same && (img.data[i] == plain.data[i] ||
                      (std::isnan(img.data[i]) && std::isnan(plain.data[i])));
    CHECK(same);
  }
  // `inspect` reports the counts.
  const auto info = inspect_fits(stem + ".fits.gz");
  CHECK(info["missing"]["blank_pixels"] == 40);
  CHECK(info["missing"]["blank_value"] == -999.0);
  CHECK(info["missing"]["infinite"] == 4);
  CHECK(info["missing"]["absurd_ge_1e30"] == 3);
}

TEST_CASE("the CLI accepts compressed files and warns about BLANK on floats",
          "[io][missing][python][cli]") {
  auto dir = test::temp_dir("delivered_cli");
  const std::string stem = (dir / "map").string();
  REQUIRE(test::run_python("make_delivered_fits.py", stem).exit_code == 0);
  for (const std::string& f : {stem + ".fits.gz", stem + ".fz"}) {
    auto res = test::run_fulcrum("inspect " + f);
    INFO(res.out << res.err);
    CHECK(res.exit_code == 0);
    CHECK(res.err.find("40 pixels equal to BLANK = -999") != std::string::npos);
    CHECK(res.out.find("missing pixels") != std::string::npos);
  }
}
