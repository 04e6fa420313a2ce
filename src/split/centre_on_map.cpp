// Whether a split centre lies on a map (include/fulcrum/split/centre_on_map.hpp).
#include "fulcrum/split/centre_on_map.hpp"

#include "fulcrum/core/error.hpp"

namespace fulcrum::split {

bool centre_on_map(const Image& map, WorldCoord centre) {
  try {
    const PixelCoord p = map.wcs.world_to_pixel(centre);
    return p.x >= -0.5 && p.y >= -0.5 && p.x <= map.nx - 0.5 && p.y <= map.ny - 0.5;
  } catch (const InputError&) {
    return false;  // not on the projection at all
  }
}

}  // namespace fulcrum::split
