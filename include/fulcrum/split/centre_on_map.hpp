// Whether a split centre lies on a map: within half a pixel of its outer
// pixel edges (0-based pixel centres 0 .. n-1), by the map's WCS. A position
// the projection cannot place is not on the map. The split and the scan
// refuse a centre that is not (the caller words the message).
//
// Units: RA/Dec in degrees.
#pragma once

#include "fulcrum/io/image.hpp"

namespace fulcrum::split {

bool centre_on_map(const Image& map, WorldCoord centre);

}  // namespace fulcrum::split
