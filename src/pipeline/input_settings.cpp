// The allowed values of galaxy and sample settings (pipeline/input_settings.hpp).
#include "fulcrum/pipeline/input_settings.hpp"

#include <cmath>

#include "fulcrum/core/settings_check.hpp"

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

int draws(std::int64_t v) { return static_cast<int>(check_integer_in_range("draws", v, 100, 100000000)); }

int calibrate(std::int64_t v) {
  return static_cast<int>(check_integer_in_range("calibrate", v, 0, 100000, "mocks per set"));
}

std::string co_line(const std::string& v) { return check_one_of("co_line", v, {"1-0", "2-1"}); }

double alpha_co(double v) { return check_positive("alpha_co", v, "Msun (K km/s pc^2)^-1"); }

double co_ratio_21(double v) {
  if (!(v > 0.0)) throw SettingError("co_ratio_21", setting_value_text(v), "a finite number within (0, 2]");
  return check_finite_in_range("co_ratio_21", v, 0.0, 2.0);
}

double redshift(double v) { return check_finite_in_range("redshift", v, 0.0, 10.0); }

}  // namespace fulcrum::pipeline::setting
