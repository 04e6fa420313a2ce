// Checks of user settings, shared by every way a setting can arrive (the
// command line, a TOML manifest, a mock configuration).
//
// Each checker takes the setting's name as the manifest spells it
// (`tail_pa_deg`, `draws`, `rms`), the value, and the allowed range; it
// returns the value (possibly normalised, e.g. an angle wrapped into
// [0, 360)) or throws SettingError. The message names the setting, shows the
// bad value and says what is allowed:
//
//   tail_pa_deg = 1e+300 is not allowed: must be a finite angle in degrees within [-720, 720]
//
// Callers that know more add it: a manifest prefixes the file and line, the
// command line prints the flag instead of the setting name (setting_flag()
// in src/cli). Library code never names command-line flags.
//
// A message that points the user to a setting (a hint, not a refusal of its
// value) names it with setting_ref(): `name` in backquotes. The command line
// shows such names as its flags (cli::with_flags), a manifest user reads the
// key itself.
//
// Units are the caller's: the checkers only compare numbers. Values are
// printed with the shortest text that reads back to the same double.
#pragma once

#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

#include "fulcrum/core/error.hpp"

namespace fulcrum {

// A setting outside its allowed range: an InputError (no file) whose problem
// is "<setting> = <value> is not allowed: must be <rule>".
// "`setting`": a setting named in a message (see above).
std::string setting_ref(std::string_view setting);

class SettingError : public InputError {
 public:
  SettingError(std::string setting, std::string value, std::string rule);
  const std::string& setting() const { return setting_; }
  const std::string& value() const { return value_; }
  const std::string& rule() const { return rule_; }
  // The same message with the setting called `display_name` (e.g. a flag).
  std::string message_as(const std::string& display_name) const;

 private:
  std::string setting_, value_, rule_;
};

// lo <= value <= hi and finite.
double check_finite_in_range(std::string_view setting, double value, double lo, double hi,
                             std::string_view unit = "");
// Finite and > 0.
double check_positive(std::string_view setting, double value, std::string_view unit = "");
// Finite and >= 0.
double check_non_negative(std::string_view setting, double value, std::string_view unit = "");
// An angle in degrees, finite and within [-720, 720] (a wider value is taken
// for a typing error, not a direction); returned wrapped into
// [0, 360) (a position angle, north through east).
double check_position_angle_deg(std::string_view setting, double value);
// A whole number lo <= value <= hi.
std::int64_t check_integer_in_range(std::string_view setting, std::int64_t value, std::int64_t lo,
                                    std::int64_t hi, std::string_view unit = "");
// A random seed: a whole number in [0, 2^53) (exact in JSON readers that use
// doubles); negative values are refused, never wrapped.
std::uint64_t check_seed(std::string_view setting, std::int64_t value);
// A name handed to another program as one word (a batch queue, an
// account): 1 to 128 characters, each a letter, digit, '_', '-', '.' or ','.
const std::string& check_plain_name(std::string_view setting, const std::string& value);
// One of the listed words.
const std::string& check_one_of(std::string_view setting, const std::string& value,
                                const std::vector<std::string>& allowed);

// The shortest text that reads back to the same double ("1e+300", "0.1").
std::string setting_value_text(double value);

}  // namespace fulcrum
