// Progress for a front end other than the terminal (the Python module):
// a listener called on every step of every Progress (core/log.hpp) with the
// progress line's label ("calibration mocks"), the steps done and the total.
//
// The listener is called from whichever thread advances the Progress (an
// OpenMP worker, one at a time), after the step is counted. It must not
// throw. One listener serves the whole process; set_progress_listener
// returns the one it replaces, so a caller can put it back.
#pragma once

#include <cstddef>
#include <functional>
#include <string>

namespace fulcrum {

using ProgressListener = std::function<void(const std::string& label, std::size_t done, std::size_t total)>;

// Install `listener` (empty: none); returns the previous one.
ProgressListener set_progress_listener(ProgressListener listener);

}  // namespace fulcrum
