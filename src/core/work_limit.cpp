// Work and memory limits checked before a command starts (core/work_limit.hpp).
#include "fulcrum/core/work_limit.hpp"

#include <cmath>
#include <cstdio>

#include "fulcrum/core/settings_check.hpp"

namespace fulcrum {

std::string estimate_text(double value) {
  if (std::isfinite(value) && value >= 0.0 && value <= 1e6 && value == std::floor(value))
    return std::to_string(static_cast<long long>(value));
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.2g", value);
  return buf;
}

void check_work_limit(std::string_view setting, const std::string& value_text, std::string_view what,
                      double estimate, double limit, std::string_view unit, const std::string& detail) {
  if (std::isfinite(estimate) && estimate <= limit) return;
  std::string rule = "within the limit of " + estimate_text(limit) + " " + std::string(unit) + " for " +
                     std::string(what) + "; this asks for ";
  rule += detail.empty() ? estimate_text(estimate) + " " + std::string(unit)
                         : detail + " = " + estimate_text(estimate) + " " + std::string(unit);
  throw SettingError(std::string(setting), value_text, rule);
}

}  // namespace fulcrum
