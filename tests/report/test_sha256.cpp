// SHA-256 against the FIPS 180-4 example digests and Python's hashlib.
#include <catch2/catch.hpp>

#include <fstream>
#include <random>

#include "fulcrum/core/error.hpp"
#include "fulcrum/report/sha256.hpp"
#include "../support/test_support.hpp"

using namespace fulcrum;
using namespace fulcrum::report;

TEST_CASE("SHA-256 of the FIPS 180-4 example messages", "[report]") {
  // Digests from the NIST example documents for SHA-256 ("abc" and the
  // 448-bit two-block message); the empty digest is the well-known value.
  CHECK(sha256_hex("abc") == "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
  CHECK(sha256_hex("abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq") ==
        "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1");
  CHECK(sha256_hex("") == "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855");
}

TEST_CASE("SHA-256 of files agrees with Python hashlib", "[report][python]") {
  auto dir = test::temp_dir("sha");
  std::mt19937 gen(3);
  std::string list;
  // Lengths around the 55/56/64-byte padding boundaries and a multi-block file.
  for (std::size_t n : {0u, 1u, 55u, 56u, 57u, 63u, 64u, 65u, 119u, 120u, 1000u, 100000u}) {
    std::string data(n, '\0');
    for (auto& ch : data) ch = static_cast<char>(gen() & 0xff);
    auto path = dir / ("f" + std::to_string(n) + ".bin");
    std::ofstream(path, std::ios::binary) << data;
    list += path.string() + " " + sha256_file(path.string()) + "\n";
  }
  std::ofstream(dir / "digests.txt") << list;
  auto r = test::run_python("check_sha256.py", (dir / "digests.txt").string());
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
  REQUIRE_THROWS_AS(sha256_file((dir / "missing.bin").string()), InputError);
}
