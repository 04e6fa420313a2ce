// Matched-mock calibration inputs from report.json and the maps (see
// include/fulcrum/calibration/from_report.hpp).
#include "fulcrum/calibration/from_report.hpp"

#include "fulcrum/core/error.hpp"
#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/sky/offset_frame.hpp"

namespace fulcrum::calibration {

using nlohmann::json;

GalaxyMaps load_maps(const pipeline::GalaxyInput& in) {
  GalaxyMaps m;
  m.intensity = read_image(in.intensity);
  if (!in.intensity_error.empty()) m.intensity_error = read_image(in.intensity_error);
  if (!in.velocity.empty()) m.velocity = read_image(in.velocity);
  if (!in.velocity_error.empty()) m.velocity_error = read_image(in.velocity_error);
  return m;
}

namespace {
double number(const json& j, const char* key, const std::string& where) {
  if (!j.is_object() || !j.contains(key) || !j[key].is_number())
    throw InputError(where, std::string("has no number '") + key + "' (calibration needs it)");
  return j[key].get<double>();
}
Eigen::Matrix2d covariance(const json& c) {
  Eigen::Matrix2d m = Eigen::Matrix2d::Zero();
  if (c.is_array() && c.size() == 2)
    for (int i = 0; i < 2; ++i)
      for (int k = 0; k < 2; ++k)
        if (c[i].is_array() && c[i].size() == 2 && c[i][k].is_number()) m(i, k) = c[i][k].get<double>();
  return m;
}
}  // namespace

MatchedInputs matched_inputs_from_report(const json& rep, const pipeline::GalaxyInput& input,
                                         const GalaxyMaps& maps, const std::string& where) {
  MatchedInputs in;
  in.galaxy = rep.value("galaxy", input.name);
  in.intensity = &maps.intensity;
  in.intensity_error = maps.intensity_error ? &*maps.intensity_error : nullptr;
  in.rms = input.rms.value_or(0.0);
  in.velocity = maps.velocity ? &*maps.velocity : nullptr;
  in.velocity_error = maps.velocity_error ? &*maps.velocity_error : nullptr;

  const json* kin_centre = nullptr;
  if (rep.contains("centres"))
    for (const auto& c : rep["centres"])
      if (c.value("id", "") == "kinematic-rings" && c.value("status", "") == "ok") kin_centre = &c;
  if (!kin_centre) throw InputError(where, "has no successful kinematic tilted-ring centre: nothing to match the mocks to");
  in.centre = {number(*kin_centre, "ra_deg", where), number(*kin_centre, "dec_deg", where)};
  in.centre_covariance = covariance((*kin_centre)["cov_arcsec2"]);

  const json& k = rep.at("kinematics");
  in.pa_deg = number(k, "pa_deg", where);
  in.inc_deg = number(k, "inc_deg", where);
  in.vsys_kms = number(k, "vsys_kms", where);
  if (k.contains("rings"))
    for (const auto& r : k["rings"])
      if (r.contains("radius_arcsec") && r["radius_arcsec"].is_number() && r.contains("vrot_kms") &&
          r["vrot_kms"].is_number()) {
        in.ring_radius_arcsec.push_back(r["radius_arcsec"].get<double>());
        in.ring_vrot_kms.push_back(r["vrot_kms"].get<double>());
      }
  if (in.ring_radius_arcsec.empty()) throw InputError(where, "has no ring table (kinematics.rings)");

  const json& s = rep.at("split");
  in.tail_pa_deg = number(s, "tail_pa_deg", where);
  in.tail_pa_err_deg = number(s, "tail_pa_err_deg", where);
  in.measured_asymmetry = number(s, "asymmetry", where);
  if (s.contains("aperture") && s["aperture"].is_object()) {
    split::ApertureSpec ap;
    ap.radius_arcsec = number(s["aperture"], "radius_arcsec", where);
    ap.pa_deg = number(s["aperture"], "pa_deg", where);
    ap.axis_ratio = number(s["aperture"], "axis_ratio", where);
    in.aperture = ap;
  }

  const OffsetFrame frame(in.centre);
  for (const auto& c : rep["centres"]) {
    if (&c == kin_centre || c.value("status", "") != "ok") continue;
    PhotometricOffset p;
    p.name = c.value("id", "estimate");
    p.offset = frame.to_offset(WorldCoord{number(c, "ra_deg", where), number(c, "dec_deg", where)});
    p.covariance = covariance(c["cov_arcsec2"]);
    in.photometric.push_back(p);
  }
  return in;
}

}  // namespace fulcrum::calibration
