// The one reader of report.json (see include/fulcrum/pipeline/report_reader.hpp).
#include "fulcrum/pipeline/report_reader.hpp"

#include <cmath>
#include <fstream>
#include <sstream>

#include "fulcrum/core/error.hpp"

namespace fulcrum::pipeline {

using nlohmann::json;

namespace {

// Reads typed fields of one JSON object; names the report and the key on a wrong type.
class Fields {
 public:
  Fields(const json& j, std::string where, std::string path) : j_(j), where_(std::move(where)), path_(std::move(path)) {}
  bool has(const char* k) const { return j_.is_object() && j_.contains(k) && !j_[k].is_null(); }
  const json& at(const char* k) const { return j_[k]; }
  Fields sub(const char* k) const {
    static const json empty = json::object();
    return Fields(has(k) ? j_[k] : empty, where_, path_ + k + ".");
  }
  double number(const char* k) const {
    if (!has(k)) return NAN;
    if (!j_[k].is_number()) fail(k, "a number");
    return j_[k].get<double>();
  }
  double number_at(const char* k, std::size_t i) const {
    if (!has(k) || !j_[k].is_array() || j_[k].size() <= i || !j_[k][i].is_number()) return NAN;
    return j_[k][i].get<double>();
  }
  std::string text(const char* k) const {
    if (!has(k)) return "";
    if (!j_[k].is_string()) fail(k, "a string");
    return j_[k].get<std::string>();
  }
  std::int64_t integer(const char* k) const {
    if (!has(k)) return 0;
    if (!j_[k].is_number()) fail(k, "a number");
    return j_[k].get<std::int64_t>();
  }
  std::uint64_t unsigned_integer(const char* k) const {
    if (!has(k)) return 0;
    if (!j_[k].is_number()) fail(k, "a number");
    return j_[k].is_number_unsigned() ? j_[k].get<std::uint64_t>() : static_cast<std::uint64_t>(j_[k].get<std::int64_t>());
  }
  [[noreturn]] void fail(const char* k, const char* what) const {
    throw InputError(where_, path_ + k + " must be " + what);
  }
  const std::string& where() const { return where_; }

