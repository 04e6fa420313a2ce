// One galaxy, the whole chain (see include/fulcrum/pipeline/galaxy_analysis.hpp).
//
// Stages are compiled in when their library is part of the tree (tested with
// __has_include), so that the pipeline builds at every step of the project;
// a stage whose library is absent is reported as "missing", never faked.
#include "fulcrum/pipeline/galaxy_analysis.hpp"
#include "fulcrum/calibration/from_report.hpp"

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <ctime>
#include <filesystem>
#include <functional>
#include <limits>
#include <numbers>
#include <optional>

#include <Eigen/Core>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/version.hpp"
#include "fulcrum/io/atomic_file.hpp"
#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/imaging/noise_estimate.hpp"
#include "fulcrum/pipeline/sky_grid.hpp"
#include "fulcrum/report/galaxy_figures.hpp"
#include "fulcrum/report/molecular_gas.hpp"
#include "fulcrum/report/sha256.hpp"
#include "fulcrum/sky/offset_frame.hpp"
#include "fulcrum/sky/pixel_offsets.hpp"

#if __has_include("fulcrum/kinematics/kinematic_fit.hpp")
#define FULCRUM_HAVE_KINEMATICS 1
#include "fulcrum/kinematics/kinematic_fit.hpp"
#else
#define FULCRUM_HAVE_KINEMATICS 0
#endif
#if __has_include("fulcrum/photometry/dynamical_comparison.hpp")
#define FULCRUM_HAVE_PHOTOMETRY 1
#include "fulcrum/photometry/dynamical_comparison.hpp"
#include "fulcrum/photometry/photometric_centres.hpp"
#else
#define FULCRUM_HAVE_PHOTOMETRY 0
#endif
#if __has_include("fulcrum/split/half_split.hpp")
#define FULCRUM_HAVE_SPLIT 1
#include "fulcrum/split/half_split.hpp"
#else
#define FULCRUM_HAVE_SPLIT 0
#endif
#if __has_include("fulcrum/robustness/analysis.hpp")
#define FULCRUM_HAVE_ROBUSTNESS 1
#include "fulcrum/robustness/bootstrap.hpp"
#include "fulcrum/robustness/flip_distance.hpp"
#include "fulcrum/robustness/scan.hpp"
#include "fulcrum/robustness/tail_direction.hpp"
#include "fulcrum/robustness/verdict.hpp"
#else
#define FULCRUM_HAVE_ROBUSTNESS 0
#endif

