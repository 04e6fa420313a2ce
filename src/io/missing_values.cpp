// Missing pixels as real data products mark them (missing_values.hpp).
#include "fulcrum/io/missing_values.hpp"

#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <limits>

#include "fulcrum/core/log.hpp"

namespace fulcrum {

namespace {

std::optional<double> card_number(const std::string& header, const std::string& key) {
  auto v = header_value(header, key);
  if (!v) return std::nullopt;
  char* end = nullptr;
  const double x = std::strtod(v->c_str(), &end);
  if (end == v->c_str() || !std::isfinite(x)) return std::nullopt;
  return x;
}

std::string count_text(std::size_t n, const char* what) {
  return std::to_string(n) + " " + what;
}

}  // namespace

MissingValueCounts mark_missing_values(std::vector<double>& data, const std::string& header,
                                       int bitpix) {
  MissingValueCounts c;
  if (bitpix < 0) {
    if (auto blank = card_number(header, "BLANK")) {
      const double bscale = card_number(header, "BSCALE").value_or(1.0);
      const double bzero = card_number(header, "BZERO").value_or(0.0);
      c.blank_value = bzero + bscale * *blank;
    }
  }
  constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
  for (double& v : data) {
    if (std::isnan(v)) {
      ++c.not_a_number;
    } else if (std::isinf(v)) {
      ++c.infinite;
      v = kNaN;
    } else if (c.blank_value && v == *c.blank_value) {  // exact, by design
      ++c.blank;
      v = kNaN;
    } else if (std::abs(v) >= kAbsurdValue) {
      ++c.absurd;
      v = kNaN;
    }
  }
  return c;
}

void warn_missing_values(const MissingValueCounts& c, const std::string& name) {
  std::string text;
  auto add = [&](const std::string& part) { text += (text.empty() ? "" : "; ") + part; };
  if (c.blank > 0) {
    char v[64];
    std::snprintf(v, sizeof v, "%.9g", *c.blank_value);
    add(count_text(c.blank, "pixels") + " equal to BLANK = " + v +
        " taken as missing (FITS defines BLANK for integer images only; honoured on this "
        "floating-point image as its writer meant)");
  }
  if (c.infinite > 0) add(count_text(c.infinite, "infinite pixels taken as missing"));
  if (c.absurd > 0) add(count_text(c.absurd, "pixels with |value| >= 1e30 taken as missing"));
  if (!text.empty()) warn(name + ": " + text);
}

}  // namespace fulcrum
