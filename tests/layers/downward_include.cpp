// Compiled as if it were a file of the sky layer (src/sky/): it includes
// headers of sky itself and of the layers below it (io, core), which the
// build must accept. The control for upward_include.cpp: it shows that a
// refusal there comes from the layering, not from a broken set-up.
#include "fulcrum/core/error.hpp"
#include "fulcrum/io/wcs.hpp"
#include "fulcrum/sky/angle.hpp"

int layer_check_downward_include() { return 0; }
