// Compiled as if it were a file of the sky layer (src/sky/): it includes a
// header of the pipeline layer, which sits above sky, so the build must
// refuse it. tests/layers/check_refusal.cmake checks that it does.
#include "fulcrum/pipeline/galaxy_stages.hpp"

int layer_check_upward_include() { return 0; }
