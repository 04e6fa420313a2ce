// How many threads a parallel loop uses.
//
// A requested count (0: all cores) is capped at the number of cores of the
// machine and at the number of work items (galaxies of a sample): more
// threads than cores only add memory and contention, and a count in the
// thousands made the OpenMP runtime fail. Capping a request prints a note.
// A negative request is refused (SettingError naming the setting).
#pragma once

#include <cstddef>
#include <cstdint>
#include <string_view>

namespace fulcrum {

// The number of cores (at least 1).
int core_count();

// The threads to use: min(requested or all cores, cores, items), at least 1.
int thread_count(std::string_view setting, std::int64_t requested, std::size_t items);

}  // namespace fulcrum
