// The allowed values of galaxy and sample settings (pipeline/input_settings.hpp).
#include "fulcrum/pipeline/input_settings.hpp"

#include <cctype>
#include <cmath>
#include <cstdlib>

#include "fulcrum/core/settings_check.hpp"
#include "fulcrum/core/work_limit.hpp"
#include "fulcrum/sky/centre.hpp"

namespace fulcrum::pipeline::setting {

double tail_pa_deg(double v) { return check_position_angle_deg("tail_pa_deg", v); }

double tail_pa_err_deg(double v) { return check_finite_in_range("tail_pa_err_deg", v, 0.0, 90.0, "degrees"); }

double rms(double v) { return check_positive("rms", v, "(map units)"); }

double clip_snr(double v) {
  if (!(v > 0.0 && v <= 20.0))  // NaN fails too
    throw SettingError("clip_snr", setting_value_text(v), "a finite number within (0, 20] (sigma)");
  return v;
}

double psf_fwhm_arcsec(double v) { return check_positive("psf_fwhm_arcsec", v, "arcsec"); }

double distance_mpc(double v) {
  check_positive("distance_mpc", v, "Mpc");
  return check_finite_in_range("distance_mpc", v, 0.0, 1e5, "Mpc");
}

std::uint64_t seed(std::int64_t v) { return check_seed("seed", v); }

// Work limits (core/work_limit.hpp, scaled by `limit_scale`): about 40
// bytes per bootstrap draw (1e8 draws took 3.9 GB); a calibration's mocks
// are each a whole analysis.
int draws(std::int64_t v) {
  return static_cast<int>(check_count_limit("draws", v, 100, 1e7, "the bootstrap (about 4e+08 bytes)", "draws"));
}

int calibrate(std::int64_t v) {
  return static_cast<int>(check_count_limit("calibrate", v, 0, 1e5, "the calibration", "mocks per set"));
}

std::string co_line(const std::string& v) { return check_one_of("co_line", v, {"1-0", "2-1"}); }

double alpha_co(double v) { return check_positive("alpha_co", v, "Msun (K km/s pc^2)^-1"); }

double co_ratio_21(double v) {
  if (!(v > 0.0)) throw SettingError("co_ratio_21", setting_value_text(v), "a finite number within (0, 2]");
  return check_finite_in_range("co_ratio_21", v, 0.0, 2.0);
}

double redshift(double v) { return check_finite_in_range("redshift", v, 0.0, 10.0); }

ExternalCentre centre_from(const std::string& text) {
  const std::string shown = "'" + text + "'";
  auto refuse = [&](const std::string& rule) { throw SettingError("centre_from", shown, rule); };
  const std::string form = "NAME=RA,DEC,ERR (RA and Dec in deg, the 1-sigma error in arcsec), e.g. "
                           "catalogue=187.7059,12.3911,0.5";
  const auto eq = text.find('=');
  if (eq == std::string::npos || eq == 0) refuse(form);
  ExternalCentre c;
  c.name = text.substr(0, eq);
  for (char ch : c.name)
    if (!(std::isalnum(static_cast<unsigned char>(ch)) || ch == '.' || ch == '_' || ch == '+' || ch == '-'))
      refuse("a NAME of letters, digits and . _ + - only; " + form);
  if (centre_method_from_name(c.name))
    refuse("a NAME other than those of fulcrum's own estimates (" + c.name + " is one)");
  std::vector<double> v;
  std::size_t start = eq + 1;
  while (start <= text.size()) {
    const auto comma = text.find(',', start);
    const std::string part = text.substr(start, comma == std::string::npos ? std::string::npos : comma - start);
    char* end = nullptr;
    const double x = std::strtod(part.c_str(), &end);
    if (part.empty() || end != part.c_str() + part.size()) refuse(form);
    v.push_back(x);
    if (comma == std::string::npos) break;
    start = comma + 1;
  }
  if (v.size() != 3) refuse(form);
  if (!(std::isfinite(v[0]) && v[0] >= 0.0 && v[0] < 360.0)) refuse("an RA within [0, 360) deg; " + form);
  if (!(std::isfinite(v[1]) && v[1] >= -90.0 && v[1] <= 90.0)) refuse("a Dec within [-90, 90] deg; " + form);
  if (!(std::isfinite(v[2]) && v[2] > 0.0 && v[2] <= 3600.0)) refuse("an error within (0, 3600] arcsec; " + form);
  c.ra_deg = v[0];
  c.dec_deg = v[1];
  c.err_arcsec = v[2];
  return c;
}

std::vector<ExternalCentre> centres_from(const std::vector<std::string>& texts) {
  std::vector<ExternalCentre> out;
  for (const auto& t : texts) {
    out.push_back(centre_from(t));
    for (std::size_t i = 0; i + 1 < out.size(); ++i)
      if (out[i].name == out.back().name)
        throw SettingError("centre_from", "'" + t + "'", "a NAME not given twice (" + out.back().name + " is)");
  }
  return out;
}

}  // namespace fulcrum::pipeline::setting
