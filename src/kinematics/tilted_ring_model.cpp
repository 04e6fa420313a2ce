// Plain-double evaluation of the tilted-ring model (tilted_ring_model.hpp).
// Units: arcsec, degrees, km/s.
#include "fulcrum/kinematics/tilted_ring_model.hpp"

#include "fulcrum/sky/angle.hpp"

namespace fulcrum::kinematics {

double model_velocity_kms(double east, double north, double centre_east, double centre_north,
                          double pa_deg, double inc_deg, double vsys, double vrot, double vrad) {
  const Angle pa = pa_deg * degrees, inc = inc_deg * degrees;
  double X, Y;
  disc_plane(east, north, centre_east, centre_north, pa.cos(), pa.sin(), inc.cos(), &X, &Y);
  const double R = std::sqrt(X * X + Y * Y);
  return tilted_ring_velocity(X, Y, R, inc.sin(), vsys, vrot, vrad);
}

}  // namespace fulcrum::kinematics
