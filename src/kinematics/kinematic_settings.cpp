// The kinematic-fit settings by name (kinematic_settings.hpp).
#include "fulcrum/kinematics/kinematic_settings.hpp"

#include <cmath>
#include <sstream>

#include "fulcrum/core/error.hpp"
#include "fulcrum/kinematics/kinematic_fit.hpp"

namespace fulcrum::kinematics {

std::vector<KinematicSetting> kinematic_settings(KinematicSettings& s) {
  return {
      {"centre_ra", "First-guess centre RA (deg)", &s.centre_ra},
      {"centre_dec", "First-guess centre Dec (deg)", &s.centre_dec},
      {"pa", "First-guess PA of the receding half (deg, north through east)", &s.pa},
      {"inc", "First-guess inclination (deg)", &s.inc},
      {"vsys", "First-guess systemic velocity (km/s)", &s.vsys},
      {"centre_err", "Prior on the centre: 1-sigma error (arcsec) about centre_ra/centre_dec", &s.centre_err},
      {"pa_err", "Prior on the PA: 1-sigma error (deg) about pa", &s.pa_err},
      {"inc_err", "Prior on the inclination: 1-sigma error (deg) about inc", &s.inc_err},
      {"vsys_err", "Prior on vsys: 1-sigma error (km/s) about vsys", &s.vsys_err},
      {"fix", "Hold at the first guess: centre, pa, inc, vsys (comma list)", &s.fix},
      {"max_radius", "Outer ring radius (arcsec); with a centre also the footprint's sky radius", &s.max_radius},
      {"noise_correlation", "Covariance factor for correlated pixels (0: 2 x pixels per beam)", &s.noise_correlation},
      {"smearing_correction", "Correct the fit for beam smearing (on by default)", &s.smearing_correction, true},
      {"footprint_cleaning", "Remove velocity outliers, isolated pixels and islands smaller than a beam (on by default)",
       &s.footprint_cleaning, true},
      {"scatter_term", "Add the velocity scatter the error map does not describe to every pixel's error and refit "
       "(on by default)", &s.scatter_term, true},
      {"pa_starts", "PA starts of the multi-start fit, evenly spaced (8)", &s.pa_starts},
  };
}

namespace {

void need(bool ok, const std::string& problem) {
  if (!ok) throw InputError("", problem);
}

void apply_priors(const KinematicSettings& s, KinematicOptions& o,
                  const std::function<std::string(const std::string&)>& n) {
  struct Pair { const std::optional<double>& value; const std::optional<double>& err; const char* v; const char* e; };
  for (const Pair& p : {Pair{s.pa, s.pa_err, "pa", "pa_err"}, Pair{s.inc, s.inc_err, "inc", "inc_err"},
                        Pair{s.vsys, s.vsys_err, "vsys", "vsys_err"},
                        Pair{s.centre_ra, s.centre_err, "centre_ra", "centre_err"}}) {
    if (!p.err) continue;
    need(p.value.has_value(), n(p.e) + " needs " + n(p.v) + " (the prior's centre)");
    need(*p.err > 0 && std::isfinite(*p.err), n(p.e) + " must be positive");
  }
  o.prior.pa_err_deg = s.pa_err;
  o.prior.inc_err_deg = s.inc_err;
  o.prior.vsys_err_kms = s.vsys_err;
  o.prior.centre_err_arcsec = s.centre_err;
}

}  // namespace

void apply_kinematic_settings(const KinematicSettings& s, KinematicOptions& o,
                              const std::function<std::string(const std::string&)>& n) {
  need(s.centre_ra.has_value() == s.centre_dec.has_value(),
       n("centre_ra") + " and " + n("centre_dec") + " must be given together");
  if (s.centre_ra) {
    need(std::isfinite(*s.centre_ra) && *s.centre_dec >= -90 && *s.centre_dec <= 90,
         n("centre_dec") + " must lie in [-90, 90] deg");
    o.centre_guess = WorldCoord{*s.centre_ra, *s.centre_dec};
  }
  if (s.pa) need(std::isfinite(*s.pa), n("pa") + " must be a finite angle (deg)");
  o.pa_guess_deg = s.pa;
  if (s.inc) need(*s.inc >= 0 && *s.inc <= 90, n("inc") + " must lie in [0, 90] deg");
  o.inc_guess_deg = s.inc;
  if (s.vsys) need(std::isfinite(*s.vsys), n("vsys") + " must be finite (km/s)");
  o.vsys_guess_kms = s.vsys;
  if (s.max_radius) need(*s.max_radius > 0 && std::isfinite(*s.max_radius), n("max_radius") + " must be positive (arcsec)");
  o.max_radius_arcsec = s.max_radius;
  if (s.noise_correlation) {
    need(*s.noise_correlation >= 0 && std::isfinite(*s.noise_correlation), n("noise_correlation") + " must be >= 0");
    o.noise_correlation = *s.noise_correlation;
  }
  std::stringstream list(s.fix);
  for (std::string f; std::getline(list, f, ',');) {
    while (!f.empty() && f.back() == ' ') f.pop_back();
    while (!f.empty() && f.front() == ' ') f.erase(f.begin());
    if (f == "centre") o.fix_centre = true;
    else if (f == "pa") o.fix_pa = true;
    else if (f == "inc") o.fix_inc = true;
    else if (f == "vsys") o.fix_vsys = true;
    else if (!f.empty()) need(false, n("fix") + " takes centre, pa, inc or vsys (got '" + f + "')");
  }
  need(!o.fix_centre || o.centre_guess, n("fix") + " centre needs " + n("centre_ra") + " and " + n("centre_dec"));
  apply_priors(s, o, n);
  o.correct_beam_smearing = s.smearing_correction;
  o.footprint.enabled = s.footprint_cleaning;
  o.scatter_term = s.scatter_term;
  if (s.pa_starts) {
    need(*s.pa_starts >= 1 && *s.pa_starts <= 72 && std::floor(*s.pa_starts) == *s.pa_starts,
         n("pa_starts") + " must be a whole number in [1, 72]");
    o.starts.pa_starts = static_cast<int>(*s.pa_starts);
  }
}

std::string kinematic_settings_problem(const KinematicSettings& s,
                                       const std::function<std::string(const std::string&)>& n) {
  try {
    KinematicOptions check;
    apply_kinematic_settings(s, check, n);
  } catch (const InputError& e) {
    return e.problem();
  }
  return "";
}

nlohmann::json to_json(const KinematicSettings& s) {
  nlohmann::json j = nlohmann::json::object();
  KinematicSettings copy = s;
  for (const auto& k : kinematic_settings(copy)) {
    if (auto* d = std::get_if<std::optional<double>*>(&k.target)) {
      if (**d) j[k.name] = ***d;
    } else if (auto* str = std::get_if<std::string*>(&k.target)) {
      if (!(*str)->empty()) j[k.name] = **str;
    } else if (auto* b = std::get_if<bool*>(&k.target)) {
      if (!**b) j[k.name] = false;
    }
  }
  return j;
}

}  // namespace fulcrum::kinematics
