// Building the sky samples of a velocity map (velocity_samples.hpp).
// Units: arcsec offsets (east, north), km/s.
#include "fulcrum/core/number_text.hpp"
#include "fulcrum/kinematics/velocity_samples.hpp"

#include <Eigen/Dense>  // determinant() used inline by pixel_offsets.hpp
#include <algorithm>
#include <cctype>
#include <cmath>

#include "fulcrum/core/error.hpp"
#include "fulcrum/sky/pixel_offsets.hpp"

namespace fulcrum::kinematics {

namespace {
std::string lower_compact(const std::string& s) {
  std::string o;
  for (char c : s)
    if (!std::isspace(static_cast<unsigned char>(c))) o += static_cast<char>(std::tolower(c));
  return o;
}
}  // namespace

namespace {
// The speed of light in km/s (exact, SI definition of the metre): no
// line-of-sight velocity of a galaxy map can reach it.
constexpr double kSpeedOfLightKms = 299792.458;

// A velocity map whose values exceed c in its unit is mislabelled (m/s
// written as km/s): refused, naming the file.
void check_below_light(const Image& velocity, double factor) {
  double peak = 0.0;
  for (double v : velocity.data)
    if (std::isfinite(v)) peak = std::max(peak, std::abs(v));
  if (peak * factor >= kSpeedOfLightKms)
    throw InputError(velocity.path, "BUNIT is '" + velocity.unit + "' but |velocity| reaches " +
                                        significant_text(peak * factor, 3) +
                                        " km/s, faster than light (299792 km/s): are the values in m/s? "
                                        "Correct BUNIT");
}
}  // namespace

double velocity_unit_factor(const Image& velocity, std::string* why) {
  const std::string u = lower_compact(velocity.unit);
  const std::string name = velocity.path.empty() ? std::string("velocity map") : velocity.path;
  if (u == "km/s" || u == "kms-1" || u == "kms^-1" || u == "km.s-1" || u == "km/sec" ||
      u == "kms**-1" || u == "km s-1")
    return 1.0;
  if (u == "m/s" || u == "ms-1" || u == "m.s-1" || u == "ms^-1" || u == "m/sec" || u == "ms**-1") {
    if (why) *why = name + ": BUNIT is '" + velocity.unit + "': velocities converted from m/s to km/s";
    return 1e-3;
  }
  if (!u.empty()) {
    // Anything else with a unit is not a velocity map.
    throw InputError(velocity.path, "BUNIT '" + velocity.unit +
                                        "' is not a velocity unit (expected km/s or m/s)");
  }
  double peak = 0.0;
  for (double v : velocity.data)
    if (std::isfinite(v)) peak = std::max(peak, std::abs(v));
  if (peak > 1e5) {
    if (why)
      *why = name + ": no BUNIT and velocities up to " + std::to_string(peak) +
             ": taken to be m/s and converted to km/s";
    return 1e-3;
  }
  return 1.0;
}

VelocitySamples samples_from_image(const Image& velocity, const Image* error,
                                   WorldCoord reference) {
  if (!velocity.wcs.valid()) throw InputError(velocity.path, "the velocity map has no celestial WCS");
  if (error && (error->nx != velocity.nx || error->ny != velocity.ny))
    throw InputError(error->path, "the velocity-error map is " + std::to_string(error->nx) + "x" +
                                      std::to_string(error->ny) + " pixels but the velocity map is " +
                                      std::to_string(velocity.nx) + "x" +
                                      std::to_string(velocity.ny));
  const double vf = velocity_unit_factor(velocity, nullptr);
  // The velocities only: an error map may hold huge placeholder values.
  check_below_light(velocity, vf);
  const double ef = error ? velocity_unit_factor(*error, nullptr) : 1.0;
  PixelOffsets offsets(velocity, reference);
  VelocitySamples s;
  s.has_errors = error != nullptr;
  s.pixel_area_arcsec2 = offsets.pixel_area_arcsec2();
  s.beam = velocity.beam;
  for (int y = 0; y < velocity.ny; ++y)
    for (int x = 0; x < velocity.nx; ++x) {
      const double v = velocity.at(x, y);
      if (!std::isfinite(v)) continue;
      double sig = 1.0;
      if (error) {
        sig = error->at(x, y) * ef;
        if (!std::isfinite(sig) || sig <= 0) {
          ++s.dropped_bad_error;
          continue;
        }
      }
      const SkyOffset o = offsets.at(x, y);
      s.east.push_back(o.east);
      s.north.push_back(o.north);
      s.velocity.push_back(v * vf);
      s.sigma.push_back(sig);
      s.x.push_back(x);
      s.y.push_back(y);
    }
  return s;
}

}  // namespace fulcrum::kinematics
