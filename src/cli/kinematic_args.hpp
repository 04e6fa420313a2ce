// The kinematic-fit settings (kinematics/kinematic_settings.hpp) as
// command-line options, shared by `kinematics`, `analyse` and `calibrate`.
#pragma once

#include <CLI/CLI.hpp>
#include <string>
#include <vector>

#include "fulcrum/kinematics/kinematic_settings.hpp"
#include "fulcrum/moments/moment_settings.hpp"

namespace fulcrum::cli {

// Bind the settings of `s` as options of `cmd` (in option group `group`,
// none when empty). Switches that are on by default become "--no-<name>".
inline std::vector<CLI::Option*> add_kinematic_options(CLI::App* cmd, kinematics::KinematicSettings& s,
                                                       const std::string& group = "") {
  std::vector<CLI::Option*> out;
  for (auto& k : kinematics::kinematic_settings(s)) {
    CLI::Option* o = nullptr;
    if (auto* b = std::get_if<bool*>(&k.target)) {
      bool* target = *b;
      o = cmd->add_flag_callback(option_name("no_" + k.name), [target] { *target = false; },
                                 "Turn off: " + k.help);
    } else if (auto* d = std::get_if<std::optional<double>*>(&k.target)) {
      o = cmd->add_option(option_name(k.name), **d, k.help);
    } else if (auto* str = std::get_if<std::string*>(&k.target)) {
      o = cmd->add_option(option_name(k.name), **str, k.help);
    }
    if (!group.empty()) o->group(group);
    out.push_back(o);
  }
  return out;
}

// How a setting is named on the command line, for messages.
inline std::string kinematic_option_name(const std::string& name) {
  return option_name(name);
}

}  // namespace fulcrum::cli
