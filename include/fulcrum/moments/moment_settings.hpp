// The settings of the moment maps as a person gives them: on the command line
// (`fulcrum moments`, `fulcrum analyse --cube`, `fulcrum calibrate --cube`)
// or in a sample manifest (a galaxy's `moments` table). One list of named
// settings serves both, so that they read the same names, types, defaults
// and help texts.
//
// Names: the manifest key is the name (`grow_channels`); the command-line
// option is "--" and the name with '_' written '-' (`--grow-channels`).
// Units: thresholds in sigma of the smoothed cube, growth in channels and
// pixels, the rest frequency in Hz (0: from RESTFRQ/RESTFREQ).
//
//   MomentSettings s;                       // defaults of MomentOptions
//   for (auto& setting : moment_settings(s)) ...   // bind options / read keys
//   MomentOptions o = resolve_moment_settings(s, option_name);
#pragma once

#include <functional>
#include <string>
#include <variant>
#include <vector>

#include <nlohmann/json.hpp>

#include "fulcrum/moments/moment_maps.hpp"

namespace fulcrum {

struct MomentSettings {
  std::string mask = "smooth-and-mask";  // smooth-and-mask, moment-masking, external, none
  std::string mask_cube;                 // external mask cube (path); implies mask = external
  std::string convention;                // "" (the cube's axis), "radio" or "optical"
  double rest_frequency_hz = 0.0;        // 0: from the header
  MomentOptions options;                 // thresholds, growth, smoothing, noise, channel minima
};

// One setting: its name, help text and the field it fills.
struct MomentSetting {
  std::string name;
  std::string help;
  std::variant<double*, int*, bool*, std::string*> target;
  bool is_path = false;  // a file name (a manifest resolves it against its folder)
};

// The settings, bound to the fields of `s` (valid while `s` lives).
std::vector<MomentSetting> moment_settings(MomentSettings& s);

// "--grow-channels" for "grow_channels".
std::string option_name(const std::string& name);

// What is wrong with the settings, or "" when nothing is. `name_of` writes a
// setting's name as the person gave it (option_name for the command line,
// quoted keys for a manifest).
std::string moment_settings_problem(const MomentSettings& s,
                                    const std::function<std::string(const std::string&)>& name_of);

// The options to make the maps with: checks the settings (InputError with
// the problem), reads the external mask cube, sets the spectral options.
MomentOptions resolve_moment_settings(const MomentSettings& s,
                                      const std::function<std::string(const std::string&)>& name_of);

// The settings as given, for a report: {"mask": ..., "threshold": ..., ...}.
nlohmann::json to_json(const MomentSettings& s);

}  // namespace fulcrum