 private:
  const json& j_;
  std::string where_, path_;
};

Centre read_centre(const json& c, const std::string& where) {
  const Fields f(c, where, "centres[].");
  const std::string id = f.text("id");
  const auto method = centre_method_from_name(id);
  Centre out;
  out.method = method.value_or(CentreMethod::external);
  if (!method) out.label = id;
  out.status = f.text("status") == "ok" ? CentreStatus::ok : CentreStatus::failed;
  out.reason = f.text("reason");
  out.provenance = f.text("source");
  if (!out.ok()) return out;
  out.position = {f.number("ra_deg"), f.number("dec_deg")};
  for (int i = 0; i < 2; ++i)
    for (int k = 0; k < 2; ++k) {
      const bool ok = f.has("cov_arcsec2") && f.at("cov_arcsec2").is_array() && f.at("cov_arcsec2").size() == 2 &&
                      f.at("cov_arcsec2")[i].is_array() && f.at("cov_arcsec2")[i].size() == 2 &&
                      f.at("cov_arcsec2")[i][k].is_number();
      out.covariance(i, k) = ok ? f.at("cov_arcsec2")[i][k].get<double>() : NAN;
    }
  if (f.has("x_pix") && f.has("y_pix")) out.pixel_fits = PixelCoord{f.number("x_pix"), f.number("y_pix")};
  return out;
}

void read_kinematics(const Fields& k, GalaxySummary& s) {
  if (!k.has("status")) return;
  KinematicsResult r;
  r.fit.status = k.text("status");
  r.fit.reason = k.text("reason");
  r.fit.pa_deg = k.number("pa_deg");
  r.fit.inc_deg = k.number("inc_deg");
  r.fit.vsys_kms = k.number("vsys_kms");
  // What the calibration's mocks take from the fit (calibrate --from): the
  // residual rms (their velocity noise without an error map), the velocity
  // scatter beyond the error map and the centre re-fit factor.
  if (k.has("diagnostics") && k.at("diagnostics").is_object()) {
    const Fields d = k.sub("diagnostics");
    if (d.has("residual_rms_kms")) r.fit.diagnostics.residual_rms_kms = d.number("residual_rms_kms");
  }
  if (k.has("velocity_scatter") && k.at("velocity_scatter").is_object()) {
    const Fields vs = k.sub("velocity_scatter");
    if (vs.has("scatter_kms")) r.fit.scatter.scatter_kms = vs.number("scatter_kms");
  }
  if (k.has("centre_bootstrap") && k.at("centre_bootstrap").is_object()) {
    const Fields cb = k.sub("centre_bootstrap");
    calibration::CentreBootstrap b;
    b.applied = cb.has("applied") && cb.at("applied").is_boolean() && cb.at("applied").get<bool>();
    if (b.applied) {
      b.mean_m2 = cb.number("mean_m2");
      b.scale2 = cb.number("covariance_scale");
      if (cb.has("pa_error_scale")) b.pa_scale2 = std::pow(cb.number("pa_error_scale"), 2);
      if (cb.has("inc_error_scale")) b.inc_scale2 = std::pow(cb.number("inc_error_scale"), 2);
    }
    s.centre_bootstrap = b;
  }
  if (k.has("rings") && k.at("rings").is_array())
    for (const auto& row : k.at("rings")) {
      const Fields f(row, k.where(), "kinematics.rings[].");
      r.rings.push_back({f.number("radius_arcsec"), f.number("vrot_kms"), f.number("vrot_err_kms")});
    }
  s.kinematics = std::move(r);
}

void read_split(const Fields& sp, const Fields& rb, GalaxySummary& s) {
  s.input.tail_pa_deg = sp.has("tail_pa_deg") ? std::optional<double>(sp.number("tail_pa_deg")) : std::nullopt;
  if (sp.has("tail_pa_err_deg")) s.input.tail_pa_err_deg = sp.number("tail_pa_err_deg");
  if (sp.has("aperture")) {
    const Fields ap = sp.sub("aperture");
    s.aperture = DiscAperture{{ap.number("radius_arcsec"), ap.number("pa_deg"), ap.number("axis_ratio"), {}},
                              ap.text("source")};
  }
  robustness::AnalysisSummary a;
  a.galaxy = s.input.name;
  a.tail_pa_deg = sp.number("tail_pa_deg");
  a.tail_pa_err_deg = sp.number("tail_pa_err_deg");
  a.split.leading_flux = sp.number("leading_flux");
  a.split.trailing_flux = sp.number("trailing_flux");
  a.split.flux_unit = sp.text("flux_unit");
  a.split.asymmetry = sp.number("asymmetry");
  a.split.asymmetry_err = sp.number("asymmetry_err");
  if (sp.has("at_centres") && sp.at("at_centres").is_array())
    for (const json& e : sp.at("at_centres")) {
      const Fields f(e, sp.where(), "split.at_centres[].");
      robustness::SplitAtCentre x;
      x.id = f.text("id");
      x.split.asymmetry = f.number("asymmetry");
      x.split.asymmetry_err = f.number("asymmetry_err");
      x.split.leading_flux = f.number("leading_flux");
      x.split.trailing_flux = f.number("trailing_flux");
      a.at_centres.push_back(x);
    }
  auto& b = a.bootstrap;
  b.p_positive = rb.number("p_leading");
  b.lo68 = rb.number_at("asymmetry_ci68", 0), b.hi68 = rb.number_at("asymmetry_ci68", 1);
  b.lo95 = rb.number_at("asymmetry_ci95", 0), b.hi95 = rb.number_at("asymmetry_ci95", 1);
  b.n_draws = static_cast<std::size_t>(rb.integer("draws"));
  b.seed = rb.unsigned_integer("seed");
  auto& f = a.flip;
  f.nominal.found = rb.has("flip_distance_arcsec");
  f.nominal.distance_arcsec = rb.number("flip_distance_arcsec");
  f.nominal_beams = rb.number("flip_distance_beams");
  f.nominal.direction_pa_deg = rb.number("flip_direction_pa_deg");
  a.verdict.verdict = s.verdict;
  a.verdict.plausible.farthest_plausible_arcsec = rb.number("farthest_plausible_arcsec");
  a.settings.seed = b.seed;
  a.settings.n_draws = b.n_draws;
  a.settings.bootstrap_estimates = rb.text("centre_draws") == "all-estimates";
  s.bootstrap_from_estimates = a.settings.bootstrap_estimates;
  s.draws = static_cast<int>(rb.integer("draws"));
  s.seed = b.seed;
  s.robustness = std::move(a);
}

void read_calibration(const Fields& r, GalaxySummary& s) {
  if (!r.has("calibration") || !r.at("calibration").is_object()) return;
  const Fields c = r.sub("calibration");
  CalibrationResult out;
  if (c.has("false_robust_rate")) {
    calibration::CalibrationSummary cs;
    cs.false_robust.rate = c.number("false_robust_rate");
    const Fields fr = c.sub("false_robust");
    cs.false_robust.err = fr.number("err");
    if (const double lo = fr.number_at("ci95", 0), hi = fr.number_at("ci95", 1); std::isfinite(lo) && std::isfinite(hi))
      cs.false_robust.lo95 = lo, cs.false_robust.hi95 = hi;
    cs.recovery.rate = c.number("recovery_rate");
    cs.statement = c.text("statement");
    out.summary = cs;
  } else {
    out.failure = c.text("reason");
  }
  s.calibration = out;
}

robustness::Verdict verdict_from_name(const std::string& v, const std::string& where) {
  for (auto k : {robustness::Verdict::undetermined, robustness::Verdict::centre_sensitive,
                 robustness::Verdict::robust, robustness::Verdict::reversed, robustness::Verdict::marginal})
    if (robustness::verdict_name(k) == v) return k;
  throw InputError(where, "verdict '" + v + "' is not one of the five verdicts");
}

}  // namespace

GalaxySummary read_report(const json& rep, const std::string& where) {
  if (!rep.is_object()) throw InputError(where, "is not a JSON object");
  const Fields r(rep, where, "");
  GalaxySummary s;
  s.input.name = r.text("galaxy");
  if (s.input.name.empty()) throw InputError(where, "has no galaxy name");
  s.verdict = verdict_from_name(r.has("verdict") ? r.text("verdict") : "undetermined", where);
  s.statement = r.text("statement");
  s.undetermined_reason = r.text("verdict_reason");
  s.created_utc = r.text("created_utc");
  if (r.has("distance_mpc")) s.input.distance_mpc = r.number("distance_mpc");
  if (r.has("centres") && r.at("centres").is_array())
    for (const auto& c : r.at("centres")) s.centres.push_back(read_centre(c, where));
  const std::string adopted = r.text("adopted_centre");
  for (std::size_t i = 0; i < s.centres.size() && !adopted.empty(); ++i)
    if (s.centres[i].id() == adopted && !s.adopted) s.adopted = i;
  read_kinematics(r.sub("kinematics"), s);
  if (r.has("split")) read_split(r.sub("split"), r.sub("robustness"), s);
  read_calibration(r, s);
  if (r.has("notes") && r.at("notes").is_array())
    for (const auto& n : r.at("notes"))
      if (n.is_string()) s.notes.push_back(n.get<std::string>());
  if (r.has("figures") && r.at("figures").is_array())
    for (const auto& f : r.at("figures")) {
      const Fields ff(f, where, "figures[].");
      s.figures.push_back({ff.text("id"), ff.text("file"), ff.text("caption")});
    }
  if (r.has("sample")) {
    const Fields sm = r.sub("sample");
    s.sample = SampleRef{sm.text("name"), sm.text("manifest"), sm.integer("index"),
                         sm.unsigned_integer("seed")};
  }
  return s;
}

GalaxySummary read_report_file(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError(path, "cannot be read");
  std::stringstream ss;
  ss << in.rdbuf();
  json rep;
  try {
    rep = json::parse(ss.str());
  } catch (const json::exception& e) {
    throw InputError(path, std::string("is not valid JSON: ") + e.what());
  }
  return read_report(rep, path);
}

}  // namespace fulcrum::pipeline
