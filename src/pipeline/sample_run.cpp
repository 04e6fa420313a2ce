// A sample run, merging shards, and the sample products (see the header).
#include "fulcrum/pipeline/sample_run.hpp"

#include <algorithm>
#include <cerrno>
#include <cstring>
#include <fcntl.h>
#include <unistd.h>
#include <cmath>
#include <cstdio>
#include <exception>
#include <filesystem>
#include <fstream>
#include <functional>
#include <map>
#include <set>
#include <sstream>

#include <omp.h>

#include "fulcrum/core/thread_count.hpp"

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/log.hpp"
#include "fulcrum/core/number_text.hpp"
#include "fulcrum/core/settings_check.hpp"
#include "fulcrum/core/version.hpp"
#include "fulcrum/io/atomic_file.hpp"
#include "fulcrum/io/distinct_paths.hpp"
#include "fulcrum/io/folder_copy.hpp"
#include "fulcrum/io/staged_entries.hpp"
#include "fulcrum/io/staged_folder.hpp"
#include "fulcrum/pipeline/cube_maps.hpp"
#include "fulcrum/report/html_report.hpp"
#include "fulcrum/report/sample_statistics.hpp"
#include "fulcrum/pipeline/centre_asymmetries.hpp"
#include "fulcrum/pipeline/report_json.hpp"
#include "fulcrum/pipeline/report_reader.hpp"
#include "fulcrum/pipeline/shard_record.hpp"
#include "fulcrum/sky/offset_frame.hpp"

