// Base64 (report/base64.hpp) against the test vectors of RFC 4648, section 10.
#include <catch2/catch.hpp>

#include "fulcrum/report/base64.hpp"

using fulcrum::report::base64;

TEST_CASE("base64 gives the RFC 4648 test vectors", "[report]") {
  CHECK(base64("") == "");
  CHECK(base64("f") == "Zg==");
  CHECK(base64("fo") == "Zm8=");
  CHECK(base64("foo") == "Zm9v");
  CHECK(base64("foob") == "Zm9vYg==");
  CHECK(base64("fooba") == "Zm9vYmE=");
  CHECK(base64("foobar") == "Zm9vYmFy");
  CHECK(base64(std::string("\xff\x00\xfe", 3)) == "/wD+");  // bytes above 127 and a zero byte
}
