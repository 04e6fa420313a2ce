// One galaxy, the whole chain, as a sequence of typed stages (see
// include/fulcrum/pipeline/galaxy_analysis.hpp). Each step below runs one
// stage of galaxy_stages.hpp, records its status and fills the summary.
#include "fulcrum/pipeline/galaxy_analysis.hpp"

#include <cmath>
#include <filesystem>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/settings_check.hpp"
#include "fulcrum/imaging/noise_estimate.hpp"
#include "fulcrum/io/atomic_file.hpp"
#include "fulcrum/pipeline/adopted_centre.hpp"
#include "fulcrum/pipeline/centre_asymmetries.hpp"
#include "fulcrum/core/number_text.hpp"
#include "fulcrum/pipeline/centre_curves.hpp"
#include "fulcrum/pipeline/galaxy_stages.hpp"
#include "fulcrum/pipeline/report_json.hpp"
#include "fulcrum/report/figure_files.hpp"

namespace fulcrum::pipeline {

namespace fs = std::filesystem;

namespace {

void record(GalaxySummary& s, const char* stage, StageStatus status, std::string reason = "") {
  s.stages.push_back({stage, status, std::move(reason)});
}

// A stage's InputError that names one of the galaxy's files (not a setting).
void note_unusable_input(GalaxySummary& s, const InputError& e) {
  if (!s.unusable_file.empty() || e.file().empty()) return;
  const auto& in = s.input;
  for (const auto* f : {&in.velocity, &in.velocity_error, &in.intensity, &in.intensity_error, &in.optical,
                        &in.optical_mask, &in.tail_image, &in.cube})
    if (!f->empty() && *f == e.file()) {
      s.unusable_file = e.file();
      s.unusable_problem = e.problem();
      return;
    }
}

// inputs -> the maps (empty on failure, with the reason): read from the
// files, or `given` in memory.
GalaxyMaps inputs_step(GalaxySummary& s, std::optional<GalaxyMaps>& given) {
  try {
    GalaxyMaps maps;
    if (given) {
      check_galaxy_maps(s.input, *given);
      s.provenance = maps_provenance(s.input, *given);
      maps = std::move(*given);
    } else {
      s.provenance = input_provenance(s.input);
      maps = load_galaxy_maps(s.input);
    }
    s.beam = maps.intensity->beam;
    record(s, "inputs", StageStatus::done);
    return maps;
  } catch (const InputError& e) {
    record(s, "inputs", StageStatus::failed, e.what());
    s.undetermined_reason = std::string("an input could not be read: ") + e.what();
    note_unusable_input(s, e);
    return {};
  }
}

void kinematics_step(const GalaxyMaps& maps, const kinematics::KinematicOptions& ko, GalaxySummary& s) {
  try {
    s.kinematics = fit_kinematic_centres(maps, ko);
  } catch (const InputError& e) {
    record(s, "kinematics", StageStatus::failed, e.what());
    s.failures.push_back(std::string("the kinematic fit could not run: ") + e.what());
    note_unusable_input(s, e);
    return;
  }
  const auto& fit = s.kinematics->fit;
  for (const auto& c : s.kinematics->centres) s.centres.push_back(c);
  if (s.kinematics->ok()) {
    record(s, "kinematics", StageStatus::done);
  } else {
    record(s, "kinematics", StageStatus::failed, "tilted-ring fit " + fit.status + ": " + fit.reason);
    s.failures.push_back("the kinematic fit " + fit.status + " (" + fit.reason + ")");
  }
}

void photometry_step(const GalaxyMaps& maps, GalaxySummary& s) {
  if (!maps.optical) {
    record(s, "photometry", StageStatus::skipped, "no optical image given");
    return;
  }
  const Centre* rings = nullptr;
  for (const auto& c : s.centres)
    if (c.method == CentreMethod::kinematic_rings && c.ok()) rings = &c;
  try {
    PhotometryResult p = measure_photometry(maps, s.input, s.seed, rings, s.beam);
    for (const auto& c : p.centres) s.centres.push_back(c);
    const bool ok = p.summary.ok;
    const std::string why = ok ? "" : p.summary.reason;
    s.photometry = std::move(p);
    record(s, "photometry", ok ? StageStatus::done : StageStatus::failed, why);
  } catch (const InputError& e) {
    record(s, "photometry", StageStatus::failed, e.what());
  }
}

// Centres given from outside (`centre_from`): plausible centres with their
// own A. One that falls outside the line map is kept as a failed estimate
// with the reason (it cannot be split about).
void external_centres_step(const GalaxyMaps& maps, GalaxySummary& s) {
  if (s.input.external_centres.empty()) return;
  std::vector<std::string> outside;
  for (const ExternalCentre& e : s.input.external_centres) {
    const Eigen::Matrix2d cov = Eigen::Matrix2d::Identity() * e.err_arcsec * e.err_arcsec;
    Centre c = measured_centre(CentreMethod::external, {e.ra_deg, e.dec_deg}, cov, "given (centre_from)");
    c.label = e.name;
    if (maps.intensity) {
      PixelCoord p{NAN, NAN};
      try {
        p = maps.intensity->wcs.world_to_pixel(c.position);
      } catch (const InputError&) {
        // not on the map's projection at all: outside
      }
      const bool inside = std::isfinite(p.x) && std::isfinite(p.y) && p.x >= -0.5 && p.y >= -0.5 &&
                          p.x <= maps.intensity->nx - 0.5 && p.y <= maps.intensity->ny - 0.5;
      if (!inside) {
        c = failed_centre(CentreMethod::external, "lies outside the line map " + s.input.intensity, c.provenance);
        c.label = e.name;
        outside.push_back(e.name);
      } else {
        c.pixel_fits = PixelCoord{fits_pixel(p.x), fits_pixel(p.y)};
      }
    }
    s.centres.push_back(c);
  }
  if (outside.empty()) {
    record(s, "external centres", StageStatus::done);
  } else {
    std::string names;
    for (const auto& n : outside) names += (names.empty() ? "" : ", ") + n;
    record(s, "external centres", StageStatus::failed, "outside the line map: " + names);
  }
}

// The covariance of the tilted-ring centre scaled to what re-fits of mocks
// of the fitted disc show (calibration::bootstrap_centre_covariance), before
// any stage uses it; part of the calibration (off with it).
void centre_bootstrap_step(const GalaxyMaps& maps, const AnalysisOptions& opt, GalaxySummary& s) {
  if (opt.calibrate <= 0 || !s.kinematics || !s.kinematics->ok() || !maps.intensity || !maps.velocity) return;
  try {
    s.centre_bootstrap =
        widen_centre_covariance(s.kinematics->fit, *maps.velocity,
                                maps.velocity_error ? &*maps.velocity_error : nullptr, *maps.intensity, opt.seed);
  } catch (const InputError& e) {
    s.notes.push_back(std::string("centre re-fit bootstrap not run: ") + e.what());
    return;
  }
  const calibration::CentreBootstrap& b = *s.centre_bootstrap;
  if (!b.applied) {
    s.notes.push_back("centre re-fit bootstrap not applied: " + b.reason);
    return;
  }
  if (b.scale2 > 1.0)
    s.notes.push_back("the kinematic centre's error was widened x" + fixed_text(std::sqrt(b.scale2), 2) + ": " +
                      std::to_string(b.refits) + " re-fitted mocks of the fitted disc scatter more than its "
                      "covariance says (mean m^2 " + fixed_text(b.mean_m2, 2) + ", 2 expected)");
  if (b.pa_scale2 > 1.0 || b.inc_scale2 > 1.0)
    s.notes.push_back(std::to_string(b.refits) + " re-fitted mocks of the fitted disc widened the PA error x" +
                      fixed_text(std::sqrt(b.pa_scale2), 2) +
                      " and the inclination error x" + fixed_text(std::sqrt(b.inc_scale2), 2) +
                      " (mean squared pulls " + fixed_text(b.mean_pa_pull2, 2) + " and " +
                      fixed_text(b.mean_inc_pull2, 2) + ", 1 expected)");
  for (auto& c : s.kinematics->centres)
    if (c.method == CentreMethod::kinematic_rings && c.ok()) c.covariance *= b.scale2;
  for (auto& c : s.centres)
    if (c.method == CentreMethod::kinematic_rings && c.ok()) c.covariance *= b.scale2;
}

void adopted_centre_step(const GalaxyMaps& maps, GalaxySummary& s) {
  const AdoptedCentre a = adopt_centre(s.centres, !maps.optical);
  s.adopted = a.index;
  if (a.index && s.centres[*a.index].method != CentreMethod::kinematic_rings)
    s.notes.push_back("The adopted centre is " + s.centres[*a.index].id() +
                      " because the kinematic tilted-ring centre is not available.");
  if (!a.index && s.undetermined_reason.empty()) s.undetermined_reason = a.reason;
}

void robustness_step(const GalaxyMaps& maps, const AnalysisOptions& opt, GalaxySummary& s) {
  if (!s.undetermined_reason.empty() || !s.adopted) {
    const std::string why = s.undetermined_reason.empty() ? "no adopted centre" : s.undetermined_reason;
    record(s, "split", StageStatus::skipped, why);
    record(s, "robustness", StageStatus::skipped, why);
    return;
  }
  if (!s.input.rms && !maps.intensity_error) {
    // No noise given: estimate it from the emission-free pixels, or refuse
    // (never a significance-free analysis; imaging/noise_estimate.hpp).
    const NoiseEstimate ne = estimate_map_noise(*maps.intensity);
    if (!ne.ok) {
      const std::string why = s.input.intensity + ": no intensity error map or rms given, and the noise cannot be "
                              "estimated: " + ne.reason;
      record(s, "split", StageStatus::failed, why);
      s.undetermined_reason = "the split could not be measured: " + why;
      return;
    }
    s.estimated_rms = ne.rms;  // used by the split, the bootstrap and the calibration alike
    s.notes.push_back(ne.sentence(maps.intensity->unit) + (ne.check.empty() ? "" : "; " + ne.check));
  }
  s.aperture = disc_aperture(s.kinematics ? &*s.kinematics : nullptr, s.beam);
  if (!s.aperture) s.notes.push_back("No kinematic disc geometry: the halves use every finite pixel of the line map.");
  try {
    s.robustness = measure_robustness(maps, s, chain_settings(opt));
  } catch (const InputError& e) {
    record(s, "split", StageStatus::failed, e.what());
    s.undetermined_reason = std::string("the split could not be measured: ") + e.what();
    return;
  }
  const auto& v = s.robustness->verdict;
  s.verdict = v.verdict;
  s.statement = v.statement;
  if (s.verdict == robustness::Verdict::undetermined) s.undetermined_reason = v.reason;
  record(s, "split", StageStatus::done);
  record(s, "robustness", StageStatus::done);
  const bool vsys = s.kinematics && s.kinematics->ok();
  s.molecular_gas = molecular_gas(s.input, s.robustness->split,
                                  vsys ? std::optional<double>(s.kinematics->fit.vsys_kms) : std::nullopt);
}

void verdict_statement_step(GalaxySummary& s) {
  if (s.verdict != robustness::Verdict::undetermined) return;
  if (s.undetermined_reason.empty()) s.undetermined_reason = "the measurement could not be made";
  if (s.statement.empty()) s.statement = s.input.name + ": no verdict (undetermined): " + s.undetermined_reason + ".";
}

void calibration_step(const GalaxyMaps& maps, const AnalysisOptions& opt, GalaxySummary& s) {
  if (opt.calibrate <= 0 || s.verdict == robustness::Verdict::undetermined) return;
  s.calibration = calibrate_verdict(s, maps, opt);
  if (s.calibration->summary && s.robustness) {
    // The matched mocks' false-robust rate enters the verdict
    // (robustness::apply_calibration, docs/robustness.md).
    auto& v = s.robustness->verdict;
    v = robustness::apply_calibration(v, calibration::verdict_evidence(*s.calibration->summary),
                                      s.robustness->settings.verdict);
    s.verdict = v.verdict;
    s.statement = v.statement;
  }
  if (s.calibration->summary) {
    if (!s.statement.empty() && s.statement.back() == '.') s.statement.pop_back();
    s.statement += "; " + s.calibration->summary->statement + ".";
  } else {
    s.notes.push_back("calibration failed: " + s.calibration->failure);
  }
}

// A at each kind of centre, after the verdict (and its calibration) is
// final: one more sentence of the statement (pipeline/centre_asymmetries.hpp).
void centre_sentence_step(GalaxySummary& s) {
  const std::string t = centre_sentence(s);
  if (!t.empty()) s.statement += " " + t;
}

void stage_notes(GalaxySummary& s) {
  for (const auto& st : s.stages)
    if (st.status == StageStatus::failed) s.notes.push_back(st.stage + " failed: " + st.reason);
}

}  // namespace

bool bootstrap_centres_from_estimates(const std::string& name) {
  if (name == "adopted") return false;
  if (name == "all-estimates") return true;
  throw SettingError("bootstrap_centres", "'" + name + "'", "adopted or all-estimates");
}

robustness::ChainSettings chain_settings(const AnalysisOptions& o) {
  robustness::ChainSettings c;
  c.seed = o.seed;
  c.n_draws = static_cast<std::size_t>(o.draws);
  c.bootstrap_estimates = o.bootstrap_from_estimates;
  c.figure_data = o.figures;
  return c;
}

namespace {

GalaxyResult analyse(const GalaxyInput& in, std::optional<GalaxyMaps> given, const AnalysisOptions& opt) {
  GalaxyResult r;
  r.name = in.name;
  GalaxySummary& s = r.summary;
  s.input = in;
  s.seed = opt.seed;
  s.draws = opt.draws;
  s.bootstrap_from_estimates = opt.bootstrap_from_estimates;
  s.created_utc = created_utc();

  const GalaxyMaps maps = inputs_step(s, given);
  if (s.undetermined_reason.empty()) {
    kinematics_step(maps, kinematic_options_for(in), s);
    photometry_step(maps, s);
    external_centres_step(maps, s);
  }
  centre_bootstrap_step(maps, opt, s);
  adopted_centre_step(maps, s);
  robustness_step(maps, opt, s);
  verdict_statement_step(s);
  calibration_step(maps, opt, s);
  centre_sentence_step(s);
  stage_notes(s);
  r.figures = galaxy_figures(maps, s, opt, s.notes);
  for (const auto& f : r.figures) s.figures.push_back({f.id, "figures/" + f.id + ".svg", f.caption});
  if (opt.figures) {
    CentreCurves curves = centre_curves(s);
    for (report::Table* t : {&curves.versus_angle, &curves.versus_offset})
      if (t->rows() > 0) r.curves.push_back(std::move(*t));
  }
  r.notes = s.notes;
  r.report = to_json(s);
  return r;
}

}  // namespace

GalaxyResult analyse_galaxy(const GalaxyInput& in, const AnalysisOptions& opt) {
  return analyse(in, std::nullopt, opt);
}

GalaxyResult analyse_galaxy(const GalaxyInput& in, GalaxyMaps maps, const AnalysisOptions& opt) {
  return analyse(in, std::move(maps), opt);
}

void write_galaxy_outputs(const GalaxyResult& result, const std::string& dir) {
  fs::create_directories(fs::path(dir) / "figures");
  for (const auto& f : result.figures) report::write_figure(f.canvas, (fs::path(dir) / "figures" / f.id).string());
  for (const auto& t : result.curves) report::write_ecsv((fs::path(dir) / "figures" / (t.name + ".ecsv")).string(), t);
  write_text_file((fs::path(dir) / "report.json").string(), dump_json(result.report));
}

}  // namespace fulcrum::pipeline
