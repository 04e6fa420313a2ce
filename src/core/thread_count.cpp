// How many threads a parallel loop uses (core/thread_count.hpp).
#include "fulcrum/core/thread_count.hpp"

#include <algorithm>
#include <thread>

#include "fulcrum/core/log.hpp"
#include "fulcrum/core/settings_check.hpp"

namespace fulcrum {

int core_count() { return std::max(1, static_cast<int>(std::thread::hardware_concurrency())); }

int thread_count(std::string_view setting, std::int64_t requested, std::size_t items) {
  if (requested < 0)
    throw SettingError(std::string(setting), std::to_string(requested),
                       "a whole number >= 0 (0: one thread per core)");
  const int cores = core_count();
  const std::int64_t cap = std::max<std::int64_t>(1, std::min<std::int64_t>(cores, static_cast<std::int64_t>(items)));
  if (requested > cores)
    note(setting_ref(setting) + " = " + std::to_string(requested) + " is more than the " + std::to_string(cores) +
         " cores of this machine: using " + std::to_string(cap));
  const std::int64_t want = requested == 0 ? cores : requested;
  return static_cast<int>(std::min(want, cap));
}

}  // namespace fulcrum
