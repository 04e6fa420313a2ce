// Spectral axes through wcslib against astropy.units' doppler_radio and
// doppler_optical equivalencies (python3-astropy), to 1e-6 km/s, and the
// refusals: no spectral axis, no rest frequency where one is needed.
#include <catch2/catch.hpp>

#include <cmath>
#include <cstdio>
#include <fstream>

#include <nlohmann/json.hpp>

#include "../support/test_support.hpp"
#include "fulcrum/core/error.hpp"
#include "fulcrum/io/header_card.hpp"
#include "fulcrum/moments/spectral_axis.hpp"

using namespace fulcrum;

namespace {

// A 3-axis header: a small SIN celestial grid and the given spectral axis.
std::string header(const std::string& ctype3, double crval3, double cdelt3, double crpix3,
                   const std::string& cunit3, const std::string& rest_key, double rest) {
  std::string h;
  h += header_card("NAXIS", "3", false);
  h += header_card("CTYPE1", "RA---SIN", true);
  h += header_card("CTYPE2", "DEC--SIN", true);
  h += header_card("CRPIX1", "5", false);
  h += header_card("CRPIX2", "5", false);
  h += header_card("CRVAL1", "150.0", false);
  h += header_card("CRVAL2", "-30.0", false);
  h += header_card("CDELT1", header_number(-1.0 / 3600), false);
  h += header_card("CDELT2", header_number(1.0 / 3600), false);
  if (!ctype3.empty()) h += header_card("CTYPE3", ctype3, true);
  h += header_card("CRVAL3", header_number(crval3), false);
  h += header_card("CDELT3", header_number(cdelt3), false);
  h += header_card("CRPIX3", header_number(crpix3), false);
  if (!cunit3.empty()) h += header_card("CUNIT3", cunit3, true);
  if (!rest_key.empty()) h += header_card(rest_key, header_number(rest), false);
  return h;
}

constexpr double kCoKhz = 230.538e9;      // a rest frequency in Hz (value for the test only)
constexpr double kHiHz = 1.420405751768e9;

}  // namespace

TEST_CASE("frequency and velocity axes agree with astropy's Doppler equivalencies", "[moments][spectral][python]") {
  struct Case {
    std::string name, ctype, cunit, rest_key;
    double crval, cdelt, crpix, rest;
    std::optional<VelocityConvention> conv;
  };
  const int nz = 25;
  std::vector<Case> cases = {
      {"freq-radio", "FREQ", "Hz", "RESTFRQ", 2.2535e11, -2.5e6, 3.7, kCoKhz, VelocityConvention::Radio},
      {"freq-optical", "FREQ", "Hz", "RESTFRQ", 2.2535e11, -2.5e6, 3.7, kCoKhz, VelocityConvention::Optical},
      {"freq-default", "FREQ", "GHz", "RESTFREQ", 225.35, 0.0025, 12.0, kCoKhz, std::nullopt},
      {"vrad-radio", "VRAD", "km/s", "RESTFREQ", 6500.0, -7.5, 1.0, kHiHz, std::nullopt},
      {"vrad-optical", "VRAD", "m/s", "RESTFRQ", 6.5e6, 7500.0, 1.0, kHiHz, VelocityConvention::Optical},
      {"vopt-radio", "VOPT", "m/s", "RESTFRQ", 9.0e6, -11000.0, 4.0, kCoKhz, VelocityConvention::Radio},
      {"vopt-optical", "VOPT", "km/s", "", 9000.0, 11.0, 4.0, 0.0, std::nullopt},
  };
  nlohmann::json j = nlohmann::json::array();
  for (const auto& c : cases) {
    SpectralAxisOptions o;
    o.convention = c.conv;
    SpectralAxis ax =
        spectral_axis_from_header(header(c.ctype, c.crval, c.cdelt, c.crpix, c.cunit, c.rest_key, c.rest), 3, nz, o,
                                  c.name);
    REQUIRE(ax.velocity_kms.size() == nz);
    j.push_back({{"name", c.name}, {"ctype", c.ctype}, {"cunit", c.cunit}, {"crval", c.crval},
                 {"cdelt", c.cdelt}, {"crpix", c.crpix}, {"rest_hz", c.rest == 0.0 ? kCoKhz : c.rest},
                 {"convention", convention_name(ax.convention)}, {"velocity_kms", ax.velocity_kms},
                 {"width_kms", ax.width_kms}});
    if (c.name == "freq-default") CHECK(ax.convention == VelocityConvention::Radio);
    if (c.name == "vopt-optical") CHECK(ax.convention == VelocityConvention::Optical);
  }
  // The closed-form conversions, too.
  nlohmann::json direct = nlohmann::json::array();
  for (double nu : {1.40e9, 1.41e9, 2.20e11, 2.30e11}) {
    const double rest = nu < 1e10 ? kHiHz : kCoKhz;
    direct.push_back({{"nu", nu}, {"rest", rest}, {"radio", radio_velocity_kms(nu, rest)},
                      {"optical", optical_velocity_kms(nu, rest)},
                      {"nu_from_radio", frequency_from_radio_kms(radio_velocity_kms(nu, rest), rest)},
                      {"nu_from_optical", frequency_from_optical_kms(optical_velocity_kms(nu, rest), rest)}});
  }
  auto dir = test::temp_dir("spectral");
  std::ofstream(dir / "axes.json") << nlohmann::json{{"axes", j}, {"direct", direct}}.dump();
  auto r = test::run_python("check_spectral_axis.py", (dir / "axes.json").string());
  INFO(r.out << r.err);
  CHECK(r.exit_code == 0);
}

TEST_CASE("spectral axis refusals name the problem", "[moments][spectral]") {
  SpectralAxisOptions o;
  auto msg = [&](const std::string& h) -> std::string {
    try {
      spectral_axis_from_header(h, 3, 10, o, "x.fits");
    } catch (const InputError& e) {
      return e.what();
    }
    return "";
  };
  // No CTYPE3 at all; a non-spectral third axis.
  CHECK(msg(header("", 1.0, 1.0, 1.0, "", "", 0.0)).find("no spectral axis") != std::string::npos);
  CHECK(msg(header("STOKES", 1.0, 1.0, 1.0, "", "", 0.0)).find("no spectral axis") != std::string::npos);
  // Frequency with no rest frequency, and the override that repairs it.
  const std::string freq = header("FREQ", 1.4e9, 1e5, 1.0, "Hz", "", 0.0);
  CHECK(msg(freq).find("rest frequency") != std::string::npos);
  CHECK(msg(freq).find("x.fits") != std::string::npos);
  o.rest_frequency_hz = kHiHz;
  CHECK(msg(freq).empty());
  // The override wins over the header.
  auto ax = spectral_axis_from_header(header("FREQ", 1.4e9, 1e5, 1.0, "Hz", "RESTFRQ", 1.0e9), 3, 2, o, "y");
  CHECK(ax.rest_frequency_hz == kHiHz);
  CHECK(ax.velocity_kms[0] == Approx(radio_velocity_kms(1.4e9, kHiHz)).margin(1e-6));
  // A radio-velocity axis asked for optical velocities without a rest frequency.
  SpectralAxisOptions opt2;
  opt2.convention = VelocityConvention::Optical;
  CHECK_THROWS_WITH(spectral_axis_from_header(header("VRAD", 7e6, 1e4, 1.0, "m/s", "", 0.0), 3, 4, opt2, "z"),
                    Catch::Contains("rest frequency"));
}
