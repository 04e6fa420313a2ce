// Work and memory limits checked before a command starts.
//
// A setting that would ask for an impossible amount of work (a scan grid of
// 1e11 points, 1e11 rings, a mask grown by a million pixels, 1e13 bootstrap
// draws) is refused from an estimate made from the settings and the input
// sizes, before anything is allocated, with a SettingError
// (core/settings_check.hpp) that names the setting, its value, the estimate
// and the limit:
//
//   angle_step_deg = 1e-06 is not allowed: must be within the limit of
//   1e+08 points for the scan grid (8e+08 bytes); this asks for 441 centre
//   offsets x 3.6e+08 angles = 1.6e+11 points
//
// The limits are generous: normal use is orders of magnitude below them; they
// keep every command under about 2 GB and refuse within a second what could
// never finish. Estimates are doubles, so they never overflow.
#pragma once

#include <cstddef>
#include <cstdint>
#include <string>
#include <string_view>

namespace fulcrum {

// Throws SettingError(setting, value_text, ...) when estimate > limit (or the
// estimate is not finite). `what` names the quantity ("the scan grid"),
// `unit` its unit ("points"); `detail` says how the estimate was made
// ("441 centre offsets x 360000001 angles").
void check_work_limit(std::string_view setting, const std::string& value_text, std::string_view what,
                      double estimate, double limit, std::string_view unit, const std::string& detail = "");

// A count whose size is the work (bootstrap draws, mocks per set, pixels a
// mask grows by): below `lo` refused as out of range ("a whole number
// within [100, 10000000] draws"); above `limit` times the scale as a work
// limit naming the value, the limit and the override, like
// check_work_limit; above `type_max` (what the count's type holds) always,
// whatever the scale. Returns the refusal rule, or "" when `value` passes.
std::string count_limit_rule(std::int64_t value, std::int64_t lo, double limit, std::string_view what,
                             std::string_view unit, std::int64_t type_max = 2147483647);
// Throws SettingError(setting, value, count_limit_rule(...)) unless it is "".
std::int64_t check_count_limit(std::string_view setting, std::int64_t value, std::int64_t lo, double limit,
                               std::string_view what, std::string_view unit, std::int64_t type_max = 2147483647);

// Every limit of check_work_limit is multiplied by one factor, 1 by default:
// set_work_limit_scale() (the global option --limit-scale) or else the
// environment variable FULCRUM_LIMIT_SCALE; within [1, 1e6] (SettingError /
// InputError otherwise). Raising it lets a machine with more memory and time
// run what the default refuses; the image limit is --max-pixels. The count
// limits (count_limit_rule) are scaled the same way.
void set_work_limit_scale(double factor);
double work_limit_scale();

// An estimate as short text: whole numbers up to 1e6 as digits, larger ones
// as 1.6e+11.
std::string estimate_text(double value);

}  // namespace fulcrum