namespace fulcrum::pipeline {

namespace fs = std::filesystem;
using nlohmann::json;

namespace {

json num(double v) { return std::isfinite(v) ? json(v) : json(nullptr); }
json num(const std::optional<double>& v) { return v ? num(*v) : json(nullptr); }

json cov_json(const Eigen::Matrix2d& c) {
  return json::array({json::array({num(c(0, 0)), num(c(0, 1))}), json::array({num(c(1, 0)), num(c(1, 1))})});
}

// A centre estimate as the pipeline keeps it.
struct Centre {
  std::string id;
  bool ok = false;
  std::string reason;
  WorldCoord world;
  Eigen::Matrix2d cov = Eigen::Matrix2d::Zero();
  std::optional<PixelCoord> pixel_fits;
  std::string source;  // "velocity map", "optical image"
};

struct Stage {
  std::string name;
  std::string status;  // done, failed, skipped, missing
  std::string reason;
  json to_json() const {
    json j = {{"stage", name}, {"status", status}};
    if (!reason.empty()) j["reason"] = reason;
    return j;
  }
};

std::string stage_missing(const std::string& what) {
  return "the " + what + " library is not part of this build of fulcrum";
}

Image load(const std::string& path) { return read_image(path); }

}  // namespace

std::string dump_json(const json& j) { return j.dump(2) + "\n"; }

bool bootstrap_centres_from_estimates(const std::string& name) {
  if (name == "adopted") return false;
  if (name == "all-estimates") return true;
  throw InputError("", "--bootstrap-centres must be adopted or all-estimates (got '" + name + "')");
}

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

json built_stages() {
  return {{"kinematics", bool(FULCRUM_HAVE_KINEMATICS)},
          {"photometry", bool(FULCRUM_HAVE_PHOTOMETRY)},
          {"split", bool(FULCRUM_HAVE_SPLIT)},
          {"robustness", bool(FULCRUM_HAVE_ROBUSTNESS)}};
}

json input_provenance(const GalaxyInput& in) {
  json j = json::object();
  auto add = [&](const char* key, const std::string& path) {
    if (path.empty()) return;
    j[key] = {{"path", path}, {"sha256", report::sha256_file(path)}};
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
      j["cube"]["moments_summary"] = (fs::path(in.intensity).parent_path() / "moments.json").string();
  }
  return j;
}

GalaxyResult analyse_galaxy(const GalaxyInput& in, const AnalysisOptions& opt) {
  GalaxyResult r;
  r.name = in.name;
  json& rep = r.report;
  std::vector<Stage> stages;
  std::vector<Centre> centres;
  std::vector<std::string> failures;  // reasons that make the verdict undetermined
  std::string undetermined_reason;

  rep["schema_version"] = 1;
  rep["galaxy"] = in.name;
  rep["verdict"] = "undetermined";
  rep["statement"] = "";
  rep["centres"] = json::array();
  rep["adopted_centre"] = nullptr;
  rep["kinematics"] = {{"status", "not run"}, {"pa_deg", nullptr}, {"inc_deg", nullptr},
                       {"vsys_kms", nullptr}, {"rings", json::array()}};
  rep["split"] = {{"tail_pa_deg", num(in.tail_pa_deg)}, {"tail_pa_err_deg", in.tail_pa_err_deg},
                  {"leading_flux", nullptr}, {"trailing_flux", nullptr}, {"flux_unit", nullptr},
                  {"asymmetry", nullptr}, {"asymmetry_err", nullptr}, {"at_centres", json::array()}};
  rep["robustness"] = {{"p_leading", nullptr}, {"draws", opt.draws}, {"seed", opt.seed},
                       {"asymmetry_ci68", nullptr}, {"asymmetry_ci95", nullptr},
                       {"flip_distance_arcsec", nullptr}, {"flip_distance_beams", nullptr},
                       {"flip_direction_pa_deg", nullptr}, {"farthest_plausible_arcsec", nullptr}};
  rep["software"] = software_info();
  rep["software"]["stages_built"] = built_stages();
  rep["created_utc"] = created_utc();
  rep["distance_mpc"] = num(in.distance_mpc);

  // ---- inputs -----------------------------------------------------------------
  std::optional<Image> velocity, velocity_error, intensity, intensity_error, optical, optical_mask, tail_image;
  try {
    rep["inputs"] = input_provenance(in);
    velocity = load(in.velocity);
    intensity = load(in.intensity);
    if (!in.velocity_error.empty()) velocity_error = load(in.velocity_error);
    if (!in.intensity_error.empty()) intensity_error = load(in.intensity_error);
    if (!in.optical.empty()) optical = load(in.optical);
    if (!in.optical_mask.empty()) optical_mask = load(in.optical_mask);
    if (!in.tail_image.empty()) tail_image = load(in.tail_image);
    if (intensity_error && (intensity_error->nx != intensity->nx || intensity_error->ny != intensity->ny))
      throw InputError(in.intensity_error, "is not on the grid of the intensity map " + in.intensity);
    stages.push_back({"inputs", "done", ""});
  } catch (const InputError& e) {
    stages.push_back({"inputs", "failed", e.what()});
    if (!rep.contains("inputs")) rep["inputs"] = json::object();
    undetermined_reason = std::string("an input could not be read: ") + e.what();
  }
  std::optional<Beam> beam = intensity ? intensity->beam : std::nullopt;
  std::optional<double> vsys_kms;
  [[maybe_unused]] std::optional<double> kin_pa, kin_inc, kin_radius;
  std::optional<Image> vel_model, vel_residual;
  json ring_rows = json::array();

  // ---- kinematic centres ---------------------------------------------------------
  if (undetermined_reason.empty()) {
#if FULCRUM_HAVE_KINEMATICS
    try {
      kinematics::KinematicOptions ko;
      ko.method = kinematics::Method::both;
      // The intensity map weights the beam-smearing correction; when it cannot
      // (nothing positive under the velocity footprint), the fit falls back to
      // uniform weight over the footprint and says so.
      kinematics::KinematicFit fit;
      try {
        fit = kinematics::fit_kinematics(*velocity, velocity_error ? &*velocity_error : nullptr, ko,
                                         intensity ? &*intensity : nullptr);
      } catch (const InputError& e) {
        if (!intensity) throw;
        fit = kinematics::fit_kinematics(*velocity, velocity_error ? &*velocity_error : nullptr, ko);
        fit.notes.push_back(std::string("the intensity map could not weight the beam-smearing "
                                        "correction (") + e.what() + "): uniform weight over the "
                                        "velocity footprint used instead");
      }
      json kj = kinematics::to_json(fit);
      rep["kinematics"] = kj;
      rep["kinematics"]["status"] = fit.status;
      auto add_centre = [&](const std::string& id, const std::optional<kinematics::CentreEstimate>& c,
                            const std::string& why_not) {
        Centre k;
        k.id = id;
        k.source = "velocity map";
        if (fit.status == "ok" && c) {
          k.ok = true;
          k.world = c->world;
          k.cov = c->covariance;
          k.pixel_fits = PixelCoord{fits_pixel(c->pixel.x), fits_pixel(c->pixel.y)};
        } else {
          k.reason = why_not.empty() ? (fit.reason.empty() ? "fit " + fit.status : fit.reason) : why_not;
        }
        centres.push_back(k);
      };
      add_centre("kinematic-rings", fit.ring_centre, fit.status == "ok" ? "" : fit.reason);
      add_centre("kinematic-harmonic", fit.harmonic_centre,
                 fit.harmonic_status == "ok" ? "" : fit.harmonic_status);
      if (fit.status == "ok") {
        kin_pa = fit.pa_deg;
        kin_inc = fit.inc_deg;
        vsys_kms = fit.vsys_kms;
        if (fit.diagnostics.max_radius_arcsec > 0) kin_radius = fit.diagnostics.max_radius_arcsec;
        vel_model = kinematics::model_velocity_map(fit, *velocity);
        vel_residual = kinematics::residual_velocity_map(fit, *velocity, *vel_model);
        if (kj.contains("rings")) ring_rows = kj["rings"];
        stages.push_back({"kinematics", "done", ""});
      } else {
        stages.push_back({"kinematics", "failed", "tilted-ring fit " + fit.status + ": " + fit.reason});
        failures.push_back("the kinematic fit " + fit.status + " (" + fit.reason + ")");
      }
    } catch (const InputError& e) {
      stages.push_back({"kinematics", "failed", e.what()});
      failures.push_back(std::string("the kinematic fit could not run: ") + e.what());
    }
#else
    stages.push_back({"kinematics", "missing", stage_missing("kinematics")});
    rep["kinematics"]["status"] = "missing";
    rep["kinematics"]["reason"] = stage_missing("kinematics");
#endif
  }

  // ---- photometric centres -------------------------------------------------------------
  if (undetermined_reason.empty()) {
    if (!optical) {
      stages.push_back({"photometry", "skipped", "no optical image given"});
    } else {
#if FULCRUM_HAVE_PHOTOMETRY
      try {
        photometry::PhotometryOptions po;
        if (in.psf_fwhm_arcsec) po.psf_fwhm_arcsec = *in.psf_fwhm_arcsec;
        po.bootstrap.seed = opt.seed ^ 0x70686f746f6d6574ull;  // "photomet": a stream of its own
        auto ph = photometry::measure_photometric_centres(*optical, optical_mask ? &*optical_mask : nullptr, po);
        json pj = photometry::to_json(ph);
        for (const auto& c : ph.centres) {
          Centre p;
          p.id = c.id;
          p.ok = c.ok;
          p.reason = c.reason;
          p.world = c.world;
          p.cov = c.cov_arcsec2;
          if (c.ok) p.pixel_fits = c.pixel_fits;
          p.source = "optical image";
          centres.push_back(p);
        }
        const Centre* dyn = nullptr;
        for (const auto& c : centres)
          if (c.ok && c.id == "kinematic-rings") dyn = &c;
        if (dyn) {
          photometry::DynamicalCentre dc{dyn->world, dyn->cov};
          photometry::ComparisonOptions co;
          co.beam = beam;
          co.distance_mpc = in.distance_mpc;
          pj["comparison"] = photometry::to_json(photometry::compare_with_dynamical(ph, dc, co));
        }
        rep["photometry"] = pj;
        stages.push_back({"photometry", ph.ok ? "done" : "failed", ph.ok ? "" : ph.reason});
      } catch (const InputError& e) {
        stages.push_back({"photometry", "failed", e.what()});
      }
#else
      stages.push_back({"photometry", "missing", stage_missing("photometry")});
#endif
    }
  }

  // ---- adopted centre ------------------------------------------------------------------
  const Centre* adopted = nullptr;
  for (const char* pref : {"kinematic-rings", "kinematic-harmonic", "photometric-profile",
                           "photometric-centroid", "photometric-isophote", "photometric-symmetry",
                           "photometric-peak"}) {
    for (const auto& c : centres)
      if (!adopted && c.ok && c.id == pref) adopted = &c;
  }
  if (adopted) {
    rep["adopted_centre"] = adopted->id;
    if (adopted->id != "kinematic-rings")
      r.notes.push_back("The adopted centre is " + adopted->id +
                        " because the kinematic tilted-ring centre is not available.");
  } else if (undetermined_reason.empty()) {
    undetermined_reason = "no centre estimate succeeded (" +
                          std::string(FULCRUM_HAVE_KINEMATICS ? "the kinematic fit failed" : stage_missing("kinematics")) +
                          (optical ? "" : "; no optical image given") + ")";
  }

  // Offsets of every centre from the adopted one.
  std::optional<OffsetFrame> frame;
  if (adopted) frame = OffsetFrame(adopted->world);
  for (const auto& c : centres) {
    json cj = {{"id", c.id}, {"status", c.ok ? "ok" : "failed"}, {"source", c.source}};
    if (c.ok) {
      cj["ra_deg"] = c.world.ra_deg;
      cj["dec_deg"] = c.world.dec_deg;
      cj["cov_arcsec2"] = cov_json(c.cov);
      if (c.pixel_fits) cj["x_pix"] = c.pixel_fits->x, cj["y_pix"] = c.pixel_fits->y;
      if (frame) {
        SkyOffset o = frame->to_offset(c.world);
        double d = separation_arcsec(adopted->world, c.world);
        json off = {{"east_arcsec", o.east}, {"north_arcsec", o.north}, {"distance_arcsec", d},
                    {"pa_deg", d > 0 ? json(position_angle_deg(adopted->world, c.world)) : json(nullptr)}};
        if (beam) off["distance_beams"] = d / beam->fwhm_arcsec();
        if (in.distance_mpc) off["distance_kpc"] = d * *in.distance_mpc * std::numbers::pi / 648000.0 * 1000.0;
        cj["offset_from_adopted"] = off;
      }
    } else {
      cj["ra_deg"] = nullptr;
      cj["dec_deg"] = nullptr;
      cj["cov_arcsec2"] = nullptr;
      cj["reason"] = c.reason;
    }
    rep["centres"].push_back(cj);
  }

  // ---- split, flip distance, bootstrap, verdict ------------------------------------------------
  std::vector<report::CentreMark> marks;
  for (const auto& c : centres) {
    if (!c.ok || !frame) continue;
    SkyOffset o = frame->to_offset(c.world);
    marks.push_back({c.id, o.east, o.north, c.cov(0, 0), c.cov(0, 1), c.cov(1, 1), true, &c == adopted});
  }
  std::optional<double> tail_pa = in.tail_pa_deg, tail_err = in.tail_pa_err_deg;
  std::optional<double> ap_radius, ap_pa, ap_q;
  std::string statement;
  std::string verdict = "undetermined";
  [[maybe_unused]] std::optional<report::AsymmetryPlaneFigure> aplane;
  [[maybe_unused]] std::optional<report::FlipAngleFigure> flipfig;
  [[maybe_unused]] std::optional<report::BootstrapFigure> bootfig;

  if (undetermined_reason.empty() && adopted) {
#if FULCRUM_HAVE_SPLIT && FULCRUM_HAVE_ROBUSTNESS
    try {
      split::SplitOptions so;
      so.centre = adopted->world;
      if (kin_pa && kin_inc && kin_radius) {
        // The gas disc: kinematic PA and inclination, radius of the outer
        // fitted ring plus half a beam (the edge of the detected disc).
        split::ApertureSpec ap;
        ap.radius_arcsec = *kin_radius + (beam ? 0.5 * beam->fwhm_arcsec() : 0.0);
        ap.pa_deg = *kin_pa;
        ap.axis_ratio = std::max(0.05, std::cos(*kin_inc * std::numbers::pi / 180.0));
        so.aperture = ap;
        ap_radius = ap.radius_arcsec;
        ap_pa = ap.pa_deg;
        ap_q = ap.axis_ratio;
      } else {
        r.notes.push_back("No kinematic disc geometry: the halves use every finite pixel of the line map.");
      }
      std::optional<double> map_rms = in.rms;
      if (!map_rms && !intensity_error) {  // no noise given: estimate it from emission-free pixels, or refuse
        const NoiseEstimate ne = estimate_map_noise(*intensity);
        if (!ne.ok) throw InputError(in.intensity, "no intensity error map or rms given, and the noise cannot be estimated: " + ne.reason);
        map_rms = ne.rms;
        r.notes.push_back(ne.sentence(intensity->unit) + (ne.check.empty() ? "" : "; " + ne.check));
      }
      if (map_rms) so.rms = *map_rms;
      if (intensity_error) so.error_map = &*intensity_error;
      const split::SplitProblem pr = split::prepare_split(*intensity, so);

      json tail_json;
      if (!tail_pa) {
        if (!tail_image) throw InputError("", "no tail PA and no tail image: cannot place the split line");
        if (!pr.aperture) throw InputError(in.tail_image, "estimating the tail PA from an image needs the kinematic disc");
        robustness::TailDirectionOptions t;
        t.centre = adopted->world;
        t.disc = *pr.aperture;
        if (map_rms) t.rms = *map_rms;
        t.seed = opt.seed ^ 0x7461696cull;
        auto td = robustness::tail_direction(*tail_image, t);
        tail_pa = td.tail_pa_deg;
        tail_err = td.tail_pa_err_deg;
        tail_json = robustness::to_json(td);
      }
      const Angle tail = *tail_pa * degrees;
      auto nominal = split::split_at(pr, tail);
      json sj = split::to_json(nominal);
      sj["tail_pa_deg"] = *tail_pa;
      sj["tail_pa_err_deg"] = *tail_err;
      if (!tail_json.is_null()) sj["tail_direction"] = tail_json;
      if (ap_radius) sj["aperture"] = {{"radius_arcsec", *ap_radius}, {"pa_deg", *ap_pa}, {"axis_ratio", *ap_q},
                                       {"source", "kinematic PA and inclination, outer ring + half a beam"}};
      else sj["aperture"] = nullptr;
      json at = json::array();
      std::vector<robustness::CentreEstimate> estimates;
      for (const auto& c : centres) {
        if (!c.ok) continue;
        SkyOffset o = frame->to_offset(c.world);
        auto s = split::split_at(pr, tail, o);
        at.push_back({{"id", c.id}, {"asymmetry", num(s.asymmetry)}, {"asymmetry_err", num(s.asymmetry_err)},
                      {"leading_flux", num(s.leading_flux)}, {"trailing_flux", num(s.trailing_flux)}});
        if (&c == adopted) continue;
        robustness::CentreEstimate e;
        e.name = c.id;
        e.offset = o;
        e.covariance = c.cov;
        estimates.push_back(e);
      }
      sj["at_centres"] = at;
      rep["split"] = sj;

      robustness::FlipOptions fo;
      fo.tail_pa_deg = *tail_pa;
      fo.tail_pa_err_deg = *tail_err;
      auto flip = robustness::flip_distance(pr, fo);

      robustness::BootstrapOptions bo;
      bo.n_draws = static_cast<std::size_t>(opt.draws);
      bo.seed = opt.seed;
      bo.centre_covariance = adopted->cov;
      bo.use_estimates = opt.bootstrap_from_estimates;
      bo.estimates = estimates;
      bo.tail_pa_deg = *tail_pa;
      bo.tail_pa_err_deg = *tail_err;
      bo.keep_draws = opt.figures;
      auto boot = robustness::bootstrap(pr, bo);

      robustness::VerdictInput vi;
      vi.centre_covariance = adopted->cov;
      vi.estimates = estimates;
      vi.tail_pa_deg = *tail_pa;
      vi.tail_pa_err_deg = *tail_err;
      vi.failures = failures;
      vi.galaxy = in.name;
      robustness::VerdictOptions vo;
      auto vd = robustness::decide(pr, nominal, flip, boot, vi, vo);
      verdict = robustness::verdict_name(vd.verdict);
      statement = vd.statement;
      if (verdict == "undetermined") undetermined_reason = vd.reason;

      const bool flipped = flip.nominal.found;
      rep["robustness"] = {
          {"p_leading", num(boot.p_positive)},
          {"draws", boot.n_draws},
          {"seed", boot.seed},
          {"asymmetry_ci68", json::array({num(boot.lo68), num(boot.hi68)})},
          {"asymmetry_ci95", json::array({num(boot.lo95), num(boot.hi95)})},
          {"asymmetry_median", num(boot.median)},
          {"noise_included", boot.noise_included},
          {"centre_draws", opt.bootstrap_from_estimates ? "all-estimates" : "adopted"},
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
      stages.push_back({"split", "done", ""});
      stages.push_back({"robustness", "done", ""});

      // Molecular gas (informative only).
      if (in.distance_mpc && in.molecular.co_line) {
        report::MolecularGasOptions mo;
        mo.line = *in.molecular.co_line;
        if (in.molecular.alpha_co) mo.alpha_co = *in.molecular.alpha_co;
        if (in.molecular.co_ratio_21) mo.co_ratio_21 = *in.molecular.co_ratio_21;
        mo.distance_mpc = *in.distance_mpc;
        if (in.molecular.redshift) {
          mo.redshift = *in.molecular.redshift;
          mo.redshift_source = "given";
        } else if (vsys_kms) {
          mo.redshift = *vsys_kms / 299792.458;
          mo.redshift_source = "systemic velocity / c";
        } else {
          mo.redshift_source = "assumed 0";
        }
        std::string why;
        auto m = report::molecular_gas_masses(nominal.leading_flux, nominal.trailing_flux, nominal.leading_err,
                                              nominal.trailing_err, nominal.flux_unit, mo, &why);
        if (m) {
          rep["molecular_gas"] = m->to_json(mo);
          if (in.molecular.co_ratio_21) rep["molecular_gas"]["co_ratio_21_source"] = "given in the manifest";
          if (in.molecular.alpha_co) rep["molecular_gas"]["alpha_co_source"] = "given in the manifest";
        } else {
          rep["molecular_gas"] = {{"status", "not computed"}, {"reason", why}};
        }
      }

      // Figure data: A over the offset plane, flip distance vs angle, bootstrap.
      if (opt.figures) {
        double fwhm = beam ? beam->fwhm_arcsec() : 1.0;
        double half = std::max(2.0 * fwhm, 1.3 * vd.plausible.farthest_plausible_arcsec);
        if (flipped) half = std::max(half, 1.25 * flip.nominal.distance_arcsec);
        half = std::min(half, 6.0 * fwhm);
        robustness::ScanOptions sc;
        sc.tail_pa_deg = *tail_pa;
        sc.half_width_arcsec = half;
        sc.step_arcsec = half / 50.0;
        sc.angle_half_width_deg = 0.0;
        auto scan = robustness::scan(pr, sc);
        report::AsymmetryPlaneFigure af;
        af.galaxy = in.name;
        af.tail_pa_deg = *tail_pa;
        af.centres = marks;
        af.error_ellipse_sigma = opt.error_ellipse_sigma;
        if (flipped) {
          af.flip_distance = flip.nominal.distance_arcsec;
          af.flip_direction_pa_deg = flip.nominal.direction_pa_deg;
        }
        auto& g = af.asymmetry;
        g.nx = scan.n_east;
        g.ny = scan.n_north;
        double se = scan.n_east > 1 ? scan.east[1] - scan.east[0] : 1.0;
        double sn = scan.n_north > 1 ? scan.north[1] - scan.north[0] : 1.0;
        g.xmin = std::min(scan.east.front(), scan.east.back()) - std::abs(se) / 2;
        g.xmax = std::max(scan.east.front(), scan.east.back()) + std::abs(se) / 2;
        g.ymin = std::min(scan.north.front(), scan.north.back()) - std::abs(sn) / 2;
        g.ymax = std::max(scan.north.front(), scan.north.back()) + std::abs(sn) / 2;
        g.v.resize(static_cast<std::size_t>(g.nx) * g.ny);
        for (int j = 0; j < g.ny; ++j)
          for (int i = 0; i < g.nx; ++i) {
            int ie = se > 0 ? i : g.nx - 1 - i, in_ = sn > 0 ? j : g.ny - 1 - j;
            g.v[static_cast<std::size_t>(i) + static_cast<std::size_t>(g.nx) * j] = scan.at(ie, in_, 0);
          }
        aplane = af;

        robustness::FlipOptions wide = fo;
        wide.tail_pa_err_deg = std::min(90.0, std::max(30.0, 2.0 * *tail_err));
        auto fw = robustness::flip_distance(pr, wide);
        report::FlipAngleFigure ff;
        ff.galaxy = in.name;
        ff.nominal_deg = *tail_pa;
        ff.err_deg = *tail_err;
        ff.farthest_plausible = vd.plausible.farthest_plausible_arcsec;
        if (beam) ff.beam_fwhm = beam->fwhm_arcsec();
        for (const auto& a : fw.per_angle) {
          ff.angle_deg.push_back(*tail_pa + angle_diff_deg(a.tail_pa_deg, *tail_pa));
          ff.flip_distance.push_back(a.found ? a.distance_arcsec : NAN);
        }
        flipfig = ff;

        report::BootstrapFigure bf;
        bf.galaxy = in.name;
        bf.asymmetry = nominal.asymmetry;
        bf.ci68_lo = boot.lo68; bf.ci68_hi = boot.hi68;
        bf.ci95_lo = boot.lo95; bf.ci95_hi = boot.hi95;
        bf.p_leading = boot.p_positive;
        report::histogram(boot.draws, 60, 0, 0, bf.bin_edges, bf.counts);
        bootfig = bf;
      }
    } catch (const InputError& e) {
      stages.push_back({"split", "failed", e.what()});
      undetermined_reason = std::string("the split could not be measured: ") + e.what();
    }
#else
    std::string what = FULCRUM_HAVE_SPLIT ? "robustness" : "split";
    stages.push_back({"split", FULCRUM_HAVE_SPLIT ? "skipped" : "missing", stage_missing("split")});
    stages.push_back({"robustness", "missing", stage_missing(what)});
    undetermined_reason = stage_missing(what) + ", so no halves, flip distance or bootstrap were computed";
#endif
  }

  {
    bool have_split = false;
    for (const auto& s : stages) have_split = have_split || s.name == "split";
    if (!have_split) {
      std::string why = undetermined_reason.empty() ? "no adopted centre" : undetermined_reason;
      stages.push_back({"split", "skipped", why});
      stages.push_back({"robustness", "skipped", why});
    }
  }
  if (verdict == "undetermined") {
    if (undetermined_reason.empty()) undetermined_reason = "the measurement could not be made";
    if (statement.empty())
      statement = in.name + ": no verdict (undetermined): " + undetermined_reason + ".";
    rep["verdict_reason"] = undetermined_reason;
  }
  // ---- matched-mock calibration (calibration/calibration.hpp) ---------------------------
  rep["calibration"] = nullptr;
  if (opt.calibrate > 0 && verdict != "undetermined") {
    try {
      auto maps = calibration::load_maps(in);
      calibration::CalibrationOptions co;
      co.n_mocks = static_cast<std::size_t>(opt.calibrate);
      co.seed = opt.seed;
      co.bootstrap_from_estimates = opt.bootstrap_from_estimates;
      auto cs = calibration::calibrate(calibration::matched_inputs_from_report(rep, in, maps, in.name), co);
      rep["calibration"] = calibration::to_json(cs);
      if (!statement.empty() && statement.back() == '.') statement.pop_back();
      statement += "; " + cs.statement + ".";
    } catch (const InputError& e) {
      rep["calibration"] = {{"status", "failed"}, {"reason", e.what()}};
      r.notes.push_back(std::string("calibration failed: ") + e.what());
    }
  }
  rep["verdict"] = verdict;
  rep["statement"] = statement;
  rep["stages"] = json::array();
  for (const auto& s : stages) {
    rep["stages"].push_back(s.to_json());
    if (s.status == "missing" || s.status == "failed") r.notes.push_back(s.name + " " + s.status + ": " + s.reason);
  }

  // ---- figures -------------------------------------------------------------------------
  if (opt.figures && intensity) {
    try {
      WorldCoord c0 = adopted ? adopted->world
                              : intensity->wcs.pixel_to_world({0.5 * (intensity->nx - 1), 0.5 * (intensity->ny - 1)});
      double cap = ap_radius ? 1.6 * *ap_radius : 0.0;
      double half = finite_extent_arcsec(*intensity, c0, cap);
      PixelOffsets po(*intensity, c0);
      int n = std::clamp(static_cast<int>(2 * half / po.pixel_scale_arcsec()), 40, opt.figure_grid);
      report::IntensityFigure f;
      f.galaxy = in.name;
      f.map = sky_grid(*intensity, c0, half, n);
      f.unit = intensity->unit;
      f.centres = marks;
      f.tail_pa_deg = tail_pa;
      f.tail_pa_err_deg = tail_err;
      f.error_ellipse_sigma = opt.error_ellipse_sigma;
      if (beam) f.beam = report::BeamShape{beam->bmaj_arcsec, beam->bmin_arcsec, beam->bpa_deg};
      f.aperture_radius = ap_radius;
      f.aperture_pa_deg = ap_pa;
      f.aperture_q = ap_q;
      std::string cap_text = "Line intensity about the adopted centre (east left, north up), every centre estimate with its " +
                             report::fmt(opt.error_ellipse_sigma, 0) +
                             "\u03c3 error ellipse, the split line perpendicular to the tail and the tail direction.";
      r.figures.push_back({"intensity", cap_text, report::intensity_figure(f)});
      if (aplane)
        r.figures.push_back({"asymmetry-plane",
                             "A = (L \u2212 T)/(L + T) if the centre were moved to each offset (nominal split angle); "
                             "the black line is A = 0; markers show the centre estimates.",
                             report::asymmetry_plane_figure(*aplane)});
      if (flipfig)
        r.figures.push_back({"flip-distance",
                             "The smallest centre shift that reverses the sign of A, for each split angle, against the "
                             "distance of the farthest plausible centre.",
                             report::flip_angle_figure(*flipfig)});
      if (bootfig)
        r.figures.push_back({"bootstrap",
                             "Bootstrap distribution of A over centre, split-angle and map-noise draws.",
                             report::bootstrap_figure(*bootfig)});
      if (velocity) {
        report::VelocityFigure vf;
        vf.galaxy = in.name;
        double vhalf = finite_extent_arcsec(*velocity, c0, cap);
        PixelOffsets pv(*velocity, c0);
        int nv = std::clamp(static_cast<int>(2 * vhalf / pv.pixel_scale_arcsec()), 40, opt.figure_grid);
        vf.velocity = sky_grid(*velocity, c0, vhalf, nv);
        if (vel_model) vf.model = sky_grid(*vel_model, c0, vhalf, nv);
        if (vel_residual) vf.residual = sky_grid(*vel_residual, c0, vhalf, nv);
        if (vsys_kms) {
          vf.vsys = *vsys_kms;
        } else {
          std::vector<double> f2;
          for (double v : velocity->data)
            if (std::isfinite(v)) f2.push_back(v);
          if (!f2.empty()) {
            std::nth_element(f2.begin(), f2.begin() + f2.size() / 2, f2.end());
            vf.vsys = f2[f2.size() / 2];
          }
        }
        vf.centres = marks;
        r.figures.push_back({"velocity",
                             vel_model ? "Observed velocity field, the tilted-ring model and the residual (observed \u2212 model)."
                                       : "Observed velocity field about its median (no kinematic model in this run).",
                             report::velocity_figure(vf)});
      }
      if (!ring_rows.empty()) {
        report::RotationCurveFigure rc;
        rc.galaxy = in.name;
        for (const auto& row : ring_rows) {
          auto get = [&](std::initializer_list<const char*> keys) {
            for (const char* k : keys)
              if (row.contains(k) && row[k].is_number()) return row[k].get<double>();
            return std::numeric_limits<double>::quiet_NaN();
          };
          rc.radius_arcsec.push_back(get({"radius_arcsec", "r_arcsec", "radius"}));
          rc.vrot_kms.push_back(get({"vrot_kms", "vrot"}));
          rc.vrot_err_kms.push_back(get({"vrot_err_kms", "vrot_err"}));
        }
        if (in.distance_mpc) rc.kpc_per_arcsec = *in.distance_mpc * std::numbers::pi / 648000.0 * 1000.0;
        r.figures.push_back({"rotation-curve", "Rotation velocity of each ring of the global tilted-ring fit.",
                             report::rotation_curve_figure(rc)});
      }
    } catch (const InputError& e) {
      r.notes.push_back(std::string("figures incomplete: ") + e.what());
    }
  }
  json figs = json::array();
  for (const auto& f : r.figures) figs.push_back({{"id", f.id}, {"file", "figures/" + f.id + ".svg"}, {"caption", f.caption}});
  rep["figures"] = figs;
  rep["notes"] = r.notes;
  return r;
}

void write_galaxy_outputs(const GalaxyResult& result, const std::string& dir) {
  fs::create_directories(fs::path(dir) / "figures");
  for (const auto& f : result.figures) write_text_file((fs::path(dir) / "figures" / (f.id + ".svg")).string(), f.svg);
  write_text_file((fs::path(dir) / "report.json").string(), dump_json(result.report));
}

}  // namespace fulcrum::pipeline
