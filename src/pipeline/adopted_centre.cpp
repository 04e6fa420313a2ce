// The adopted-centre rule (see include/fulcrum/pipeline/adopted_centre.hpp).
#include "fulcrum/pipeline/adopted_centre.hpp"

namespace fulcrum::pipeline {

namespace {
std::optional<std::size_t> first_ok(const std::vector<Centre>& v, CentreMethod m) {
  for (std::size_t i = 0; i < v.size(); ++i)
    if (v[i].method == m && v[i].ok()) return i;
  return std::nullopt;
}
}  // namespace

const std::vector<CentreMethod>& photometric_preference() {
  static const std::vector<CentreMethod> order{CentreMethod::photometric_profile, CentreMethod::photometric_centroid,
                                               CentreMethod::photometric_isophote, CentreMethod::photometric_symmetry,
                                               CentreMethod::photometric_peak};
  return order;
}

AdoptedCentre adopt_centre(const std::vector<Centre>& estimates, bool no_optical) {
  if (auto i = first_ok(estimates, CentreMethod::kinematic_rings))
    return {i, "the kinematic tilted-ring fit succeeded"};
  if (auto i = first_ok(estimates, CentreMethod::kinematic_harmonic))
    return {i, "the kinematic tilted-ring centre is not available; the harmonic centre is"};
  for (CentreMethod m : photometric_preference())
    if (auto i = first_ok(estimates, m))
      return {i, "no kinematic centre is available; " + centre_method_name(m) +
                     " is the first successful photometric centre in the order of preference"};
  return {std::nullopt,
          std::string("no centre estimate succeeded (the kinematic fit failed") + (no_optical ? "; no optical image given" : "") + ")"};
}

}  // namespace fulcrum::pipeline
