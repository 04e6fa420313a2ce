// analyse, calibrate and read_results for the Python module, and the
// Summary they return: everything one galaxy's analysis found
// (pipeline::GalaxySummary), read through stable fields, with to_dict()
// giving report.json's content. Mirrors `fulcrum analyse` and
// `fulcrum calibrate` (src/cli/analyse.cpp, calibrate.cpp): the galaxy's
// settings are checked by pipeline/input_settings.hpp, the analysis is
// pipeline::analyse_galaxy on the maps given (paths are read, arrays
// converted, both as files are checked).
#include <pybind11/stl.h>

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <sstream>

#include "bindings.hpp"
#include "convert.hpp"
#include "fulcrum/calibration/calibration.hpp"
#include "fulcrum/core/error.hpp"
#include "fulcrum/core/settings_check.hpp"
#include "fulcrum/pipeline/galaxy_analysis.hpp"
#include "fulcrum/report/figure_files.hpp"
#include "fulcrum/pipeline/galaxy_stages.hpp"
#include "fulcrum/pipeline/input_settings.hpp"
#include "fulcrum/pipeline/report_json.hpp"
#include "fulcrum/pipeline/report_reader.hpp"
#include "fulcrum/pipeline/sample_run.hpp"
#include "fulcrum/sky/offset_frame.hpp"
#include "kinematic_keywords.hpp"

