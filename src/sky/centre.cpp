// Centre estimates (see include/fulcrum/sky/centre.hpp).
#include "fulcrum/sky/centre.hpp"

#include <array>
#include <utility>

namespace fulcrum {

namespace {
constexpr std::array<std::pair<CentreMethod, const char*>, 8> kNames{{
    {CentreMethod::kinematic_rings, "kinematic-rings"},
    {CentreMethod::kinematic_harmonic, "kinematic-harmonic"},
    {CentreMethod::photometric_profile, "photometric-profile"},
    {CentreMethod::photometric_centroid, "photometric-centroid"},
    {CentreMethod::photometric_isophote, "photometric-isophote"},
    {CentreMethod::photometric_symmetry, "photometric-symmetry"},
    {CentreMethod::photometric_peak, "photometric-peak"},
    {CentreMethod::external, "external"},
}};
}  // namespace

std::string centre_method_name(CentreMethod m) {
  for (const auto& [k, name] : kNames)
    if (k == m) return name;
  return "external";
}

std::optional<CentreMethod> centre_method_from_name(const std::string& name) {
  for (const auto& [k, n] : kNames)
    if (name == n) return k;
  return std::nullopt;
}

std::string Centre::id() const {
  if (method == CentreMethod::external && !label.empty()) return label;
  return centre_method_name(method);
}

Centre measured_centre(CentreMethod m, WorldCoord position, const Eigen::Matrix2d& covariance,
                       std::string provenance) {
  Centre c;
  c.method = m;
  c.status = CentreStatus::ok;
  c.position = position;
  c.covariance = covariance;
  c.provenance = std::move(provenance);
  return c;
}

Centre failed_centre(CentreMethod m, std::string reason, std::string provenance) {
  Centre c;
  c.method = m;
  c.status = CentreStatus::failed;
  c.reason = std::move(reason);
  c.provenance = std::move(provenance);
  return c;
}

}  // namespace fulcrum
