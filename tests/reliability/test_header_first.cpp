// A large image with a bad WCS is refused from its header, before its pixels
// are read: `inspect` on a 14000 x 14000 float image (784 MB of data, a
// sparse file here) whose CD matrix is singular once read 1.7 GB for 50 s
// before refusing. Run under a 1 GB address-space limit (`ulimit -v`), which
// reading the pixels as doubles (1.57 GB) cannot fit in: the refusal must be
// the WCS line, not an out-of-memory message. Header cards: FITS 4.0
// section 4 (80-character cards, 2880-byte blocks).
#include <catch2/catch.hpp>

#include <fstream>

#include "../support/test_support.hpp"

namespace fs = std::filesystem;

namespace {
std::string card(const std::string& key, const std::string& value) {
  std::string c = key;
  c.resize(8, ' ');
  c += "= " + std::string(20 - std::min<std::size_t>(20, value.size()), ' ') + value;
  c.resize(80, ' ');
  return c;
}
}  // namespace

TEST_CASE("a 14000 x 14000 image with a singular WCS is refused before its pixels are read",
          "[reliability][fits]") {
  const auto dir = fulcrum::test::temp_dir("header-first");
  const fs::path file = dir / "big_bad_wcs.fits";
  std::string h;
  for (const auto& [k, v] : std::vector<std::pair<std::string, std::string>>{
           {"SIMPLE", "T"}, {"BITPIX", "-32"}, {"NAXIS", "2"}, {"NAXIS1", "14000"}, {"NAXIS2", "14000"},
           {"CTYPE1", "'RA---SIN'"}, {"CTYPE2", "'DEC--SIN'"}, {"CRVAL1", "150.0"}, {"CRVAL2", "20.0"},
           {"CRPIX1", "7000.0"}, {"CRPIX2", "7000.0"}, {"CD1_1", "-1.0E-4"}, {"CD1_2", "2.0E-4"},
           {"CD2_1", "1.0E-4"}, {"CD2_2", "-2.0E-4"}})  // det = 0
    h += card(k, v);
  h += std::string("END").append(77, ' ');
  h.resize(2880, ' ');
  { std::ofstream(file, std::ios::binary) << h; }
  const std::uintmax_t data = 14000ull * 14000ull * 4ull;
  fs::resize_file(file, 2880 + (data + 2879) / 2880 * 2880);  // sparse: no disk used
  const auto r = fulcrum::test::run_shell("ulimit -v 1000000; " + std::string(FULCRUM_BINARY) + " inspect " +
                                          file.string());
  INFO(r.err);
  CHECK(r.exit_code == 2);
  CHECK(r.err.find("big_bad_wcs.fits: the CD matrix of the celestial axes is singular") != std::string::npos);
  fs::remove(file);
}