namespace fulcrum::python {

namespace {

namespace setting = pipeline::setting;

// What the Python Summary holds.
struct Summary {
  pipeline::GalaxySummary summary;
  nlohmann::json report;                    // report.json's content
  std::vector<pipeline::FigureFile> figures;  // SVG text (analyse only)
};

const robustness::AnalysisSummary* robustness_of(const Summary& s) {
  return s.summary.robustness ? &*s.summary.robustness : nullptr;
}

// A number of the robustness chain, NaN when the split was not measured.
template <class Get>
double chain_number(const Summary& s, Get get) {
  const auto* r = robustness_of(s);
  return r && s.summary.verdict != robustness::Verdict::undetermined ? get(*r) : NAN;
}

// One centre through its stable fields: RA/Dec (deg), covariance (arcsec^2,
// east-north), offset from the adopted centre (arcsec), status and reason.
py::dict centre_dict(const Centre& c, const Centre* adopted) {
  py::dict d;
  d["id"] = c.id();
  d["status"] = c.ok() ? "ok" : "failed";
  d["reason"] = c.reason;
  d["ra_deg"] = c.ok() ? c.position.ra_deg : NAN;
  d["dec_deg"] = c.ok() ? c.position.dec_deg : NAN;
  const bool offset = c.ok() && adopted && adopted->ok();
  const SkyOffset o = offset ? OffsetFrame(adopted->position).to_offset(c.position) : SkyOffset{NAN, NAN};
  d["east_arcsec"] = o.east;
  d["north_arcsec"] = o.north;
  d["cov_arcsec2"] = c.ok() ? py::make_tuple(py::make_tuple(c.covariance(0, 0), c.covariance(0, 1)),
                                             py::make_tuple(c.covariance(1, 0), c.covariance(1, 1)))
                            : py::object(py::none());
  return d;
}

py::object centres_table(const Summary& s) {
  report::Table t;
  t.name = "centres";
  t.caption = "Every centre estimate of " + s.summary.input.name + ", offsets from the adopted centre";
  std::vector<std::string> ids, status, reasons;
  std::vector<double> ra, dec, east, north, ee, en, nn;
  const Centre* adopted = s.summary.adopted_centre();
  for (const Centre& c : s.summary.centres) {
    py::dict d = centre_dict(c, adopted);
    ids.push_back(c.id());
    status.push_back(c.ok() ? "ok" : "failed");
    reasons.push_back(c.reason);
    ra.push_back(d["ra_deg"].cast<double>());
    dec.push_back(d["dec_deg"].cast<double>());
    east.push_back(d["east_arcsec"].cast<double>());
    north.push_back(d["north_arcsec"].cast<double>());
    ee.push_back(c.ok() ? c.covariance(0, 0) : NAN);
    en.push_back(c.ok() ? c.covariance(0, 1) : NAN);
    nn.push_back(c.ok() ? c.covariance(1, 1) : NAN);
  }
  t.add_string("id", "Centre estimate", ids);
  t.add_string("status", "ok or failed", status);
  t.add_float("ra_deg", "deg", "Right ascension", ra, 7);
  t.add_float("dec_deg", "deg", "Declination", dec, 7);
  t.add_float("east_arcsec", "arcsec", "Offset east of the adopted centre", east);
  t.add_float("north_arcsec", "arcsec", "Offset north of the adopted centre", north);
  t.add_float("cov_ee", "arcsec2", "Covariance east-east", ee);
  t.add_float("cov_en", "arcsec2", "Covariance east-north", en);
  t.add_float("cov_nn", "arcsec2", "Covariance north-north", nn);
  t.add_string("reason", "Why the estimate failed", reasons);
  return table_to_python(t);
}

// The galaxy's inputs and settings, as `analyse` and `calibrate` take them.
struct GalaxyArguments {
  py::object velocity, intensity, velocity_error, intensity_error, optical, optical_mask, tail_image;
  py::object rms, clip_snr, psf_fwhm_arcsec, tail_pa_deg, tail_pa_err_deg, centre_from, name;
  py::object distance_mpc, co_line, alpha_co, co_ratio_21, redshift, kinematics;
};

pipeline::GalaxyInput galaxy_input(const GalaxyArguments& a, bool need_tail) {
  pipeline::GalaxyInput in;
  in.name = text_argument(a.name, "name");
  if (!a.rms.is_none()) {
    if (!a.intensity_error.is_none())
      throw InputError("", "give either intensity_error (a map) or rms (one number), not both");
    in.rms = setting::rms(number_argument(a.rms, "rms"));
  }
  if (!a.clip_snr.is_none()) in.clip_snr = setting::clip_snr(number_argument(a.clip_snr, "clip_snr"));
  if (!a.psf_fwhm_arcsec.is_none())
    in.psf_fwhm_arcsec = setting::psf_fwhm_arcsec(number_argument(a.psf_fwhm_arcsec, "psf_fwhm_arcsec"));
  if (!a.tail_pa_deg.is_none()) in.tail_pa_deg = setting::tail_pa_deg(number_argument(a.tail_pa_deg, "tail_pa_deg"));
  in.tail_pa_err_deg = setting::tail_pa_err_deg(number_argument(a.tail_pa_err_deg, "tail_pa_err_deg"));
  if (!a.centre_from.is_none()) {
    std::vector<std::string> texts;
    for (auto item : py::reinterpret_borrow<py::iterable>(a.centre_from)) texts.push_back(text_argument(item, "centre_from"));
    in.external_centres = setting::centres_from(texts);
  }
  if (!a.distance_mpc.is_none()) in.distance_mpc = setting::distance_mpc(number_argument(a.distance_mpc, "distance_mpc"));
  if (!a.co_line.is_none()) in.molecular.co_line = setting::co_line(text_argument(a.co_line, "co_line"));
  if (!a.alpha_co.is_none()) in.molecular.alpha_co = setting::alpha_co(number_argument(a.alpha_co, "alpha_co"));
  if (!a.co_ratio_21.is_none()) in.molecular.co_ratio_21 = setting::co_ratio_21(number_argument(a.co_ratio_21, "co_ratio_21"));
  if (!a.redshift.is_none()) in.molecular.redshift = setting::redshift(number_argument(a.redshift, "redshift"));
  in.kinematic = kinematic_settings_from(a.kinematics);
  if (need_tail && !in.tail_pa_deg && a.tail_image.is_none()) throw InputError("", "give tail_pa_deg or tail_image");
  in.velocity = map_name(a.velocity, "velocity");
  in.intensity = map_name(a.intensity, "intensity");
  in.velocity_error = map_name(a.velocity_error, "velocity_error");
  in.intensity_error = map_name(a.intensity_error, "intensity_error");
  in.optical = map_name(a.optical, "optical");
  in.optical_mask = map_name(a.optical_mask, "optical_mask");
  in.tail_image = map_name(a.tail_image, "tail_image");
  return in;
}

// Every map, read or converted; an unusable one raises InputError.
pipeline::GalaxyMaps galaxy_maps(const GalaxyArguments& a) {
  pipeline::GalaxyMaps m;
  m.velocity = map_from_python(a.velocity, "velocity");
  m.intensity = map_from_python(a.intensity, "intensity");
  m.velocity_error = optional_map(a.velocity_error, "velocity_error");
  m.intensity_error = optional_map(a.intensity_error, "intensity_error");
  m.optical = optional_map(a.optical, "optical");
  m.optical_mask = optional_map(a.optical_mask, "optical_mask");
  m.tail_image = optional_map(a.tail_image, "tail_image");
  return m;
}

pipeline::AnalysisOptions analysis_options(const py::object& seed, const py::object& draws, const py::object& calibrate,
                                           const py::object& bootstrap_centres, bool figures) {
  pipeline::AnalysisOptions o;
  o.seed = setting::seed(integer_argument(seed, "seed"));
  o.draws = setting::draws(integer_argument(draws, "draws"));
  o.calibrate = setting::calibrate(integer_argument(calibrate, "calibrate"));
  o.bootstrap_from_estimates =
      pipeline::bootstrap_centres_from_estimates(text_argument(bootstrap_centres, "bootstrap_centres"));
  o.figures = figures;
  return o;
}

Summary analyse(const GalaxyArguments& a, const py::object& seed, const py::object& draws, const py::object& calibrate,
                const py::object& bootstrap_centres, bool figures, const py::object& progress) {
  const pipeline::GalaxyInput in = galaxy_input(a, true);
  const pipeline::AnalysisOptions o = analysis_options(seed, draws, calibrate, bootstrap_centres, figures);
  pipeline::GalaxyMaps maps = galaxy_maps(a);
  pipeline::GalaxyResult r =
      run_released(progress, [&] { return pipeline::analyse_galaxy(in, std::move(maps), o); });
  return Summary{std::move(r.summary), std::move(r.report), std::move(r.figures)};
}

py::dict calibrate(const GalaxyArguments& a, const Summary* from, const py::object& seed, const py::object& draws,
                   const py::object& mocks, const py::object& mock_draws, const py::object& refit_every, bool refit,
                   bool per_mock, const py::object& progress) {
  const pipeline::GalaxyInput in = galaxy_input(a, from == nullptr);
  const int n_draws = setting::draws(integer_argument(draws, "draws"));
  calibration::CalibrationOptions co;
  const std::int64_t n_mocks = integer_argument(mocks, "mocks"), n_mock_draws = integer_argument(mock_draws, "mock_draws");
  calibration::check_mock_work("mocks", n_mocks, n_mock_draws);  // ranges and their product, before any work
  co.n_mocks = static_cast<std::size_t>(n_mocks);
  co.n_draws = static_cast<std::size_t>(n_mock_draws);
  co.refit_every = static_cast<std::size_t>(check_integer_in_range("refit_every", integer_argument(refit_every, "refit_every"), 1, 100000));
  co.refit_centre = refit;
  const std::optional<std::uint64_t> given_seed =
      seed.is_none() ? std::nullopt : std::optional<std::uint64_t>(setting::seed(integer_argument(seed, "seed")));
  const pipeline::GalaxyMaps maps = galaxy_maps(a);
  struct Out {
    calibration::CalibrationSummary calibration;
    robustness::Verdict verdict;
  };
  Out out = run_released(progress, [&] {
    pipeline::GalaxySummary summary;
    if (from) {
      summary = from->summary;
    } else {
      pipeline::AnalysisOptions o;  // as `fulcrum calibrate` runs the analysis
      o.seed = given_seed.value_or(1);
      o.draws = n_draws;
      o.figures = false;
      summary = pipeline::analyse_galaxy(in, maps, o).summary;
    }
    co.seed = summary.robustness && !given_seed ? summary.seed : given_seed.value_or(1);
    pipeline::take_summary_settings(summary, co);
    const calibration::MatchedInputs mi = pipeline::matched_inputs(summary, maps);
    return Out{calibration::calibrate(mi, co), summary.verdict};
  });
  nlohmann::json j = calibration::to_json(out.calibration, per_mock);
  j["galaxy"] = out.calibration.galaxy;
  j["verdict"] = robustness::verdict_name(out.verdict);
  j["mock_draws"] = co.n_draws;
  j["refit_every"] = co.refit_centre ? nlohmann::json(co.refit_every) : nlohmann::json(nullptr);
  j["seconds"] = out.calibration.seconds;
  return to_python(j);
}

Summary read_report(const std::string& path) {
  Summary s;
  s.summary = pipeline::read_report_file(path);  // every refusal comes from the one reader
  std::ifstream file(path, std::ios::binary);
  std::stringstream text;
  text << file.rdbuf();
  s.report = nlohmann::json::parse(text.str());
  return s;
}

// One galaxy (a report.json, or the folder holding it), or a sample run's
// folder: every <galaxy>/report.json in it, in manifest order.
py::object read_results(const py::object& where) {
  namespace fs = std::filesystem;
  const std::string path = py::str(py::module_::import("os").attr("fspath")(where));
  const fs::path one = fs::is_directory(path) ? fs::path(path) / "report.json" : fs::path(path);
  if (!fs::is_directory(path) || fs::exists(one)) return py::cast(read_report(one.string()));
  std::vector<fs::path> folders;
  for (const auto& e : fs::directory_iterator(path))
    if (e.is_directory() && fs::exists(e.path() / "report.json")) folders.push_back(e.path());
  if (folders.empty()) throw InputError(path, "holds neither a report.json nor <galaxy>/report.json folders");
  std::sort(folders.begin(), folders.end());
  std::vector<Summary> galaxies;
  for (const auto& f : folders) galaxies.push_back(read_report((f / "report.json").string()));
  std::stable_sort(galaxies.begin(), galaxies.end(), [](const Summary& a, const Summary& b) {
    return (a.summary.sample ? a.summary.sample->index : 0) < (b.summary.sample ? b.summary.sample->index : 0);
  });
  py::list out;
  for (auto& g : galaxies) out.append(py::cast(std::move(g)));
  return out;
}

GalaxyArguments arguments_of(py::object velocity, py::object intensity, const py::kwargs& kw) {
  GalaxyArguments a;
  a.velocity = std::move(velocity);
  a.intensity = std::move(intensity);
  auto take = [&](const char* key, py::object fallback = py::none()) {
    return kw.contains(key) ? py::reinterpret_borrow<py::object>(kw[key]) : fallback;
  };
  a.velocity_error = take("velocity_error");
  a.intensity_error = take("intensity_error");
  a.optical = take("optical");
  a.optical_mask = take("optical_mask");
  a.tail_image = take("tail_image");
  a.rms = take("rms");
  a.clip_snr = take("clip_snr");
  a.psf_fwhm_arcsec = take("psf_fwhm_arcsec");
  a.tail_pa_deg = take("tail_pa_deg");
  a.tail_pa_err_deg = take("tail_pa_err_deg", py::float_(10.0));
  a.centre_from = take("centre_from");
  a.name = take("name", py::str("galaxy"));
  a.distance_mpc = take("distance_mpc");
  a.co_line = take("co_line");
  a.alpha_co = take("alpha_co");
  a.co_ratio_21 = take("co_ratio_21");
  a.redshift = take("redshift");
  a.kinematics = take("kinematics");
  return a;
}

// The galaxy keywords both functions take (for the check of unknown ones).
const std::vector<std::string> kGalaxyKeywords = {
    "velocity_error", "intensity_error", "optical", "optical_mask", "tail_image", "rms", "clip_snr",
    "psf_fwhm_arcsec", "tail_pa_deg", "tail_pa_err_deg", "centre_from", "name", "distance_mpc", "co_line",
    "alpha_co", "co_ratio_21", "redshift", "kinematics"};

void refuse_unknown(const char* function, const py::kwargs& kw) {
  for (auto item : kw) {
    const std::string key = py::str(item.first);
    if (std::find(kGalaxyKeywords.begin(), kGalaxyKeywords.end(), key) == kGalaxyKeywords.end())
      throw py::type_error(std::string(function) + "() got an unexpected keyword argument '" + key + "'");
  }
}

const char* kGalaxyDoc = R"(
The galaxy (keywords named as in a sample manifest, docs/pipeline.md):
velocity, intensity: the velocity field (km/s or m/s) and integrated line intensity map,
  each a FITS path or (array, header); velocity_error, intensity_error: their 1-sigma
  error maps (or rms: one 1-sigma for every intensity pixel, map units); clip_snr: the
  intensity map was clipped below this S/N; optical, optical_mask: an optical image for
  the photometric centres and its mask; psf_fwhm_arcsec: its PSF FWHM (arcsec);
  tail_pa_deg: the direction of the gas tail from the centre (deg, north through east), or
  tail_image: an image to measure it from; tail_pa_err_deg: its error (deg, default 10);
  centre_from: centres given from outside, a list of "NAME=RA,DEC,ERR" (deg, deg, arcsec);
  name: the galaxy's name; distance_mpc (Mpc); co_line ("1-0" or "2-1"), alpha_co,
  co_ratio_21, redshift: molecular-gas masses of the halves; kinematics: a dict of
  kinematic-fit settings (as `fulcrum.kinematics` takes them, e.g. {"pa": 36.0}).
progress: a callable (label, done, total) called as the work advances, or None.)";

void bind_summary(py::module_& m) {
  py::class_<Summary>(m, "Summary",
                      "Everything one galaxy's analysis found. Angles in degrees (PA north through east), "
                      "offsets in arcsec, covariances in arcsec^2 on (east, north). A = (L - T)/(L + T), "
                      "positive = leading-side excess. Numbers are NaN when the verdict is undetermined.")
      .def_property_readonly("name", [](const Summary& s) { return s.summary.input.name; })
      .def_property_readonly("verdict", [](const Summary& s) { return robustness::verdict_name(s.summary.verdict); },
                             "robust, marginal, centre-sensitive, reversed or undetermined")
      .def_property_readonly("statement", [](const Summary& s) { return s.summary.statement; },
                             "One plain sentence giving the verdict and the numbers behind it")
      .def_property_readonly("verdict_reason", [](const Summary& s) -> py::object {
        if (s.summary.verdict != robustness::Verdict::undetermined) return py::none();
        return py::str(s.summary.undetermined_reason);
      }, "Why the verdict is undetermined (None otherwise)")
      .def_property_readonly("seed", [](const Summary& s) { return s.summary.seed; })
      .def_property_readonly("draws", [](const Summary& s) { return s.summary.draws; })
      .def_property_readonly("asymmetry", [](const Summary& s) {
        return chain_number(s, [](const auto& r) { return r.split.asymmetry; });
      }, "A at the adopted centre (dimensionless)")
      .def_property_readonly("asymmetry_err", [](const Summary& s) {
        return chain_number(s, [](const auto& r) { return r.split.asymmetry_err; });
      }, "1-sigma error of A from the map noise")
      .def_property_readonly("p_positive", [](const Summary& s) {
        return chain_number(s, [](const auto& r) { return r.bootstrap.p_positive; });
      }, "Bootstrap probability that A > 0 (P(A>0) of the summary table; report.json: robustness.p_leading)")
      .def_property_readonly("flip_distance_arcsec", [](const Summary& s) {
        return chain_number(s, [](const auto& r) { return r.flip.nominal.found ? r.flip.nominal.distance_arcsec : NAN; });
      }, "How far the centre must move (arcsec) to change the sign of A; NaN when no move does")
      .def_property_readonly("tail_pa_deg", [](const Summary& s) {
        return chain_number(s, [](const auto& r) { return r.tail_pa_deg; });
      }, "The tail direction used (deg, north through east)")
      .def_property_readonly("adopted_centre", [](const Summary& s) -> py::object {
        const Centre* c = s.summary.adopted_centre();
        if (!c) return py::none();
        return centre_dict(*c, c);
      }, "The adopted centre: id, ra_deg, dec_deg, cov_arcsec2 ((ee, en), (ne, nn)), or None")
      .def_property_readonly("centres", &centres_table,
                             "Every centre estimate: RA/Dec (deg), offset from the adopted centre (arcsec), "
                             "covariance (arcsec^2), status and reason (astropy Table, else a dict)")
      .def_property_readonly("kinematics", [](const Summary& s) { return to_python(s.report.value("kinematics", nlohmann::json())); },
                             "The kinematic block of report.json (PA, inclination, vsys, rings)")
      .def_property_readonly("notes", [](const Summary& s) { return s.summary.notes; })
      .def_property_readonly("figures", [](const Summary& s) {
        py::dict d;
        for (const auto& f : s.figures) d[py::str(f.id)] = report::figure_bytes(f.canvas, report::FigureFormat::svg);
        return d;
      }, "The figures as SVG text by id (from analyse with figures=True; empty otherwise)")
      .def("table", [](const Summary& s) { return table_to_python(pipeline::robustness_table({s.summary})); },
           "The robustness table row of this galaxy, as `fulcrum run` writes it for a sample")
      .def("to_dict", [](const Summary& s) { return to_python(s.report); },
           "report.json's content as a dict (docs/report.md)")
      .def("__repr__", [](const Summary& s) {
        return "<fulcrum.Summary " + s.summary.input.name + ": " + robustness::verdict_name(s.summary.verdict) + ">";
      });
}

}  // namespace

