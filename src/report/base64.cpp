// Base64 (RFC 4648, section 4), see the header.
#include "fulcrum/report/base64.hpp"

#include <cstdint>

namespace fulcrum::report {

std::string base64(const std::string& bytes) {
  static const char* tab = "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";
  auto at = [&](std::size_t i) { return static_cast<std::uint32_t>(static_cast<unsigned char>(bytes[i])); };
  std::string out;
  out.reserve((bytes.size() + 2) / 3 * 4);
  std::size_t i = 0;
  for (; i + 2 < bytes.size(); i += 3) {
    const std::uint32_t v = (at(i) << 16) | (at(i + 1) << 8) | at(i + 2);
    out += tab[v >> 18], out += tab[(v >> 12) & 63], out += tab[(v >> 6) & 63], out += tab[v & 63];
  }
  if (i + 1 == bytes.size()) {
    const std::uint32_t v = at(i) << 16;
    out += tab[v >> 18], out += tab[(v >> 12) & 63], out += "==";
  } else if (i + 2 == bytes.size()) {
    const std::uint32_t v = (at(i) << 16) | (at(i + 1) << 8);
    out += tab[v >> 18], out += tab[(v >> 12) & 63], out += tab[(v >> 6) & 63], out += '=';
  }
  return out;
}

}  // namespace fulcrum::report
