// A sample run, merging shards, and the sample products (see the header).
#include "fulcrum/pipeline/sample_run.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <map>
#include <set>
#include <sstream>

#include <omp.h>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/log.hpp"
#include "fulcrum/core/version.hpp"
#include "fulcrum/io/atomic_file.hpp"
#include "fulcrum/pipeline/cube_maps.hpp"
#include "fulcrum/report/html_report.hpp"
#include "fulcrum/report/sample_statistics.hpp"
#include "fulcrum/report/svg.hpp"

namespace fulcrum::pipeline {

namespace fs = std::filesystem;
using nlohmann::json;

namespace {

// Value at a dotted path with optional [k] index, e.g. "robustness.asymmetry_ci68[0]".
const json* at_path(const json& j, const std::string& path) {
  const json* cur = &j;
  std::size_t pos = 0;
  while (pos < path.size()) {
    std::size_t dot = path.find('.', pos);
    std::string part = path.substr(pos, dot == std::string::npos ? std::string::npos : dot - pos);
    pos = dot == std::string::npos ? path.size() : dot + 1;
    int index = -1;
    auto br = part.find('[');
    if (br != std::string::npos) {
      index = std::stoi(part.substr(br + 1));
      part = part.substr(0, br);
    }
    if (!cur->is_object() || !cur->contains(part)) return nullptr;
    cur = &(*cur)[part];
    if (index >= 0) {
      if (!cur->is_array() || static_cast<int>(cur->size()) <= index) return nullptr;
      cur = &(*cur)[index];
    }
  }
  return cur;
}

double get_num(const json& j, const std::string& path) {
  const json* v = at_path(j, path);
  return v && v->is_number() ? v->get<double>() : NAN;
}
std::string get_str(const json& j, const std::string& path) {
  const json* v = at_path(j, path);
  return v && v->is_string() ? v->get<std::string>() : std::string();
}
std::int64_t get_int(const json& j, const std::string& path) {
  const json* v = at_path(j, path);
  return v && v->is_number() ? v->get<std::int64_t>() : 0;
}

const json* adopted_entry(const json& rep) {
  if (!rep.contains("adopted_centre") || !rep["adopted_centre"].is_string()) return nullptr;
  for (const auto& c : rep["centres"])
    if (c.value("id", "") == rep["adopted_centre"].get<std::string>()) return &c;
  return nullptr;
}

double adopted_num(const json& rep, const std::string& key) {
  const json* c = adopted_entry(rep);
  return c && c->contains(key) && (*c)[key].is_number() ? (*c)[key].get<double>() : NAN;
}

// 1-sigma semi-major axis of the adopted centre's error ellipse.
double adopted_err(const json& rep) {
  const json* c = adopted_entry(rep);
  if (!c || !c->contains("cov_arcsec2") || !(*c)["cov_arcsec2"].is_array()) return NAN;
  const auto& m = (*c)["cov_arcsec2"];
  double a = m[0][0].is_number() ? m[0][0].get<double>() : NAN, b = m[0][1].is_number() ? m[0][1].get<double>() : NAN,
         d = m[1][1].is_number() ? m[1][1].get<double>() : NAN;
  double tr = a + d, det = a * d - b * b;
  return std::sqrt(tr / 2 + std::sqrt(std::max(0.0, tr * tr / 4 - det)));
}

// Largest offset of any successful centre from the adopted one.
double max_offset(const json& rep) {
  double m = NAN;
  for (const auto& c : rep["centres"]) {
    if (!c.contains("offset_from_adopted")) continue;
    double d = c["offset_from_adopted"].value("distance_arcsec", NAN);
    if (std::isfinite(d)) m = std::isfinite(m) ? std::max(m, d) : d;
  }
  return m;
}

std::string read_text(const fs::path& p) {
  std::ifstream in(p, std::ios::binary);
  std::stringstream ss;
  ss << in.rdbuf();
  return ss.str();
}

json minimal_failure_report(const GalaxyInput& g, const std::string& reason, const AnalysisOptions& o) {
  json rep = {{"schema_version", 1}, {"galaxy", g.name}, {"verdict", "undetermined"},
              {"verdict_reason", reason},
              {"statement", g.name + ": no verdict (undetermined): " + reason + "."},
              {"centres", json::array()}, {"adopted_centre", nullptr},
              {"kinematics", {{"status", "not run"}, {"pa_deg", nullptr}, {"inc_deg", nullptr}, {"vsys_kms", nullptr}, {"rings", json::array()}}},
              {"split", {{"tail_pa_deg", g.tail_pa_deg ? json(*g.tail_pa_deg) : json(nullptr)}, {"leading_flux", nullptr},
                         {"trailing_flux", nullptr}, {"flux_unit", nullptr}, {"asymmetry", nullptr}, {"asymmetry_err", nullptr},
                         {"at_centres", json::array()}}},
              {"robustness", {{"p_leading", nullptr}, {"draws", o.draws}, {"seed", o.seed}, {"asymmetry_ci68", nullptr},
                              {"asymmetry_ci95", nullptr}, {"flip_distance_arcsec", nullptr}, {"flip_distance_beams", nullptr},
                              {"flip_direction_pa_deg", nullptr}, {"farthest_plausible_arcsec", nullptr}}},
              {"inputs", json::object()}, {"software", software_info()}, {"created_utc", created_utc()},
              {"stages", json::array({{{"stage", "analysis"}, {"status", "failed"}, {"reason", reason}}})},
              {"figures", json::array()}, {"notes", json::array({reason})}};
  return rep;
}

std::string fmt_or_dash(double v, int d) { return std::isfinite(v) ? report::fmt(v, d) : "-"; }

}  // namespace

report::Table robustness_table(const std::vector<json>& reports) {
  report::Table t;
  t.name = "robustness";
  t.caption = "Centre and split robustness of the leading-side excess, one row per galaxy.";
  auto strings = [&](const std::string& name, const std::string& desc, auto f) {
    std::vector<std::string> v;
    for (const auto& r : reports) v.push_back(f(r));
    t.add_string(name, desc, v);
  };
  auto floats = [&](const std::string& name, const std::string& unit, const std::string& desc, const std::string& path,
                    int digits) {
    std::vector<double> v;
    for (const auto& r : reports) v.push_back(get_num(r, path));
    t.add_float(name, unit, desc + " [report.json: " + path + "]", v, digits);
  };
  auto adopted = [&](const std::string& name, const std::string& unit, const std::string& desc, const std::string& key,
                     int digits) {
    std::vector<double> v;
    for (const auto& r : reports) v.push_back(adopted_num(r, key));
    t.add_float(name, unit, desc + " [report.json: centres[adopted]." + key + "]", v, digits);
  };
  strings("galaxy", "Galaxy name [report.json: galaxy]", [](const json& r) { return get_str(r, "galaxy"); });
  strings("verdict", "robust, marginal, centre-sensitive, reversed or undetermined [report.json: verdict]",
          [](const json& r) { return get_str(r, "verdict"); });
  strings("adopted_centre", "Which centre estimate the halves use [report.json: adopted_centre]",
          [](const json& r) { return get_str(r, "adopted_centre"); });
  adopted("ra_deg", "deg", "Right ascension of the adopted centre", "ra_deg", 6);
  adopted("dec_deg", "deg", "Declination of the adopted centre", "dec_deg", 6);
  {
    std::vector<double> v;
    for (const auto& r : reports) v.push_back(adopted_err(r));
    t.add_float("centre_err_arcsec", "arcsec",
                "1-sigma semi-major axis of the adopted centre's error ellipse [derived: centres[adopted].cov_arcsec2]", v, 3);
  }
  {
    std::vector<double> v;
    for (const auto& r : reports) v.push_back(max_offset(r));
    t.add_float("max_centre_offset_arcsec", "arcsec",
                "Largest offset of any centre estimate from the adopted one [derived: centres[].offset_from_adopted]", v, 2);
  }
  floats("pa_deg", "deg", "Kinematic PA of the receding half, north through east", "kinematics.pa_deg", 1);
  floats("inc_deg", "deg", "Kinematic inclination", "kinematics.inc_deg", 1);
  floats("vsys_kms", "km / s", "Systemic velocity", "kinematics.vsys_kms", 1);
  floats("tail_pa_deg", "deg", "Tail direction from the centre, north through east", "split.tail_pa_deg", 1);
  floats("tail_pa_err_deg", "deg", "Error of the tail direction", "split.tail_pa_err_deg", 1);
  floats("leading_flux", "", "Line flux of the leading half (unit in flux_unit)", "split.leading_flux", 3);
  floats("trailing_flux", "", "Line flux of the trailing half (unit in flux_unit)", "split.trailing_flux", 3);
  strings("flux_unit", "Unit of the half fluxes [report.json: split.flux_unit]",
          [](const json& r) { return get_str(r, "split.flux_unit"); });
  floats("asymmetry", "", "A = (L - T)/(L + T) at the adopted centre", "split.asymmetry", 3);
  floats("asymmetry_err", "", "1-sigma error of A from map noise", "split.asymmetry_err", 3);
  floats("asymmetry_ci68_lo", "", "Bootstrap 68% interval of A, lower end", "robustness.asymmetry_ci68[0]", 3);
  floats("asymmetry_ci68_hi", "", "Bootstrap 68% interval of A, upper end", "robustness.asymmetry_ci68[1]", 3);
  floats("asymmetry_ci95_lo", "", "Bootstrap 95% interval of A, lower end", "robustness.asymmetry_ci95[0]", 3);
  floats("asymmetry_ci95_hi", "", "Bootstrap 95% interval of A, upper end", "robustness.asymmetry_ci95[1]", 3);
  floats("p_leading", "", "Bootstrap probability P(A > 0)", "robustness.p_leading", 3);
  floats("flip_distance_arcsec", "arcsec", "Smallest centre shift that reverses the sign of A (nominal angle)",
         "robustness.flip_distance_arcsec", 2);
  floats("flip_distance_beams", "", "Flip distance in beam FWHM along its direction", "robustness.flip_distance_beams", 2);
  floats("flip_direction_pa_deg", "deg", "Direction of that shift, north through east",
         "robustness.flip_direction_pa_deg", 1);
  floats("farthest_plausible_arcsec", "arcsec", "Distance of the farthest plausible centre from the adopted one",
         "robustness.farthest_plausible_arcsec", 2);
  {
    std::vector<std::int64_t> draws, seeds;
    for (const auto& r : reports) {
      draws.push_back(get_int(r, "robustness.draws"));
      seeds.push_back(get_int(r, "robustness.seed"));
    }
    t.add_int("draws", "", "Bootstrap draws [report.json: robustness.draws]", draws);
    t.add_int("seed", "", "Seed of the galaxy's random generator [report.json: robustness.seed]", seeds);
  }
  {
    bool calibrated = false;
    for (const auto& r : reports) calibrated = calibrated || (r.contains("calibration") && r["calibration"].is_object());
    if (calibrated) {
      floats("false_robust_rate", "", "Matched symmetric mocks called robust or reversed", "calibration.false_robust_rate", 3);
      floats("recovery_rate", "", "Matched mocks with the measured A called robust", "calibration.recovery_rate", 3);
    }
  }
  strings("reason", "Why the verdict is undetermined (empty otherwise) [report.json: verdict_reason]",
          [](const json& r) { return get_str(r, "verdict_reason"); });
  // Common flux unit: put it on the flux columns.
  std::set<std::string> units;
  for (const auto& r : reports)
    if (!get_str(r, "split.flux_unit").empty()) units.insert(get_str(r, "split.flux_unit"));
  if (units.size() == 1 && (*units.begin() == "Jy km/s" || *units.begin() == "Jy km / s"))
    for (auto& c : t.columns)
      if (c.name == "leading_flux" || c.name == "trailing_flux") c.unit = "Jy km / s";
  return t;
}

report::Table paper_table(const std::vector<json>& reports) {
  report::Table full = robustness_table(reports);
  report::Table t;
  t.name = "robustness";
  t.caption = "Robustness of the leading-side excess. A at the adopted centre with its bootstrap 95% interval, "
              "P = P(A > 0), the flip distance (the smallest centre shift that reverses A) and the distance of "
              "the farthest plausible centre.";
  auto take = [&](const std::string& name, const std::string& heading, int digits = -1) {
    const report::Column* c = full.find(name);
    if (!c) return;
    report::Column copy = *c;
    copy.latex_heading = heading;
    if (digits >= 0) copy.digits = digits;
    t.columns.push_back(copy);
  };
  take("galaxy", "Galaxy");
  take("verdict", "Verdict");
  take("asymmetry", "$A$");
  take("asymmetry_ci95_lo", "$A_{2.5\\%}$");
  take("asymmetry_ci95_hi", "$A_{97.5\\%}$");
  take("p_leading", "$P(A>0)$");
  take("flip_distance_arcsec", "$d_{\\rm flip}$");
  take("flip_distance_beams", "$d_{\\rm flip}/\\theta_{\\rm beam}$");
  take("farthest_plausible_arcsec", "$d_{\\rm plaus}$");
  take("adopted_centre", "Centre");
  return t;
}

json sample_statistics(const std::vector<json>& reports) {
  std::vector<report::GalaxyOutcome> g;
  std::vector<std::string> verdicts;
  for (const auto& r : reports) {
    report::GalaxyOutcome o;
    std::string v = get_str(r, "verdict");
    double a = get_num(r, "split.asymmetry"), p = get_num(r, "robustness.p_leading");
    o.determined = v != "undetermined" && std::isfinite(a) && std::isfinite(p);
    o.asymmetry = std::isfinite(a) ? a : 0.0;
    o.p_leading = std::isfinite(p) ? p : 0.5;
    const double nd = get_num(r, "robustness.draws");
    o.n_draws = std::isfinite(nd) && nd > 0 ? static_cast<std::size_t>(nd) : 0;
    o.robust = v == "robust";
    o.reversed = v == "reversed";
    g.push_back(o);
    verdicts.push_back(v);
  }
  auto s = report::summarise_sample(g, verdicts);
  json j = s.to_json();
  j["method"] = {
      {"p_null_sign_test", "P(K >= k) for K ~ Binomial(n, 1/2): no preferred side (one-sided sign test)"},
      {"p_at_least_k_given_p", "P(K' >= k) for K' Poisson-binomial with each galaxy's own P(A > 0)"},
      {"p_stouffer", "one-sided Stouffer's Z of the P(A > 0) values: no galaxy has a true asymmetry"},
      {"secure_only", "the same restricted to galaxies whose verdict is robust or reversed"}};
  return j;
}

std::string summary_text(const std::vector<json>& reports) {
  std::ostringstream os;
  std::size_t w = 6;
  for (const auto& r : reports) w = std::max(w, get_str(r, "galaxy").size());
  char line[512];
  std::snprintf(line, sizeof line, "%-*s  %-16s  %7s  %6s  %8s  %9s\n", static_cast<int>(w), "galaxy", "verdict", "A",
                "P(A>0)", "flip(\")", "plaus.(\")");
  os << line;
  for (const auto& r : reports) {
    std::snprintf(line, sizeof line, "%-*s  %-16s  %7s  %6s  %8s  %9s\n", static_cast<int>(w),
                  get_str(r, "galaxy").c_str(), get_str(r, "verdict").c_str(),
                  fmt_or_dash(get_num(r, "split.asymmetry"), 3).c_str(),
                  fmt_or_dash(get_num(r, "robustness.p_leading"), 3).c_str(),
                  fmt_or_dash(get_num(r, "robustness.flip_distance_arcsec"), 2).c_str(),
                  fmt_or_dash(get_num(r, "robustness.farthest_plausible_arcsec"), 2).c_str());
    os << line;
  }
  return os.str();
}

namespace {
report::HtmlGalaxy html_galaxy(const json& r, const fs::path& galaxy_dir) {
  report::HtmlGalaxy g;
  g.name = get_str(r, "galaxy");
  g.verdict = get_str(r, "verdict");
  g.statement = get_str(r, "statement");
  if (r.contains("notes"))
    for (const auto& n : r["notes"]) g.notes.push_back(n.get<std::string>());
  if (r.contains("figures"))
    for (const auto& f : r["figures"]) {
      fs::path file = galaxy_dir / f.value("file", "");
      if (!fs::exists(file)) continue;
      g.figures.push_back({f.value("id", ""), f.value("caption", ""), read_text(file)});
    }
  return g;
}

const char* kFooter =
    ". Signed quantities: the diverging cool-warm colour map of Moreland (2009); intensities: the cubehelix "
    "scheme of Green (2011). Sky panels: east left, north up, offsets in arcsec from the adopted centre. "
    "Inputs and their SHA-256 digests are listed in each galaxy's report.json.";
}  // namespace

void write_galaxy_html(const std::string& dir, const json& rep) {
  report::HtmlSample h;
  h.title = get_str(rep, "galaxy");
  h.subtitle = "Centre and split robustness of the leading-side excess";
  h.table = paper_table({rep});
  h.galaxies.push_back(html_galaxy(rep, fs::path(dir)));
  h.footer = "Made by fulcrum " + version_string() + kFooter;
  write_text_file((fs::path(dir) / "report.html").string(), report::sample_html(h));
}

void write_sample_products(const std::string& out_dir, std::vector<json> reports) {
  std::stable_sort(reports.begin(), reports.end(), [](const json& a, const json& b) {
    auto ia = get_int(a, "sample.index"), ib = get_int(b, "sample.index");
    if (ia != ib) return ia < ib;
    return get_str(a, "galaxy") < get_str(b, "galaxy");
  });
  fs::create_directories(out_dir);
  fs::path dir(out_dir);
  report::Table full = robustness_table(reports);
  std::string sample_name = reports.empty() ? "" : get_str(reports.front(), "sample.name");
  full.meta = {{"sample", sample_name}, {"software", "fulcrum " + version_string()}};
  report::write_ecsv((dir / "robustness.ecsv").string(), full);
  report::write_csv((dir / "robustness.csv").string(), full);
  report::write_fits((dir / "robustness.fits").string(), full);
  report::Table paper = paper_table(reports);
  report::write_latex((dir / "robustness.tex").string(), paper);
  report::write_markdown((dir / "robustness.md").string(), paper);

  json stats = sample_statistics(reports);
  json sj = {{"sample", sample_name},
             {"galaxies", json::array()},
             {"statistics", stats},
             {"software", software_info()},
             {"created_utc", created_utc()}};
  for (const auto& r : reports)
    sj["galaxies"].push_back({{"galaxy", get_str(r, "galaxy")}, {"verdict", get_str(r, "verdict")},
                              {"report", get_str(r, "galaxy") + "/report.json"}});
  {
    // Expected number of false robust (or reversed) galaxies: the sum of the
    // calibrated false-robust rates, beside the number observed.
    double expected = 0.0, var = 0.0;
    std::size_t n_cal = 0, observed = 0;
    for (const auto& r : reports) {
      if (!r.contains("calibration") || !r["calibration"].is_object()) continue;
      const double fr = get_num(r, "calibration.false_robust_rate");
      if (!std::isfinite(fr)) continue;
      const double e = get_num(r, "calibration.false_robust.err");
      expected += fr;
      var += std::isfinite(e) ? e * e : 0.0;
      ++n_cal;
      const std::string v = get_str(r, "verdict");
      observed += (v == "robust" || v == "reversed") ? 1 : 0;
    }
    if (n_cal > 0)
      sj["calibration"] = {{"galaxies_calibrated", n_cal},
                           {"expected_false_robust", expected},
                           {"expected_false_robust_err", std::sqrt(var)},
                           {"observed_robust_or_reversed", observed}};
  }
  write_text_file((dir / "sample.json").string(), dump_json(sj));

  // report.html
  report::HtmlSample h;
  h.title = sample_name.empty() ? "fulcrum sample report" : sample_name;
  h.subtitle = std::to_string(reports.size()) + " galaxies; centre and split robustness of the leading-side excess";
  h.table = paper;
  const json& a = stats["all_determined"];
  const json& s = stats["secure_only"];
  auto p = [](const json& v) { return v.is_number() ? report::fmt(v.get<double>(), 4) : std::string("-"); };
  h.stats = {
      {"galaxies measured", std::to_string(a.value("n", 0)) + " of " + std::to_string(reports.size())},
      {"leading excess (A > 0)", std::to_string(a.value("n_leading", 0)) + " of " + std::to_string(a.value("n", 0))},
      {"P(at least that many | no preferred side)", p(a["p_null_sign_test"]) + " (sign test)"},
      {"P(this much leading excess | no galaxy asymmetric)", p(a["p_stouffer"]) + " (Stouffer's Z)"},
      {"expected leading count from the P values", p(a["expected_leading"])},
      {"robust among robust + reversed", std::to_string(s.value("n_leading", 0)) + " of " + std::to_string(s.value("n", 0)) +
                                             ", P(null) = " + p(s["p_null_sign_test"])},
  };
  for (const auto& r : reports) h.galaxies.push_back(html_galaxy(r, dir / get_str(r, "galaxy")));
  h.footer = "Made by fulcrum " + version_string() + kFooter;
  write_text_file((dir / "report.html").string(), report::sample_html(h));
}

RunSummary run_sample(const SampleManifest& manifest, const RunOptions& o) {
  if (o.out_dir.empty()) throw InputError("", "--out DIR is required");
  fs::path out(o.out_dir);
  if (fs::exists(out / "sample.json") && !o.overwrite)
    throw InputError(o.out_dir, "already holds a sample run (sample.json); use --force to overwrite");
  auto selected = select_galaxies(manifest, o.selection);
  if (selected.empty()) throw InputError(manifest.path, "the selection (--only/--shard) leaves no galaxy to run");
  std::map<std::string, int> index;
  for (std::size_t i = 0; i < manifest.galaxies.size(); ++i) index[manifest.galaxies[i].name] = static_cast<int>(i);
  fs::create_directories(out);

  std::vector<json> reports(selected.size());
  Progress progress("galaxies", selected.size());
  const int n = static_cast<int>(selected.size());
  const int threads = o.threads > 0 ? o.threads : omp_get_max_threads();
#pragma omp parallel for schedule(dynamic, 1) num_threads(threads)
  for (int i = 0; i < n; ++i) {
    const GalaxyInput& g = selected[i];
    AnalysisOptions ao;
    ao.seed = galaxy_seed(o.seed.value_or(manifest.seed), g);
    ao.draws = o.draws.value_or(manifest.draws);
    ao.calibrate = manifest.calibrate;
    ao.figures = o.figures;
    ao.bootstrap_from_estimates = o.bootstrap_from_estimates;
    GalaxyResult res;
    std::string failed;
    try {
      // A galaxy given as a cube: its maps are made into its folder first.
      GalaxyInput maps;
      try {
        maps = make_maps_from_cube(g, (out / g.name).string());
      } catch (const InputError& e) {
        failed = std::string("the moment maps could not be made from the cube: ") + e.what();
      }
      if (failed.empty()) res = analyse_galaxy(maps, ao);
    } catch (const std::exception& e) {
      failed = std::string("the analysis stopped: ") + e.what();
    }
    if (!failed.empty()) {
      // One failing galaxy must not stop the others.
      res.name = g.name;
      res.report = minimal_failure_report(g, failed, ao);
    }
    res.report["sample"] = {{"name", manifest.name}, {"manifest", manifest.path}, {"index", index[g.name]},
                            {"seed", o.seed.value_or(manifest.seed)}};
    try {
      write_galaxy_outputs(res, (out / g.name).string());
    } catch (const std::exception& e) {
      warn(g.name + ": could not write its outputs: " + e.what());
    }
    reports[i] = std::move(res.report);
    progress.advance();
  }
  progress.finish();
  write_sample_products(o.out_dir, reports);
  RunSummary s;
  s.reports = reports;
  s.out_dir = o.out_dir;
  s.html_path = (out / "report.html").string();
  return s;
}

RunSummary merge_outputs(const std::vector<std::string>& dirs, const std::string& out_dir, bool overwrite) {
  if (dirs.empty()) throw InputError("", "merge needs at least one run folder");
  fs::path out(out_dir);
  if (fs::exists(out / "sample.json") && !overwrite &&
      std::find(dirs.begin(), dirs.end(), out_dir) == dirs.end())
    throw InputError(out_dir, "already holds a sample run (sample.json); use --force to overwrite");
  std::vector<json> reports;
  std::map<std::string, std::string> seen;
  std::set<std::string> sample_names;
  for (const auto& d : dirs) {
    if (!fs::is_directory(d)) throw InputError(d, "is not a folder");
    std::vector<fs::path> sub;
    for (const auto& e : fs::directory_iterator(d))
      if (e.is_directory() && fs::exists(e.path() / "report.json")) sub.push_back(e.path());
    std::sort(sub.begin(), sub.end());
    if (sub.empty()) throw InputError(d, "holds no <galaxy>/report.json");
    for (const auto& p : sub) {
      json rep;
      try {
        rep = json::parse(read_text(p / "report.json"));
      } catch (const json::exception& e) {
        throw InputError((p / "report.json").string(), std::string("is not valid JSON: ") + e.what());
      }
      std::string name = get_str(rep, "galaxy");
      if (name.empty()) throw InputError((p / "report.json").string(), "has no galaxy name");
      if (seen.count(name))
        throw InputError((p / "report.json").string(), "galaxy '" + name + "' is also in " + seen[name]);
      seen[name] = (p / "report.json").string();
      sample_names.insert(get_str(rep, "sample.name"));
      fs::path dest = out / p.filename();
      if (fs::weakly_canonical(dest) != fs::weakly_canonical(p)) {
        fs::create_directories(dest);
        fs::copy(p, dest, fs::copy_options::recursive | fs::copy_options::overwrite_existing);
      }
      reports.push_back(std::move(rep));
    }
  }
  if (sample_names.size() > 1) warn("merging galaxies from differently named samples; the first name is used");
  write_sample_products(out_dir, reports);
  RunSummary s;
  std::stable_sort(reports.begin(), reports.end(), [](const json& a, const json& b) {
    return get_int(a, "sample.index") < get_int(b, "sample.index");
  });
  s.reports = reports;
  s.out_dir = out_dir;
  s.html_path = (out / "report.html").string();
  return s;
}

}  // namespace fulcrum::pipeline
