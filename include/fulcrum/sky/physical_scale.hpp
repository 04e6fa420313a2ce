// Angular size to physical size at a distance, small-angle approximation.
//
//   kpc per arcsec = D[Mpc] * 1000 * (pi / 648000)
//
// pi / 648000 is one arcsec in radians (648000 = 180 * 3600). The distance is
// the angular-diameter distance the user gives (Mpc); offsets of a few
// arcsec make the small-angle form exact to far below the distance error.
#pragma once

#include <numbers>

namespace fulcrum {

inline double kpc_per_arcsec(double distance_mpc) { return distance_mpc * std::numbers::pi / 648000.0 * 1000.0; }

}  // namespace fulcrum
