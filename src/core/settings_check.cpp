// Checks of user settings (core/settings_check.hpp).
#include "fulcrum/core/settings_check.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>

#include "fulcrum/core/number_text.hpp"

namespace fulcrum {

std::string setting_ref(std::string_view setting) { return "`" + std::string(setting) + "`"; }

namespace {

std::string problem_text(const std::string& name, const std::string& value, const std::string& rule) {
  return name + " = " + value + " is not allowed: must be " + rule;
}

std::string with_unit(std::string text, std::string_view unit) {
  if (!unit.empty()) text += " " + std::string(unit);
  return text;
}

}  // namespace

SettingError::SettingError(std::string setting, std::string value, std::string rule)
    : InputError("", problem_text(setting, value, rule)),
      setting_(std::move(setting)),
      value_(std::move(value)),
      rule_(std::move(rule)) {}

std::string SettingError::message_as(const std::string& display_name) const {
  return problem_text(display_name, value_, rule_);
}

std::string setting_value_text(double value) { return shortest_text(value); }

double check_finite_in_range(std::string_view setting, double value, double lo, double hi,
                             std::string_view unit) {
  if (!(std::isfinite(value) && value >= lo && value <= hi))
    throw SettingError(std::string(setting), shortest_text(value),
                       with_unit("a finite number within [" + shortest_text(lo) + ", " + shortest_text(hi) + "]",
                                 unit));
  return value;
}

double check_positive(std::string_view setting, double value, std::string_view unit) {
  if (!(std::isfinite(value) && value > 0.0))
    throw SettingError(std::string(setting), shortest_text(value), with_unit("a finite number > 0", unit));
  return value;
}

double check_non_negative(std::string_view setting, double value, std::string_view unit) {
  if (!(std::isfinite(value) && value >= 0.0))
    throw SettingError(std::string(setting), shortest_text(value), with_unit("a finite number >= 0", unit));
  return value;
}

double check_position_angle_deg(std::string_view setting, double value) {
  if (!(std::isfinite(value) && value >= -720.0 && value <= 720.0))
    throw SettingError(std::string(setting), shortest_text(value),
                       "a finite angle in degrees within [-720, 720]");
  double w = std::fmod(value, 360.0);
  if (w < 0.0) w += 360.0;
  return w >= 360.0 ? 0.0 : w;
}

std::int64_t check_integer_in_range(std::string_view setting, std::int64_t value, std::int64_t lo,
                                    std::int64_t hi, std::string_view unit) {
  if (value < lo || value > hi)
    throw SettingError(std::string(setting), std::to_string(value),
                       with_unit("a whole number within [" + std::to_string(lo) + ", " + std::to_string(hi) + "]",
                                 unit));
  return value;
}

std::uint64_t check_seed(std::string_view setting, std::int64_t value) {
  constexpr std::int64_t kMax = (std::int64_t{1} << 53) - 1;
  if (value < 0 || value > kMax)
    throw SettingError(std::string(setting), std::to_string(value),
                       "a whole number within [0, " + std::to_string(kMax) + "]");
  return static_cast<std::uint64_t>(value);
}

const std::string& check_plain_name(std::string_view setting, const std::string& value) {
  const bool plain = !value.empty() && value.size() <= 128 && std::all_of(value.begin(), value.end(), [](char ch) {
    return std::isalnum(static_cast<unsigned char>(ch)) || ch == '_' || ch == '-' || ch == '.' || ch == ',';
  });
  if (!plain)
    throw SettingError(std::string(setting), "'" + value + "'",
                       "1 to 128 letters, digits and the characters _ - . , (no spaces)");
  return value;
}

const std::string& check_one_of(std::string_view setting, const std::string& value,
                                const std::vector<std::string>& allowed) {
  for (const auto& a : allowed)
    if (a == value) return value;
  std::string list;
  for (std::size_t i = 0; i < allowed.size(); ++i)
    list += (i == 0 ? "" : i + 1 == allowed.size() ? " or " : ", ") + allowed[i];
  throw SettingError(std::string(setting), "'" + value + "'", list);
}

}  // namespace fulcrum
