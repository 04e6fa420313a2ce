// SHA-256 message digest (FIPS PUB 180-4, "Secure Hash Standard", NIST 2015,
// section 6.2), for the provenance block of every report: each input file is
// recorded with its path and the lowercase hexadecimal digest of its bytes.
#pragma once

#include <array>
#include <cstddef>
#include <cstdint>
#include <string>
#include <string_view>

namespace fulcrum::report {

class Sha256 {
 public:
  Sha256();
  void update(const void* data, std::size_t size);
  void update(std::string_view s) { update(s.data(), s.size()); }
  // Finish and return the 32-byte digest; the object must not be updated after.
  std::array<std::uint8_t, 32> digest();
  std::string hex_digest();

 private:
  void block(const std::uint8_t* p);
  std::array<std::uint32_t, 8> h_;
  std::array<std::uint8_t, 64> buf_{};
  std::size_t buf_len_ = 0;
  std::uint64_t total_ = 0;
};

std::string sha256_hex(std::string_view data);
// Digest of a file's bytes; throws InputError naming the file if unreadable.
std::string sha256_file(const std::string& path);

}  // namespace fulcrum::report
