// The allowed values of each setting of a galaxy or a sample, checked in one
// place for every way the setting arrives: the command line (`analyse`,
// `calibrate`, `run`) and the TOML manifest call these same functions.
//
// Each function is named after the setting's manifest key, takes the value
// as given and returns it as used (angles wrapped into [0, 360)), or throws
// SettingError (core/settings_check.hpp) naming the key, the bad value and
// what is allowed. The manifest adds its file and line; the command line
// prints its flag in place of the key.
//
// Units: degrees for angles (position angles north through east), arcsec,
// Mpc, map units for rms.
#pragma once

#include <cstdint>
#include <string>

namespace fulcrum::pipeline::setting {

double tail_pa_deg(double v);          // finite, within [-720, 720]; returned in [0, 360)
double tail_pa_err_deg(double v);      // [0, 90]: 0 holds the tail direction fixed
double rms(double v);                  // > 0, map units
double clip_snr(double v);             // (0, 20]: S/N below which the intensity map was clipped
double psf_fwhm_arcsec(double v);      // > 0 (never silently replaced)
double distance_mpc(double v);         // (0, 1e5]
std::uint64_t seed(std::int64_t v);    // [0, 2^53)
int draws(std::int64_t v);             // [100, 1e8] bootstrap draws
int calibrate(std::int64_t v);         // [0, 100000] matched mocks per set
std::string co_line(const std::string& v);  // "1-0" or "2-1"
double alpha_co(double v);             // > 0, Msun (K km/s pc^2)^-1
double co_ratio_21(double v);          // (0, 2]
double redshift(double v);             // [0, 10]

}  // namespace fulcrum::pipeline::setting