namespace fulcrum::pipeline {

namespace fs = std::filesystem;
using nlohmann::json;

namespace {

double nan_if_absent(const std::optional<double>& v) { return v ? *v : NAN; }

const robustness::AnalysisSummary* split_of(const GalaxySummary& s) {
  return s.robustness ? &*s.robustness : nullptr;
}

// 1-sigma semi-major axis of the adopted centre's error ellipse.
double adopted_err(const GalaxySummary& s) {
  const Centre* c = s.adopted_centre();
  if (!c) return NAN;
  const auto& m = c->covariance;
  const double a = m(0, 0), b = m(0, 1), d = m(1, 1);
  const double tr = a + d, det = a * d - b * b;
  return std::sqrt(tr / 2 + std::sqrt(std::max(0.0, tr * tr / 4 - det)));
}

// Largest offset of any successful centre from the adopted one.
double max_offset(const GalaxySummary& s) {
  const Centre* a = s.adopted_centre();
  double m = NAN;
  if (!a) return m;
  for (const auto& c : s.centres) {
    if (!c.ok()) continue;
    const double d = separation_arcsec(a->position, c.position);
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

// The report of a galaxy whose analysis could not start or stopped.
GalaxySummary failed_galaxy(const GalaxyInput& g, const std::string& reason, const AnalysisOptions& o) {
  GalaxySummary s;
  s.input = g;
  s.seed = o.seed;
  s.draws = o.draws;
  s.created_utc = created_utc();
  s.undetermined_reason = reason;
  s.statement = g.name + ": no verdict (undetermined): " + reason + ".";
  s.stages.push_back({"analysis", StageStatus::failed, reason});
  s.notes.push_back(reason);
  return s;
}

std::string fmt_or_dash(double v, int d) { return std::isfinite(v) ? fixed_text(v, d) : "-"; }

using Getter = std::function<double(const GalaxySummary&)>;

double split_value(const GalaxySummary& s, double split::SplitSummary::*field) {
  const auto* a = split_of(s);
  return a ? a->split.*field : NAN;
}
double boot_value(const GalaxySummary& s, double robustness::BootstrapSummary::*field) {
  const auto* a = split_of(s);
  return a ? a->bootstrap.*field : NAN;
}
double kin_value(const GalaxySummary& s, double kinematics::KinematicFit::*field) {
  return s.kinematics ? s.kinematics->fit.*field : NAN;
}
double flip_arcsec(const GalaxySummary& s) {
  const auto* a = split_of(s);
  return a && a->flip.nominal.found ? a->flip.nominal.distance_arcsec : NAN;
}
double flip_beams(const GalaxySummary& s) {
  const auto* a = split_of(s);
  return a && a->flip.nominal.found ? a->flip.nominal_beams : NAN;
}
double flip_pa(const GalaxySummary& s) {
  const auto* a = split_of(s);
  return a && a->flip.nominal.found ? a->flip.nominal.direction_pa_deg : NAN;
}
double farthest(const GalaxySummary& s) {
  const auto* a = split_of(s);
  return a ? a->verdict.plausible.farthest_plausible_arcsec : NAN;
}
double calibration_rate(const GalaxySummary& s, calibration::Rate calibration::CalibrationSummary::*rate) {
  return s.calibration && s.calibration->summary ? ((*s.calibration->summary).*rate).rate : NAN;
}
std::string flux_unit(const GalaxySummary& s) { return s.robustness ? s.robustness->split.flux_unit : ""; }
std::string verdict_of(const GalaxySummary& s) { return robustness::verdict_name(s.verdict); }
std::string adopted_id(const GalaxySummary& s) { return s.adopted_centre() ? s.adopted_centre()->id() : ""; }

}  // namespace

namespace {

// Adds one column per call, one row per galaxy. With `results` set, a
// galaxy whose verdict is undetermined gets blanks (NaN), never numbers that
// look like results.
struct ColumnWriter {
  report::Table& t;
  const std::vector<GalaxySummary>& galaxies;
  bool results = false;
  template <class F>
  void strings(const std::string& name, const std::string& desc, F f) {
    std::vector<std::string> v;
    for (const auto& g : galaxies) v.push_back(f(g));
    t.add_string(name, desc, v);
  }
  // `path` names the place of the same number in report.json.
  void floats(const std::string& name, const std::string& unit, const std::string& desc, const std::string& path,
              int digits, const Getter& f) {
    std::vector<double> v;
    for (const auto& g : galaxies)
      v.push_back(results && g.verdict == robustness::Verdict::undetermined ? NAN : f(g));
    t.add_float(name, unit, desc + " [" + path + "]", v, digits);
  }
};

Getter split_field(double split::SplitSummary::*m) {
  return [m](const GalaxySummary& g) { return split_value(g, m); };
}
Getter boot_field(double robustness::BootstrapSummary::*m) {
  return [m](const GalaxySummary& g) { return boot_value(g, m); };
}
Getter kin_field(double kinematics::KinematicFit::*m) {
  return [m](const GalaxySummary& g) { return kin_value(g, m); };
}

void centre_columns(ColumnWriter& w) {
  w.strings("galaxy", "Galaxy name [report.json: galaxy]", [](const GalaxySummary& g) { return g.input.name; });
  w.strings("verdict", "robust, marginal, centre-sensitive, reversed or undetermined [report.json: verdict]", verdict_of);
  w.strings("adopted_centre", "Which centre estimate the halves use [report.json: adopted_centre]", adopted_id);
  w.floats("ra_deg", "deg", "Right ascension of the adopted centre", "report.json: centres[adopted].ra_deg", 6,
           [](const GalaxySummary& g) { return g.adopted_centre() ? g.adopted_centre()->position.ra_deg : NAN; });
  w.floats("dec_deg", "deg", "Declination of the adopted centre", "report.json: centres[adopted].dec_deg", 6,
           [](const GalaxySummary& g) { return g.adopted_centre() ? g.adopted_centre()->position.dec_deg : NAN; });
  w.floats("centre_err_arcsec", "arcsec", "1-sigma semi-major axis of the adopted centre's error ellipse",
           "derived: centres[adopted].cov_arcsec2", 3, adopted_err);
  w.floats("max_centre_offset_arcsec", "arcsec", "Largest offset of any centre estimate from the adopted one",
           "derived: centres[].offset_from_adopted", 2, max_offset);
  w.floats("pa_deg", "deg", "Kinematic PA of the receding half, north through east", "report.json: kinematics.pa_deg",
           1, kin_field(&kinematics::KinematicFit::pa_deg));
  w.floats("inc_deg", "deg", "Kinematic inclination", "report.json: kinematics.inc_deg", 1,
           kin_field(&kinematics::KinematicFit::inc_deg));
  w.floats("vsys_kms", "km / s", "Systemic velocity", "report.json: kinematics.vsys_kms", 1,
           kin_field(&kinematics::KinematicFit::vsys_kms));
}

void split_columns(ColumnWriter& w) {
  // The tail direction is an input (given or measured), shown even when the
  // verdict is undetermined.
  const bool results = w.results;
  w.results = false;
  w.floats("tail_pa_deg", "deg", "Tail direction from the centre, north through east", "report.json: split.tail_pa_deg",
           1, [](const GalaxySummary& g) { return g.robustness ? g.robustness->tail_pa_deg : nan_if_absent(g.input.tail_pa_deg); });
  w.floats("tail_pa_err_deg", "deg", "Error of the tail direction", "report.json: split.tail_pa_err_deg", 1,
           [](const GalaxySummary& g) { return g.robustness ? g.robustness->tail_pa_err_deg : g.input.tail_pa_err_deg; });
  w.results = results;
  w.floats("leading_flux", "", "Line flux of the leading half (unit in flux_unit)", "report.json: split.leading_flux", 3,
           split_field(&split::SplitSummary::leading_flux));
  w.floats("trailing_flux", "", "Line flux of the trailing half (unit in flux_unit)",
           "report.json: split.trailing_flux", 3, split_field(&split::SplitSummary::trailing_flux));
  w.strings("flux_unit", "Unit of the half fluxes [report.json: split.flux_unit]", flux_unit);
  w.floats("asymmetry", "", "A = (L - T)/(L + T) at the adopted centre", "report.json: split.asymmetry", 3,
           split_field(&split::SplitSummary::asymmetry));
  w.floats("asymmetry_err", "", "1-sigma error of A from map noise", "report.json: split.asymmetry_err", 3,
           split_field(&split::SplitSummary::asymmetry_err));
}

void robustness_columns(ColumnWriter& w) {
  using B = robustness::BootstrapSummary;
  w.floats("asymmetry_ci68_lo", "", "Bootstrap 68% interval of A, lower end",
           "report.json: robustness.asymmetry_ci68[0]", 3, boot_field(&B::lo68));
  w.floats("asymmetry_ci68_hi", "", "Bootstrap 68% interval of A, upper end",
           "report.json: robustness.asymmetry_ci68[1]", 3, boot_field(&B::hi68));
  w.floats("asymmetry_ci95_lo", "", "Bootstrap 95% interval of A, lower end",
           "report.json: robustness.asymmetry_ci95[0]", 3, boot_field(&B::lo95));
  w.floats("asymmetry_ci95_hi", "", "Bootstrap 95% interval of A, upper end",
           "report.json: robustness.asymmetry_ci95[1]", 3, boot_field(&B::hi95));
  w.floats("p_leading", "", "Bootstrap probability P(A > 0)", "report.json: robustness.p_leading", 3,
           boot_field(&B::p_positive));
  w.floats("flip_distance_arcsec", "arcsec", "Smallest centre shift that reverses the sign of A (nominal angle)",
           "report.json: robustness.flip_distance_arcsec", 2, flip_arcsec);
  w.floats("flip_distance_beams", "", "Flip distance in beam FWHM along its direction",
           "report.json: robustness.flip_distance_beams", 2, flip_beams);
  w.floats("flip_direction_pa_deg", "deg", "Direction of that shift, north through east",
           "report.json: robustness.flip_direction_pa_deg", 1, flip_pa);
  w.floats("farthest_plausible_arcsec", "arcsec", "Distance of the farthest plausible centre from the adopted one",
           "report.json: robustness.farthest_plausible_arcsec", 2, farthest);
  std::vector<std::int64_t> draws, seeds;
  for (const auto& g : w.galaxies) {
    draws.push_back(g.draws);
    seeds.push_back(static_cast<std::int64_t>(g.seed));
  }
  w.t.add_int("draws", "", "Bootstrap draws [report.json: robustness.draws]", draws);
  w.t.add_int("seed", "", "Seed of the galaxy's random generator [report.json: robustness.seed]", seeds);
}

// A at each kind of centre (pipeline/centre_asymmetries.hpp): kinematic,
// optical and every external centre named in the sample.
void centre_kind_columns(ColumnWriter& w) {
  std::vector<CentreAsymmetries> ca;
  for (const auto& g : w.galaxies) ca.push_back(centre_asymmetries(g));
  auto add = [&](const std::string& key, const std::string& what,
                 const std::function<std::optional<AsymmetryAt>(const CentreAsymmetries&)>& pick) {
    std::vector<std::string> ids;
    std::vector<double> a, e;
    for (const auto& c : ca) {
      const auto x = pick(c);
      ids.push_back(x ? x->id : "");
      a.push_back(x ? x->asymmetry : NAN);
      e.push_back(x ? x->asymmetry_err : NAN);
    }
    if (key != "external") w.t.add_string(key + "_centre", "Which centre estimate is the " + what, ids);
    const std::string col = key == "external" ? "asymmetry_at_" + what : "asymmetry_" + key;
    const std::string at = key == "external" ? "the external centre " + what : "the " + what;
    // Where report.json holds the same number: the at_centres entry of this
    // centre, named by its id (or, per row, by the id column).
    const std::string entry = "split.at_centres[id=" + (key == "external" ? what : "@" + key + "_centre") + "]";
    w.t.add_float(col, "", "A at " + at + ", nominal tail PA [report.json: " + entry + ".asymmetry]", a, 3);
    w.t.add_float(col + "_err", "", "1-sigma error of A at " + at + " from the map noise [report.json: " + entry +
                  ".asymmetry_err]", e, 3);
  };
  add("kinematic", "kinematic centre", [](const CentreAsymmetries& c) { return c.kinematic; });
  add("optical", "optical centre", [](const CentreAsymmetries& c) { return c.optical; });
  std::vector<std::string> names;
  for (const auto& g : w.galaxies)
    for (const auto& c : g.centres)
      if (c.method == CentreMethod::external && std::find(names.begin(), names.end(), c.id()) == names.end())
        names.push_back(c.id());
  for (const auto& n : names)
    add("external", n, [n](const CentreAsymmetries& c) -> std::optional<AsymmetryAt> {
      for (const auto& e : c.external)
        if (e.id == n) return e;
      return std::nullopt;
    });
}

void calibration_columns(ColumnWriter& w) {
  bool calibrated = false;
  for (const auto& g : w.galaxies) calibrated = calibrated || g.calibration.has_value();
  if (!calibrated) return;
  using C = calibration::CalibrationSummary;
  w.floats("false_robust_rate", "", "Matched symmetric mocks called robust or reversed",
           "report.json: calibration.false_robust_rate", 3,
           [](const GalaxySummary& g) { return calibration_rate(g, &C::false_robust); });
  w.floats("recovery_rate", "", "Matched mocks with the measured A called robust",
           "report.json: calibration.recovery_rate", 3,
           [](const GalaxySummary& g) { return calibration_rate(g, &C::recovery); });
}

}  // namespace

report::Table robustness_table(const std::vector<GalaxySummary>& galaxies) {
  report::Table t;
  t.name = "robustness";
  t.caption = "Centre and split robustness of the leading-side excess, one row per galaxy.";
  ColumnWriter w{t, galaxies};
  centre_columns(w);
  w.results = true;
  split_columns(w);
  centre_kind_columns(w);
  robustness_columns(w);
  calibration_columns(w);
  w.strings("reason", "Why the verdict is undetermined (empty otherwise) [report.json: verdict_reason]",
            [](const GalaxySummary& g) {
              return g.verdict == robustness::Verdict::undetermined ? g.undetermined_reason : std::string();
            });
  // Common flux unit: put it on the flux columns.
  std::set<std::string> units;
  for (const auto& g : galaxies)
    if (!flux_unit(g).empty()) units.insert(flux_unit(g));
  if (units.size() == 1 && (*units.begin() == "Jy km/s" || *units.begin() == "Jy km / s"))
    for (auto& c : t.columns)
      if (c.name == "leading_flux" || c.name == "trailing_flux") c.unit = "Jy km / s";
  return t;
}

report::Table paper_table(const std::vector<GalaxySummary>& galaxies, bool wide) {
  report::Table full = robustness_table(galaxies);
  report::Table t;
  t.name = wide ? "robustness-wide" : "robustness";
  t.wide = wide;
  t.caption = wide ? "Robustness of the leading-side excess. A at the adopted centre with its bootstrap 95% interval, "
                     "A at the kinematic and optical centres (1-sigma errors from the map noise), P = P(A > 0), the "
                     "flip distance (the smallest centre shift that reverses A) and the distance of the farthest "
                     "plausible centre."
                   : "Leading-side excess A = (L - T)/(L + T) at the kinematic and optical centres (1-sigma errors "
                     "from the map noise), P = P(A > 0), the smallest centre shift that reverses A, and the verdict.";
  auto take = [&](const std::string& name, const std::string& heading, int digits = -1,
                  const std::string& error_column = "", const std::string& human = "") {
    const report::Column* c = full.find(name);
    if (!c) return;
    report::Column copy = *c;
    copy.latex_heading = heading;
    copy.heading = human;
    if (digits >= 0) copy.digits = digits;
    if (const report::Column* e = error_column.empty() ? nullptr : full.find(error_column))
      copy.errors = std::get<0>(e->values);
    copy.probability = name == "p_leading";
    t.columns.push_back(copy);
  };
  for (const auto& g : galaxies)
    if (g.verdict == robustness::Verdict::undetermined)
      t.notes.push_back(g.input.name + ": no verdict (undetermined): " + g.undetermined_reason + ".");
  take("galaxy", "Galaxy", -1, "", "Galaxy");
  if (wide) {
    take("verdict", "Verdict", -1, "", "Verdict");
    take("asymmetry", "$A$", -1, "", "A");
    take("asymmetry_ci95_lo", "$A_{2.5\\%}$", -1, "", "A 2.5%");
    take("asymmetry_ci95_hi", "$A_{97.5\\%}$", -1, "", "A 97.5%");
  }
  take("asymmetry_kinematic", "$A_{\\rm kin}$", wide ? 3 : 2, "asymmetry_kinematic_err", "A at the kinematic centre");
  take("asymmetry_optical", "$A_{\\rm opt}$", wide ? 3 : 2, "asymmetry_optical_err", "A at the optical centre");
  take("p_leading", "$P(A{>}0)$", -1, "", "P(A > 0)");
  take("flip_distance_arcsec", "$d_{\\rm flip}$", wide ? 2 : 1, "", "Shift that reverses A");
  if (wide) {
    take("flip_distance_beams", "$d_{\\rm flip}/\\theta_{\\rm beam}$", -1, "", "Shift in beams");
    take("farthest_plausible_arcsec", "$d_{\\rm plaus}$", -1, "", "Farthest plausible centre");
    take("adopted_centre", "Centre", -1, "", "Adopted centre");
  } else {
    take("verdict", "Verdict", -1, "", "Verdict");
  }
  return t;
}

json sample_statistics(const std::vector<GalaxySummary>& galaxies) {
  std::vector<report::GalaxyOutcome> g;
  std::vector<std::string> verdicts;
  for (const auto& r : galaxies) {
    report::GalaxyOutcome o;
    const std::string v = verdict_of(r);
    const double a = split_value(r, &split::SplitSummary::asymmetry);
    const double p = boot_value(r, &robustness::BootstrapSummary::p_positive);
    o.determined = v != "undetermined" && std::isfinite(a) && std::isfinite(p);
    o.asymmetry = std::isfinite(a) ? a : 0.0;
    o.p_leading = std::isfinite(p) ? p : 0.5;
    o.n_draws = r.robustness ? static_cast<std::size_t>(r.robustness->bootstrap.n_draws) : 0;
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

std::string summary_text(const std::vector<GalaxySummary>& galaxies) {
  std::ostringstream os;
  std::size_t w = 6;
  for (const auto& r : galaxies) w = std::max(w, r.input.name.size());
  char line[512];
  std::snprintf(line, sizeof line, "%-*s  %-16s  %7s  %7s  %8s  %9s\n", static_cast<int>(w), "galaxy", "verdict", "A",
                "P(A>0)", "flip(\")", "plaus.(\")");
  os << line;
  for (const auto& r : galaxies) {
    // An undetermined galaxy shows no numbers (its reason is in the report).
    const bool none = r.verdict == robustness::Verdict::undetermined;
    auto shown = [&](double v, int d) { return none ? std::string("-") : fmt_or_dash(v, d); };
    const double p = boot_value(r, &robustness::BootstrapSummary::p_positive);
    std::snprintf(line, sizeof line, "%-*s  %-16s  %7s  %7s  %8s  %9s\n", static_cast<int>(w), r.input.name.c_str(),
                  verdict_of(r).c_str(), shown(split_value(r, &split::SplitSummary::asymmetry), 3).c_str(),
                  none || !std::isfinite(p) ? "-" : probability_text(p, 3).c_str(), shown(flip_arcsec(r), 2).c_str(),
                  shown(farthest(r), 2).c_str());
    os << line;
  }
  return os.str();
}

namespace {
report::HtmlGalaxy html_galaxy(const GalaxySummary& r, const fs::path& galaxy_dir) {
  report::HtmlGalaxy g;
  g.name = r.input.name;
  g.verdict = verdict_of(r);
  g.statement = r.statement;
  g.notes = r.notes;
  for (const auto& f : r.figures) {
    fs::path file = galaxy_dir / f.file;
    if (!fs::exists(file)) continue;
    g.figures.push_back({f.id, f.caption, read_text(file)});
  }
  return g;
}

const char* kFooter =
    ". Signed quantities: the diverging cool-warm colour map of Moreland (2009); intensities: the cubehelix "
    "scheme of Green (2011). Sky panels: east left, north up, offsets in arcsec from the adopted centre. "
    "Inputs and their SHA-256 digests are listed in each galaxy's report.json.";
}  // namespace

void write_galaxy_html(const std::string& dir, const GalaxySummary& rep) {
  report::HtmlSample h;
  h.title = rep.input.name;
  h.subtitle = "Centre and split robustness of the leading-side excess";
  h.table = paper_table({rep});
  h.galaxies.push_back(html_galaxy(rep, fs::path(dir)));
  h.footer = "Made by fulcrum " + version_string() + kFooter;
  write_text_file((fs::path(dir) / "report.html").string(), report::sample_html(h));
}

namespace {

std::int64_t sample_index(const GalaxySummary& g) { return g.sample ? g.sample->index : 0; }

// Expected number of false robust (or reversed) galaxies: the sum of the
// calibrated false-robust rates, beside the number observed (null when no
// galaxy is calibrated).
json expected_false_robust(const std::vector<GalaxySummary>& galaxies) {
  double expected = 0.0, var = 0.0;
  std::size_t n_cal = 0, observed = 0;
  for (const auto& g : galaxies) {
    if (!g.calibration) continue;
    const double fr = calibration_rate(g, &calibration::CalibrationSummary::false_robust);
    if (!std::isfinite(fr)) continue;
    const double e = g.calibration->summary->false_robust.err;
    expected += fr;
    var += std::isfinite(e) ? e * e : 0.0;
    ++n_cal;
    observed += (g.verdict == robustness::Verdict::robust || g.verdict == robustness::Verdict::reversed) ? 1 : 0;
  }
  if (n_cal == 0) return nullptr;
  return {{"galaxies_calibrated", n_cal},
          {"expected_false_robust", expected},
          {"expected_false_robust_err", std::sqrt(var)},
          {"observed_robust_or_reversed", observed}};
}

void write_sample_html(const fs::path& dir, const std::string& sample_name, const std::vector<GalaxySummary>& galaxies,
                       const report::Table& paper, const json& stats, const std::string& galaxies_elsewhere) {
  report::HtmlSample h;
  h.title = sample_name.empty() ? "fulcrum sample report" : sample_name;
  h.subtitle = std::to_string(galaxies.size()) + " galaxies; centre and split robustness of the leading-side excess";
  h.table = paper;
  const json& a = stats["all_determined"];
  const json& s = stats["secure_only"];
  auto p = [](const json& v) { return v.is_number() ? fixed_text(v.get<double>(), 4) : std::string("-"); };
  h.stats = {
      {"galaxies measured", std::to_string(a.value("n", 0)) + " of " + std::to_string(galaxies.size())},
      {"leading excess (A > 0)", std::to_string(a.value("n_leading", 0)) + " of " + std::to_string(a.value("n", 0))},
      {"P(at least that many | no preferred side)", p(a["p_null_sign_test"]) + " (sign test)"},
      {"P(this much leading excess | no galaxy asymmetric)", p(a["p_stouffer"]) + " (Stouffer's Z)"},
      {"expected leading count from the P values", p(a["expected_leading"])},
      {"robust among robust + reversed", std::to_string(s.value("n_leading", 0)) + " of " + std::to_string(s.value("n", 0)) +
                                             ", P(null) = " + p(s["p_null_sign_test"])},
  };
  for (const auto& g : galaxies) {
    fs::path folder = dir / g.input.name;
    std::error_code ec;
    if (!galaxies_elsewhere.empty() && !fs::exists(folder, ec)) folder = fs::path(galaxies_elsewhere) / g.input.name;
    h.galaxies.push_back(html_galaxy(g, folder));
  }
  h.footer = "Made by fulcrum " + version_string() + kFooter;
  write_text_file((dir / "report.html").string(), report::sample_html(h));
}

void sort_by_sample_index(std::vector<GalaxySummary>& galaxies) {
  std::stable_sort(galaxies.begin(), galaxies.end(), [](const GalaxySummary& a, const GalaxySummary& b) {
    const auto ia = sample_index(a), ib = sample_index(b);
    if (ia != ib) return ia < ib;
    return a.input.name < b.input.name;
  });
}

}  // namespace

void write_sample_products(const std::string& out_dir, std::vector<GalaxySummary> galaxies,
                           const std::string& galaxies_elsewhere) {
  sort_by_sample_index(galaxies);
  fs::create_directories(out_dir);
  fs::path dir(out_dir);
  report::Table full = robustness_table(galaxies);
  const std::string sample_name = galaxies.empty() || !galaxies.front().sample ? "" : galaxies.front().sample->name;
  full.meta = {{"sample", sample_name}, {"software", "fulcrum " + version_string()}};
  report::write_ecsv((dir / "robustness.ecsv").string(), full);
  report::write_csv((dir / "robustness.csv").string(), full);
  report::write_fits((dir / "robustness.fits").string(), full);
  report::Table paper = paper_table(galaxies);
  report::write_latex((dir / "robustness.tex").string(), paper);
  report::write_latex((dir / "robustness-wide.tex").string(), paper_table(galaxies, true));
  report::write_markdown((dir / "robustness.md").string(), paper);

  json stats = sample_statistics(galaxies);
  json sj = {{"sample", sample_name},
             {"galaxies", json::array()},
             {"statistics", stats},
             {"software", software_info()},
             {"created_utc", created_utc()}};
  for (const auto& g : galaxies)
    sj["galaxies"].push_back({{"galaxy", g.input.name}, {"verdict", verdict_of(g)},
                              {"report", g.input.name + "/report.json"}});
  if (json e = expected_false_robust(galaxies); !e.is_null()) sj["calibration"] = e;
  write_text_file((dir / "sample.json").string(), dump_json(sj));
  write_sample_html(dir, sample_name, galaxies, paper, stats, galaxies_elsewhere);
}

namespace {

// One galaxy of a sample run: its maps (from its cube when given), the
// analysis, its outputs, and the summary as report.json says it.
// The folder `from` (and every path under it) named anywhere in a string
// of `j` (a path, or a sentence such as "error map DIR/x.fits") named as
// `to` instead (RunOptions::shown_paths).
void show_paths_as(json& j, const std::string& from, const std::string& to) {
  if (j.is_string()) {
    std::string v = j.get<std::string>();
    for (std::size_t p = v.find(from); p != std::string::npos; p = v.find(from, p + 1)) {
      const std::size_t end = p + from.size();
      if (end == v.size() || v[end] == '/') {
        v.replace(p, from.size(), to);
        p += to.size() - (to.empty() ? 0 : 1);
      }
    }
    j = v;
  } else if (j.is_structured()) {
    for (auto& e : j) show_paths_as(e, from, to);
  }
}

GalaxySummary run_one(const GalaxyInput& g, const AnalysisOptions& ao, const SampleRef& ref, const fs::path& out,
                      const std::pair<std::string, std::string>& shown_paths) {
  GalaxyResult res;
  std::string failed;
  try {
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
    res = GalaxyResult{};
    res.name = g.name;
    res.summary = failed_galaxy(g, failed, ao);
  }
  // An unusable input stops only this galaxy, but is said on stderr.
  if (!res.summary.unusable_file.empty())
    warn(g.name + ": " + res.summary.unusable_file + ": " + res.summary.unusable_problem + " (listed as undetermined)");
  res.summary.sample = ref;
  res.report = to_json(res.summary);
  if (!shown_paths.first.empty()) show_paths_as(res.report, shown_paths.first, shown_paths.second);
  // A failed write (a full disk) is the run's failure, not the galaxy's:
  // it reaches run_sample, which leaves the output folder as it was.
  write_galaxy_outputs(res, (out / g.name).string());
  return read_report(res.report, g.name);
}

}  // namespace

namespace {

// Every file the selected galaxies name must exist and be readable; checked
// before any folder is made. The message names the file, the manifest and
// the line of the galaxy's table. (A file that is there but not a usable map
// is that galaxy's failure: it is listed as undetermined, and the others run.)
// The files a galaxy names, with their manifest keys (empty ones included).
std::vector<std::pair<const char*, const std::string*>> galaxy_files(const GalaxyInput& g) {
  return {{"cube", &g.cube},           {"velocity", &g.velocity},   {"velocity_error", &g.velocity_error},
          {"intensity", &g.intensity}, {"intensity_error", &g.intensity_error}, {"optical", &g.optical},
          {"optical_mask", &g.optical_mask}, {"tail_image", &g.tail_image}};
}

void check_galaxy_files(const SampleManifest& manifest, const std::vector<GalaxyInput>& selected) {
  for (const auto& g : selected) {
    for (const auto& [key, path] : galaxy_files(g)) {
      if (path->empty()) continue;
      const std::string where = manifest.path + ": line " + std::to_string(g.manifest_line) + ": galaxy '" + g.name +
                                "': '" + key + "'";
      std::error_code ec;
      if (!fs::exists(*path, ec)) throw InputError(*path, "does not exist (" + where + ")");
      if (fs::is_directory(*path, ec)) throw InputError(*path, "is a folder, not a FITS file (" + where + ")");
      if (::access(path->c_str(), R_OK) != 0)
        throw InputError(*path, std::string("cannot be read: ") + std::strerror(errno) + " (" + where + ")");
    }
  }
}

}  // namespace

RunSummary run_sample(const SampleManifest& manifest, const RunOptions& o) {
  if (o.out_dir.empty()) throw SettingError("out", "''", "the name of a folder");
  fs::path out(o.out_dir);
  auto selected = select_galaxies(manifest, o.selection);
  if (selected.empty()) throw InputError(manifest.path, "the selection (" + setting_ref("only") + ", " + setting_ref("shard") + ") leaves no galaxy to run");
  // Capped at the cores and the galaxies (core/thread_count.hpp), checked
  // before any folder is made.
  const int threads = thread_count("threads", o.threads, selected.size());
  // The folder is replaced whole: no input may lie in it.
  std::vector<std::pair<std::string, std::string>> inputs{{"manifest", manifest.path}};
  for (const auto& g : selected)
    for (const auto& f : galaxy_files(g)) inputs.emplace_back(f.first, *f.second);
  check_inputs_outside_folder(inputs, {"out", o.out_dir});
  check_galaxy_files(manifest, selected);
  // One writer (io/staged_folder.hpp): one run at a time into a folder (a
  // lock); a folder with anything in it only with `overwrite`; everything,
  // the shard record last, written into a staging folder beside DIR and
  // renamed into place at the end, replacing an old DIR whole. A run killed
  // and started again leaves the same files; nothing of it is reused.
  StagedFolder staging(o.out_dir, o.overwrite);
  const fs::path work(staging.path());
  std::map<std::string, int> index;
  for (std::size_t i = 0; i < manifest.galaxies.size(); ++i) index[manifest.galaxies[i].name] = static_cast<int>(i);

  std::vector<GalaxySummary> galaxies(selected.size());
  try {
    Progress progress("galaxies", selected.size());
    const int n = static_cast<int>(selected.size());
    // The first failure that stops the run (a write), carried out of the
    // parallel loop; the galaxies not yet started are skipped.
    std::exception_ptr stop;
#pragma omp parallel for schedule(dynamic, 1) num_threads(threads)
    for (int i = 0; i < n; ++i) {
      bool stopped = false;
#pragma omp critical(sample_stop)
      stopped = stop != nullptr;
      if (stopped) continue;
      try {
        const GalaxyInput& g = selected[i];
        AnalysisOptions ao;
        ao.seed = galaxy_seed(o.seed.value_or(manifest.seed), g);
        ao.draws = o.draws.value_or(manifest.draws);
        ao.calibrate = o.calibrate.value_or(manifest.calibrate);
        ao.figures = o.figures;
        ao.bootstrap_from_estimates = o.bootstrap_from_estimates;
        const SampleRef ref{manifest.name, manifest.path, index[g.name], o.seed.value_or(manifest.seed)};
        galaxies[i] = run_one(g, ao, ref, work, o.shown_paths);
      } catch (...) {
#pragma omp critical(sample_stop)
        if (!stop) stop = std::current_exception();
      }
#pragma omp critical(sample_progress)
      progress.advance();
    }
    if (stop) std::rethrow_exception(stop);
    progress.finish();
    write_sample_products(staging.path(), galaxies);
    if (o.record_shard) {
      ShardRecord record{o.selection.shard_index, o.selection.shard_count, manifest.path, manifest.name, {}};
      for (const auto& g : selected) record.galaxies.push_back(g.name);
      write_shard_record(staging.path(), record);
    }
    staging.commit();
  } catch (const InputError& e) {
    staging.rethrow_in_target(e);
  }
  RunSummary s;
  s.galaxies = galaxies;
  s.out_dir = o.out_dir;
  s.html_path = (out / "report.html").string();
  return s;
}

namespace {

// A galaxy folder of one of the merged folders, and what its report says.
struct MergedGalaxy {
  fs::path folder;
  GalaxySummary summary;
};

// Every DIR/<galaxy>/report.json of the merged folders; a galaxy found twice
// is an error naming both reports.
std::vector<MergedGalaxy> read_merged_galaxies(const std::vector<std::string>& dirs) {
  std::vector<MergedGalaxy> found;
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
      const std::string file = (p / "report.json").string();
      GalaxySummary g = read_report_file(file);
      if (seen.count(g.input.name)) throw InputError(file, "galaxy '" + g.input.name + "' is also in " + seen[g.input.name]);
      seen[g.input.name] = file;
      sample_names.insert(g.sample ? g.sample->name : "");
      found.push_back({p, std::move(g)});
    }
  }
  if (sample_names.size() > 1) warn("merging galaxies from differently named samples; the first name is used");
  return found;
}

// The merge's products written into `dir` (a staging folder): a copy of
// every galaxy folder not already at OUT/<galaxy> (when OUT is one of the
// merged folders), then the sample products.
void write_merge(const std::string& dir, const std::string& out, const std::vector<MergedGalaxy>& found) {
  std::vector<GalaxySummary> galaxies;
  for (const auto& f : found) {
    galaxies.push_back(f.summary);
    const fs::path name = f.folder.filename();
    if (comparable_path(fs::path(out) / name) == comparable_path(f.folder)) continue;  // already in place
    copy_folder(f.folder, fs::path(dir) / name);
  }
  write_sample_products(dir, galaxies, out);
}

// Into an OUT that holds merged folders no product may replace one of them
// or a folder holding one (a galaxy named "shards" in the Slurm layout).
void check_products_spare(const StagedEntries& staging, const std::vector<fs::path>& held) {
  std::error_code ec;
  for (auto it = fs::directory_iterator(staging.path(), ec); !ec && it != fs::directory_iterator(); it.increment(ec)) {
    const fs::path replaced = comparable_path(fs::path(staging.target()) / it->path().filename());
    for (const auto& h : held)
      if (path_lies_in(h, replaced))
        throw InputError(replaced.string(), "holds " + h.string() +
                                                ", one of the folders being merged, and the merged sample has an "
                                                "entry of the same name; choose another output folder");
  }
}

}  // namespace

RunSummary merge_outputs(const std::vector<std::string>& dirs, const std::string& out_dir, bool overwrite) {
  if (dirs.empty()) throw InputError("", "merge needs at least one run folder");
  if (out_dir.empty()) throw SettingError("out", "''", "the name of a folder");
  // Every shard there and finished (pipeline/shard_record.hpp), every
  // report read, before anything is written.
  check_shards_complete(dirs);
  const std::vector<MergedGalaxy> found = read_merged_galaxies(dirs);
  const fs::path out(out_dir), out_c = comparable_path(out_dir);
  // The merged folders that lie in OUT (the Slurm layout: OUT/shards/I).
  std::vector<fs::path> held;
  bool out_is_merged = false;
  for (const auto& d : dirs) {
    const fs::path c = comparable_path(d);
    if (path_lies_in(c, out_c)) held.push_back(c);
    out_is_merged = out_is_merged || c == out_c;
  }
  if (held.empty()) {
    // OUT holds none of them: written whole, as `run` writes (io/staged_folder.hpp).
    StagedFolder staging(out_dir, overwrite);
    try {
      write_merge(staging.path(), staging.target(), found);
      staging.commit();
    } catch (const InputError& e) {
      staging.rethrow_in_target(e);
    }
  } else {
    // OUT cannot be replaced whole: staged inside it, moved into place entry
    // by entry, sample.json last (io/staged_entries.hpp).
    if (!overwrite && !out_is_merged && fs::exists(out / "sample.json"))
      throw InputError(out_dir, "already holds a sample run (sample.json); allow overwriting (" +
                                    setting_ref("overwrite") + ") or choose another folder");
    StagedEntries staging(out_dir, "sample.json");
    try {
      write_merge(staging.path(), staging.target(), found);
      check_products_spare(staging, held);
      staging.commit();
    } catch (const InputError& e) {
      staging.rethrow_in_target(e);
    }
  }
  RunSummary s;
  for (const auto& f : found) s.galaxies.push_back(f.summary);
  std::stable_sort(s.galaxies.begin(), s.galaxies.end(), [](const GalaxySummary& a, const GalaxySummary& b) {
    return sample_index(a) < sample_index(b);
  });
  s.out_dir = out_dir;
  s.html_path = (out / "report.html").string();
  return s;
}

}  // namespace fulcrum::pipeline
