// Numbers as text (core/number_text.hpp).
#include "fulcrum/core/number_text.hpp"

#include <charconv>
#include <cmath>
#include <cstdio>

namespace fulcrum {

namespace {
std::string non_finite(double v) {
  if (std::isnan(v)) return "nan";
  return v > 0 ? "inf" : "-inf";
}
}  // namespace

std::string shortest_text(double value) {
  if (!std::isfinite(value)) return non_finite(value);
  char buf[64];
  auto res = std::to_chars(buf, buf + sizeof buf, value);
  return std::string(buf, res.ptr);
}

std::string fixed_text(double value, int decimals) {
  if (!std::isfinite(value)) return non_finite(value);
  char buf[400];  // |value| < 1.8e308: at most 309 digits before the point
  std::snprintf(buf, sizeof buf, "%.*f", decimals, value);
  std::string s = buf;
  if (s[0] == '-' && s.find_first_not_of("-0.") == std::string::npos) s = s.substr(1);
  return s;
}

std::string significant_text(double value, int digits) {
  if (!std::isfinite(value)) return non_finite(value);
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.*g", digits, value);
  return buf;
}

std::string probability_text(double p, int decimals) {
  if (!std::isfinite(p)) return fixed_text(p, decimals);
  const double step = std::pow(10.0, -decimals);
  if (p > 1.0 - 0.5 * step) return "> " + fixed_text(1.0 - step, decimals);
  if (p < 0.5 * step) return "< " + fixed_text(step, decimals);
  return fixed_text(p, decimals);
}

}  // namespace fulcrum
