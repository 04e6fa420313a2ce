// The command-line flag that carries each library setting, for messages:
// the library's checks (core/settings_check.hpp) name settings the way a
// manifest spells them (`tail_pa_deg`); on the command line the person typed
// a flag (`--tail-pa`), so main() prints that instead.
#pragma once

#include <map>
#include <regex>
#include <string>

namespace fulcrum::cli {

// "--" + the setting with '_' as '-', except where the flag is spelt
// differently from the manifest key.
inline std::string setting_flag(const std::string& setting) {
  static const std::map<std::string, std::string> renamed = {
      {"tail_pa_deg", "--tail-pa"},
      {"tail_pa_err_deg", "--tail-pa-err"},
      {"psf_fwhm_arcsec", "--psf-fwhm"},
      {"step_arcsec", "--step"},
      {"half_width_arcsec", "--half-width"},
      {"angle_half_width_deg", "--angle-half-width"},
      {"angle_step_deg", "--angle-step"},
      {"overwrite", "--force"},
  };
  if (auto it = renamed.find(setting); it != renamed.end()) return it->second;
  std::string flag = "--" + setting;
  for (char& ch : flag)
    if (ch == '_') ch = '-';
  return flag;
}

// The message with every setting named by setting_ref() ("`psf_fwhm_arcsec`")
// shown as its flag ("--psf-fwhm").
inline std::string with_flags(const std::string& message) {
  static const std::regex named("`([a-z][a-z0-9_]*)`");
  std::string out;
  auto last = message.cbegin();
  for (std::sregex_iterator it(message.begin(), message.end(), named), end; it != end; ++it) {
    out.append(last, (*it)[0].first);
    out += setting_flag((*it)[1].str());
    last = (*it)[0].second;
  }
  out.append(last, message.cend());
  return out;
}

}  // namespace fulcrum::cli
