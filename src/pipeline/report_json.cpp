// report.json from the typed summary (see include/fulcrum/pipeline/report_json.hpp).
#include "fulcrum/pipeline/report_json.hpp"

#include <cmath>
#include <cstdlib>
#include <ctime>
#include <filesystem>
#include <numbers>

#include "fulcrum/core/version.hpp"
#include "fulcrum/report/sha256.hpp"
#include "fulcrum/sky/offset_frame.hpp"

namespace fulcrum::pipeline {

namespace fs = std::filesystem;
using nlohmann::json;

namespace {

json num(double v) { return std::isfinite(v) ? json(v) : json(nullptr); }
json num(const std::optional<double>& v) { return v ? num(*v) : json(nullptr); }

json cov_json(const Eigen::Matrix2d& c) {
  return json::array({json::array({num(c(0, 0)), num(c(0, 1))}), json::array({num(c(1, 0)), num(c(1, 1))})});
}

json offset_json(const GalaxySummary& s, const Centre& adopted, const Centre& c) {
  const SkyOffset o = OffsetFrame(adopted.position).to_offset(c.position);
  const double d = separation_arcsec(adopted.position, c.position);
  json off = {{"east_arcsec", o.east}, {"north_arcsec", o.north}, {"distance_arcsec", d},
              {"pa_deg", d > 0 ? json(position_angle_deg(adopted.position, c.position)) : json(nullptr)}};
  if (s.beam) off["distance_beams"] = d / s.beam->fwhm_arcsec();
  if (s.input.distance_mpc) off["distance_kpc"] = d * *s.input.distance_mpc * std::numbers::pi / 648000.0 * 1000.0;
  return off;
}

json centre_json(const GalaxySummary& s, const Centre& c) {
  json cj = {{"id", c.id()}, {"status", c.ok() ? "ok" : "failed"}, {"source", c.provenance}};
  if (!c.ok()) {
    cj["ra_deg"] = nullptr;
    cj["dec_deg"] = nullptr;
    cj["cov_arcsec2"] = nullptr;
    cj["reason"] = c.reason;
    return cj;
  }
  cj["ra_deg"] = c.position.ra_deg;
  cj["dec_deg"] = c.position.dec_deg;
  cj["cov_arcsec2"] = cov_json(c.covariance);
  if (c.pixel_fits) cj["x_pix"] = c.pixel_fits->x, cj["y_pix"] = c.pixel_fits->y;
  if (const Centre* a = s.adopted_centre()) cj["offset_from_adopted"] = offset_json(s, *a, c);
  return cj;
}

json kinematics_json(const GalaxySummary& s) {
  if (!s.kinematics)
    return {{"status", "not run"}, {"pa_deg", nullptr}, {"inc_deg", nullptr}, {"vsys_kms", nullptr},
            {"rings", json::array()}};
  json kj = kinematics::to_json(s.kinematics->fit);
  kj["status"] = s.kinematics->fit.status;
  if (s.centre_bootstrap) kj["centre_bootstrap"] = calibration::to_json(*s.centre_bootstrap);
  return kj;
}

json photometry_json(const PhotometryResult& p) {
  json pj = photometry::to_json(p.summary);
  if (p.comparison) pj["comparison"] = photometry::to_json(*p.comparison);
  return pj;
}

json split_json(const GalaxySummary& s) {
  if (!s.robustness)
    return {{"tail_pa_deg", num(s.input.tail_pa_deg)}, {"tail_pa_err_deg", s.input.tail_pa_err_deg},
            {"leading_flux", nullptr}, {"trailing_flux", nullptr}, {"flux_unit", nullptr},
            {"asymmetry", nullptr}, {"asymmetry_err", nullptr}, {"at_centres", json::array()}};
  const auto& a = *s.robustness;
  json sj = split::to_json(a.split);
  sj["tail_pa_deg"] = a.tail_pa_deg;
  sj["tail_pa_err_deg"] = a.tail_pa_err_deg;
  if (a.tail) sj["tail_direction"] = robustness::to_json(*a.tail);
  if (s.aperture)
    sj["aperture"] = {{"radius_arcsec", s.aperture->spec.radius_arcsec}, {"pa_deg", s.aperture->spec.pa_deg},
                      {"axis_ratio", s.aperture->spec.axis_ratio}, {"source", s.aperture->source}};
  else
    sj["aperture"] = nullptr;
  // A at every successful centre, in the order of the centre list.
  json at = json::array();
  for (const auto& c : s.centres)
    for (const auto& e : a.at_centres)
      if (c.ok() && e.id == c.id()) {
        const auto& x = e.split;
        at.push_back({{"id", e.id}, {"asymmetry", num(x.asymmetry)}, {"asymmetry_err", num(x.asymmetry_err)},
                      {"leading_flux", num(x.leading_flux)}, {"trailing_flux", num(x.trailing_flux)}});
        break;
      }
  sj["at_centres"] = at;
  // Where the line map's noise came from: the user's rms, the intensity
  // error map, or an estimate from the emission-free pixels.
  sj["line_noise"] = {{"rms", s.input.rms || s.estimated_rms ? json(s.line_rms()) : json(nullptr)},
                      {"source", s.input.rms       ? "given (rms)"
                                 : s.estimated_rms ? "estimated from the emission-free pixels"
                                                   : "intensity error map"}};
  return sj;
}

json robustness_json(const GalaxySummary& s) {
  if (!s.robustness)
    return {{"p_leading", nullptr}, {"draws", s.draws}, {"seed", s.seed}, {"asymmetry_ci68", nullptr},
            {"asymmetry_ci95", nullptr}, {"flip_distance_arcsec", nullptr}, {"flip_distance_beams", nullptr},
            {"flip_direction_pa_deg", nullptr}, {"farthest_plausible_arcsec", nullptr}};
  const auto& a = *s.robustness;
  const auto& boot = a.bootstrap;
  const auto& flip = a.flip;
  const auto& vd = a.verdict;
  const auto& vo = a.settings.verdict;
  const bool flipped = flip.nominal.found;
  return {{"p_leading", num(boot.p_positive)},
          {"draws", boot.n_draws},
          {"seed", boot.seed},
          {"asymmetry_ci68", json::array({num(boot.lo68), num(boot.hi68)})},
          {"asymmetry_ci95", json::array({num(boot.lo95), num(boot.hi95)})},
          {"asymmetry_median", num(boot.median)},
          {"noise_included", boot.noise_included},
          {"centre_draws", a.settings.bootstrap_estimates ? "all-estimates" : "adopted"},
          {"flip_distance_arcsec", flipped ? num(flip.nominal.distance_arcsec) : json(nullptr)},
          {"flip_distance_beams", flipped ? num(flip.nominal_beams) : json(nullptr)},
          {"flip_direction_pa_deg", flipped ? num(flip.nominal.direction_pa_deg) : json(nullptr)},
          {"flip_distance_min_over_angles_arcsec", flip.worst.found ? num(flip.worst.distance_arcsec) : json(nullptr)},
          {"farthest_plausible_arcsec", num(vd.plausible.farthest_plausible_arcsec)},
          {"sign_changes_among_plausible", vd.plausible.sign_changes},
          {"where_sign_changes", vd.plausible.where},
          {"verdict_rule", vd.reason},
          {"total_snr", num(vd.total_snr)},
          {"detected_beams", num(vd.detected_beams)},
          {"thresholds", {{"robust_p", vo.robust_p}, {"reversed_p", vo.reversed_p},
                          {"plausible_sigma", vo.plausible_sigma}, {"min_total_snr", vo.min_total_snr},
                          {"min_detected_beams", vo.min_detected_beams}}}};
}

json molecular_json(const MolecularGasResult& m) {
  if (!m.masses) return {{"status", "not computed"}, {"reason", m.reason}};
  json j = m.masses->to_json(m.options);
  if (m.ratio_given) j["co_ratio_21_source"] = "given in the manifest";
  if (m.alpha_given) j["alpha_co_source"] = "given in the manifest";
  return j;
}

json calibration_json(const CalibrationResult& c) {
  if (c.summary) return calibration::to_json(*c.summary);
  return {{"status", "failed"}, {"reason", c.failure}};
}

json stages_json(const std::vector<StageRecord>& stages) {
  json a = json::array();
  for (const auto& s : stages) {
    json j = {{"stage", s.stage}, {"status", stage_status_name(s.status)}};
    if (!s.reason.empty()) j["reason"] = s.reason;
    a.push_back(j);
  }
  return a;
}

}  // namespace

std::string dump_json(const json& j) { return j.dump(2) + "\n"; }

std::string created_utc() {
  std::time_t t = std::time(nullptr);
  if (const char* e = std::getenv("SOURCE_DATE_EPOCH")) {
    char* end = nullptr;
    long long v = std::strtoll(e, &end, 10);
    if (end && *end == '\0' && v >= 0) t = static_cast<std::time_t>(v);
  }
  std::tm tm{};
  gmtime_r(&t, &tm);
  char buf[32];
  std::strftime(buf, sizeof buf, "%Y-%m-%dT%H:%M:%SZ", &tm);
  return buf;
}

json input_provenance(const GalaxyInput& in) {
  json j = json::object();
  // Maps made from a cube live in the galaxy's own output folder
  // (OUT/moments/, pipeline/cube_maps.hpp): their paths are written relative
  // to it, so that the report does not depend on where the folder is (a
  // sharded run merged elsewhere gives the same bytes).
  const bool made = !in.cube.empty();
  auto shown = [&](const std::string& path) {
    return made && path != in.cube ? (fs::path("moments") / fs::path(path).filename()).string() : path;
  };
  auto add = [&](const char* key, const std::string& path) {
    if (path.empty()) return;
    j[key] = {{"path", shown(path)}, {"sha256", report::sha256_file(path)}};
  };
  add("velocity", in.velocity);
  add("velocity_error", in.velocity_error);
  add("intensity", in.intensity);
  add("intensity_error", in.intensity_error);
  add("optical", in.optical);
  add("optical_mask", in.optical_mask);
  add("tail_image", in.tail_image);
  add("cube", in.cube);
  if (!in.cube.empty()) {
    // The four maps above were made from it (pipeline/cube_maps.hpp).
    j["cube"]["moment_settings"] = to_json(in.moments);
    if (!in.intensity.empty())
      j["cube"]["moments_summary"] = "moments/moments.json";
  }
  return j;
}

json maps_provenance(const GalaxyInput& in, const GalaxyMaps& maps) {
  json j = json::object();
  auto add = [&](const char* key, const std::string& path, const std::optional<Image>& map) {
    if (!map) return;
    std::error_code ec;
    const std::string digest =
        fs::is_regular_file(path, ec)
            ? report::sha256_file(path)
            : report::sha256_hex(std::string_view(reinterpret_cast<const char*>(map->data.data()),
                                                  map->data.size() * sizeof(double)));
    j[key] = {{"path", path}, {"sha256", digest}};
  };
  add("velocity", in.velocity, maps.velocity);
  add("velocity_error", in.velocity_error, maps.velocity_error);
  add("intensity", in.intensity, maps.intensity);
  add("intensity_error", in.intensity_error, maps.intensity_error);
  add("optical", in.optical, maps.optical);
  add("optical_mask", in.optical_mask, maps.optical_mask);
  add("tail_image", in.tail_image, maps.tail_image);
  return j;
}

json to_json(const GalaxySummary& s) {
  json rep;
  rep["schema_version"] = kReportSchemaVersion;
  rep["galaxy"] = s.input.name;
  rep["verdict"] = robustness::verdict_name(s.verdict);
  rep["statement"] = s.statement;
  if (s.verdict == robustness::Verdict::undetermined) rep["verdict_reason"] = s.undetermined_reason;
  rep["centres"] = json::array();
  for (const auto& c : s.centres) rep["centres"].push_back(centre_json(s, c));
  rep["adopted_centre"] = s.adopted_centre() ? json(s.adopted_centre()->id()) : json(nullptr);
  rep["kinematics"] = kinematics_json(s);
  if (s.photometry) rep["photometry"] = photometry_json(*s.photometry);
  rep["split"] = split_json(s);
  rep["robustness"] = robustness_json(s);
  if (s.molecular_gas) rep["molecular_gas"] = molecular_json(*s.molecular_gas);
  rep["calibration"] = s.calibration ? calibration_json(*s.calibration) : json(nullptr);
  rep["software"] = software_info();
  rep["created_utc"] = s.created_utc;
  rep["distance_mpc"] = num(s.input.distance_mpc);
  rep["inputs"] = s.provenance;
  rep["stages"] = stages_json(s.stages);
  json figs = json::array();
  for (const auto& f : s.figures) figs.push_back({{"id", f.id}, {"file", f.file}, {"caption", f.caption}});
  rep["figures"] = figs;
  rep["notes"] = s.notes;
  if (s.sample)
    rep["sample"] = {{"name", s.sample->name}, {"manifest", s.sample->manifest}, {"index", s.sample->index},
                     {"seed", s.sample->seed}};
  return rep;
}

}  // namespace fulcrum::pipeline
