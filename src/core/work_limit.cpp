// Work and memory limits checked before a command starts (core/work_limit.hpp).
#include "fulcrum/core/work_limit.hpp"

#include <cmath>
#include <cstdio>
#include <cstdlib>

#include "fulcrum/core/settings_check.hpp"

namespace fulcrum {

std::string estimate_text(double value) {
  if (std::isfinite(value) && value >= 0.0 && value <= 1e6 && value == std::floor(value))
    return std::to_string(static_cast<long long>(value));
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.2g", value);
  return buf;
}

namespace {
double g_scale = 0.0;  // 0: not yet decided
}  // namespace

void set_work_limit_scale(double factor) {
  if (!std::isfinite(factor) || factor < 1.0 || factor > 1e6)
    throw SettingError("limit_scale", setting_value_text(factor), "a number within [1, 1e6]");
  g_scale = factor;
}

double work_limit_scale() {
  if (g_scale == 0.0) {
    g_scale = 1.0;
    if (const char* env = std::getenv("FULCRUM_LIMIT_SCALE")) {
      char* end = nullptr;
      const double v = std::strtod(env, &end);
      if (end == env || *end != '\0' || !std::isfinite(v) || v < 1.0 || v > 1e6)
        throw InputError("", std::string("FULCRUM_LIMIT_SCALE = '") + env + "' is not allowed: must be a number within [1, 1e6]");
      g_scale = v;
    }
  }
  return g_scale;
}

void check_work_limit(std::string_view setting, const std::string& value_text, std::string_view what,
                      double estimate, double limit, std::string_view unit, const std::string& detail) {
  limit *= work_limit_scale();
  if (std::isfinite(estimate) && estimate <= limit) return;
  std::string rule = "within the limit of " + estimate_text(limit) + " " + std::string(unit) + " for " +
                     std::string(what) + "; this asks for ";
  rule += detail.empty() ? estimate_text(estimate) + " " + std::string(unit)
                         : detail + " = " + estimate_text(estimate) + " " + std::string(unit);
  rule += " (" + setting_ref("limit_scale") + " raises the limit)";
  throw SettingError(std::string(setting), value_text, rule);
}

std::string count_limit_rule(std::int64_t value, std::int64_t lo, double limit, std::string_view what,
                             std::string_view unit, std::int64_t type_max) {
  const double scaled = limit * work_limit_scale();
  const bool capped = !(scaled < static_cast<double>(type_max));
  const std::int64_t hi = capped ? type_max : static_cast<std::int64_t>(scaled);
  if (value < lo || (capped && value > hi))
    return "a whole number within [" + std::to_string(lo) + ", " + std::to_string(hi) + "]" +
           (unit.empty() ? "" : " " + std::string(unit));
  if (value <= hi) return "";
  return "within the limit of " + estimate_text(static_cast<double>(hi)) + " " + std::string(unit) + " for " +
         std::string(what) + "; this asks for " + estimate_text(static_cast<double>(value)) + " " +
         std::string(unit) + " (" + setting_ref("limit_scale") + " raises the limit)";
}

std::int64_t check_count_limit(std::string_view setting, std::int64_t value, std::int64_t lo, double limit,
                               std::string_view what, std::string_view unit, std::int64_t type_max) {
  const std::string rule = count_limit_rule(value, lo, limit, what, unit, type_max);
  if (!rule.empty()) throw SettingError(std::string(setting), std::to_string(value), rule);
  return value;
}

}  // namespace fulcrum