void bind_galaxy_functions(py::module_& m) {
  bind_summary(m);

  m.def(
      "analyse",
      [](py::object velocity, py::object intensity, py::object seed, py::object draws, py::object calibrate,
         py::object bootstrap_centres, bool figures, py::object progress, const py::kwargs& kw) {
        refuse_unknown("analyse", kw);
        return analyse(arguments_of(std::move(velocity), std::move(intensity), kw), seed, draws, calibrate,
                       bootstrap_centres, figures, progress);
      },
      py::arg("velocity"), py::arg("intensity"), py::kw_only(), py::arg("seed") = 1, py::arg("draws") = 20000,
      py::arg("calibrate") = calibration::kDefaultCalibrationMocks, py::arg("bootstrap_centres") = "adopted",
      py::arg("figures") = true, py::arg("progress") = py::none(),
      (std::string("One galaxy, the whole chain, as `fulcrum analyse`: kinematic and photometric centres,\n"
                   "halves at every centre, flip distance, bootstrap, verdict. Returns a Summary.\n\n"
                   "seed: of every random draw; draws: bootstrap draws (100 .. 1e7); calibrate: matched\n"
                   "mocks per set (0: no calibration); bootstrap_centres: \"adopted\" or \"all-estimates\";\n"
                   "figures: make the figures (Summary.figures) and their data.\n") + kGalaxyDoc)
          .c_str());
  m.def(
      "calibrate",
      [](py::object velocity, py::object intensity, py::object summary, py::object seed, py::object draws,
         py::object mocks, py::object mock_draws, py::object refit_every, bool refit, bool per_mock,
         py::object progress, const py::kwargs& kw) {
        refuse_unknown("calibrate", kw);
        const Summary* from = summary.is_none() ? nullptr : &summary.cast<const Summary&>();
        return calibrate(arguments_of(std::move(velocity), std::move(intensity), kw), from, seed, draws, mocks,
                         mock_draws, refit_every, refit, per_mock, progress);
      },
      py::arg("velocity"), py::arg("intensity"), py::kw_only(), py::arg("summary") = py::none(),
      py::arg("seed") = py::none(), py::arg("draws") = 20000, py::arg("mocks") = 100, py::arg("mock_draws") = 2000,
      py::arg("refit_every") = 1, py::arg("refit") = true, py::arg("per_mock") = false,
      py::arg("progress") = py::none(),
      (std::string("Matched-mock calibration of one galaxy's verdict, as `fulcrum calibrate`: how often the\n"
                   "analysis calls a symmetric disc with this galaxy's beam, noise, masking and centre errors\n"
                   "robust. summary: a Summary from analyse() or read_results() (else the analysis is run\n"
                   "first, seed and draws as for analyse); mocks: per set; mock_draws: bootstrap draws per\n"
                   "mock; refit_every: re-fit the kinematic centre on every k-th mock (refit=False: never);\n"
                   "seed: default the analysis' seed. Returns calibration.json's content as a dict.\n") +
       kGalaxyDoc)
          .c_str());
  m.def("read_results", &read_results, py::arg("path"),
        "Results as the sample tables read them (the one report.json reader): a Summary from a report.json "
        "or the folder holding it, or a list of Summaries (manifest order) from a sample run's folder "
        "(`fulcrum run` or `merge`: <galaxy>/report.json). Summary.figures is empty.");
  m.def(
      "robustness_table",
      [](const std::vector<const Summary*>& galaxies) {
        std::vector<pipeline::GalaxySummary> summaries;
        for (const Summary* g : galaxies) summaries.push_back(g->summary);
        return table_to_python(pipeline::robustness_table(summaries));
      },
      py::arg("summaries"),
      "The sample's robustness table (one row per galaxy, as `fulcrum run` writes it) for a list of Summaries; "
      "each numeric column's description names its place in report.json.");
}

}  // namespace fulcrum::python
