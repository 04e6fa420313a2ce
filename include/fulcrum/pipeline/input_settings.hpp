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
#include <vector>

namespace fulcrum::pipeline {

// A centre given from outside the analysis (a catalogue position, another
// paper's centre): a name, RA and Dec in degrees (ICRS) and a circular
// 1-sigma error in arcsec. It becomes a plausible centre of the verdict and
// gets its own A, but is never the adopted centre.
struct ExternalCentre {
  std::string name;
  double ra_deg = 0.0, dec_deg = 0.0, err_arcsec = 0.0;
};

}  // namespace fulcrum::pipeline

namespace fulcrum::pipeline::setting {

double tail_pa_deg(double v);          // finite, within [-720, 720]; returned in [0, 360)
double tail_pa_err_deg(double v);      // [0, 90]: 0 holds the tail direction fixed
double rms(double v);                  // > 0, map units
double clip_snr(double v);             // (0, 20]: S/N below which the intensity map was clipped
double psf_fwhm_arcsec(double v);      // > 0 (never silently replaced)
double distance_mpc(double v);         // (0, 1e5]
std::uint64_t seed(std::int64_t v);    // [0, 2^53)
int draws(std::int64_t v);             // [100, 1e7] bootstrap draws (about 40 bytes each: 1e8 took 3.9 GB)
int calibrate(std::int64_t v);         // [0, 100000] matched mocks per set
std::string co_line(const std::string& v);  // "1-0" or "2-1"
double alpha_co(double v);             // > 0, Msun (K km/s pc^2)^-1
double co_ratio_21(double v);          // (0, 2]
double redshift(double v);             // [0, 10]
// The setting `centre_from`: "NAME=RA,DEC,ERR" (RA in [0, 360) deg, Dec in
// [-90, 90] deg, ERR > 0 arcsec; NAME of letters, digits and . _ + -, not a
// name fulcrum uses for its own estimates), as the command line and the
// manifest give it.
ExternalCentre centre_from(const std::string& text);
// The list: every entry as above and no name given twice.
std::vector<ExternalCentre> centres_from(const std::vector<std::string>& texts);

}  // namespace fulcrum::pipeline::setting
