// The robustness analysis draws from the project's one generator,
// fulcrum::Random (core/random.hpp: methods, interval conventions and
// stream derivation). This name is kept only for the calibration code that
// still spells it; new code uses fulcrum::Random.
#pragma once

#include "fulcrum/core/random.hpp"

namespace fulcrum::robustness {

using Generator = fulcrum::Random;

}  // namespace fulcrum::robustness
