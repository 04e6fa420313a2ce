// The kinematic-fit settings as a person gives them: on the command line
// (`fulcrum kinematics`, `fulcrum analyse`, `fulcrum calibrate`) or in a
// sample manifest (a galaxy's `kinematics` table). One list of named
// settings serves all, so that they read the same names, types and help.
//
// Names: the manifest key is the name (`max_radius`); the command-line
// option is "--" and the name with '_' written '-' (`--max-radius`), except
// the on/off switches, which are on by default and turned off by a flag
// ("--no-smearing-correction", "--no-footprint-cleaning", "--no-scatter-term").
// Units: RA/Dec in degrees, PA (receding half, north through east) and
// inclination in degrees, vsys in km/s, radii and centre errors in arcsec.
//
// A value without its error is a first guess; with its error (pa and
// pa_err, ...) it is also a Gaussian prior of that 1-sigma width in the
// global fit (global_fit.hpp). `fix` holds parameters at their guesses.
//
//   KinematicSettings s;                          // nothing set
//   for (auto& setting : kinematic_settings(s)) ... // bind options / read keys
//   apply_kinematic_settings(s, options, name_of); // into KinematicOptions
#pragma once

#include <functional>
#include <optional>
#include <string>
#include <variant>
#include <vector>

#include <nlohmann/json.hpp>

namespace fulcrum::kinematics {

struct KinematicOptions;

struct KinematicSettings {
  std::optional<double> centre_ra, centre_dec, pa, inc, vsys;       // first guesses
  std::optional<double> centre_err, pa_err, inc_err, vsys_err;      // priors (1 sigma)
  std::string fix;                          // comma list of centre, pa, inc, vsys
  std::optional<double> max_radius;         // arcsec
  std::optional<double> noise_correlation;  // eta; 0: 2 x pixels per beam
  bool smearing_correction = true;
  bool footprint_cleaning = true;
  bool scatter_term = true;                 // velocity_scatter.hpp
  std::optional<double> pa_starts;          // number of PA starts (integer)
};

// One setting: its name, help text and the field it fills. `off_switch`:
// a bool that is on by default, turned off on the command line by
// "--no-<name>".
struct KinematicSetting {
  std::string name;
  std::string help;
  std::variant<std::optional<double>*, std::string*, bool*> target;
  bool off_switch = false;
};

// The settings, bound to the fields of `s` (valid while `s` lives).
std::vector<KinematicSetting> kinematic_settings(KinematicSettings& s);

// Check the settings and write them into `options`. Throws InputError("",
// problem) naming the setting through `name_of` ("--pa-err" or "'pa_err'").
void apply_kinematic_settings(const KinematicSettings& s, KinematicOptions& options,
                              const std::function<std::string(const std::string&)>& name_of);

// What is wrong with the settings, or "" when nothing is.
std::string kinematic_settings_problem(const KinematicSettings& s,
                                       const std::function<std::string(const std::string&)>& name_of);

// The settings given, for a report ({"pa": 36, "fix": "inc", ...}).
nlohmann::json to_json(const KinematicSettings& s);

}  // namespace fulcrum::kinematics
