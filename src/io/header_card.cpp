// FITS header cards as text (see include/fulcrum/io/header_card.hpp).
#include "fulcrum/io/header_card.hpp"

#include <cstdio>

namespace fulcrum {

std::string header_card(const std::string& key, const std::string& value, bool quote,
                        const std::string& comment) {
  char k[9];
  std::snprintf(k, sizeof k, "%-8.8s", key.c_str());
  std::string s = std::string(k) + "= ";
  if (quote) {
    std::string v;
    for (char c : value) v += c == '\'' ? std::string("''") : std::string(1, c);
    if (v.size() < 8) v.resize(8, ' ');
    s += "'" + v + "'";
  } else {
    char buf[32];
    std::snprintf(buf, sizeof buf, "%20s", value.c_str());
    s += value.size() > 20 ? value : std::string(buf);
  }
  if (!comment.empty()) s += " / " + comment;
  s.resize(80, ' ');
  return s;
}

std::string header_number(double v) {
  char b[40];
  std::snprintf(b, sizeof b, "%.17G", v);
  return b;
}

}  // namespace fulcrum
