// Molecular-gas masses of the halves (sources in the header).
#include "fulcrum/report/molecular_gas.hpp"

#include <cmath>

#include "fulcrum/core/error.hpp"

namespace fulcrum::report {

double co_rest_frequency_ghz(const std::string& line) {
  if (line == "1-0") return 115.2712018;
  if (line == "2-1") return 230.538;
  throw InputError("", "CO line must be \"1-0\" or \"2-1\" (got \"" + line + "\")");
}

double co_line_luminosity(double flux_jykms, const std::string& line, double distance_mpc,
                          double redshift) {
  double nu_obs = co_rest_frequency_ghz(line) / (1.0 + redshift);
  return 3.25e7 * flux_jykms * distance_mpc * distance_mpc / (nu_obs * nu_obs) /
         std::pow(1.0 + redshift, 3);
}

std::optional<MolecularGasSummary> molecular_gas_masses(double leading_flux, double trailing_flux,
                                                        double leading_err, double trailing_err,
                                                        const std::string& flux_unit,
                                                        const MolecularGasOptions& o,
                                                        std::string* why) {
  auto set = [&](const std::string& s) {
    if (why) *why = s;
    return std::nullopt;
  };
  if (flux_unit != "Jy km/s" && flux_unit != "Jy km / s")
    return set("the half fluxes are in '" + flux_unit + "', not Jy km/s (the line map's BUNIT must be Jy/beam km/s)");
  if (!(o.distance_mpc > 0)) return set("no distance given");
  if (o.line != "1-0" && o.line != "2-1") return set("unknown CO line '" + o.line + "'");
  double to_10 = o.line == "2-1" ? 1.0 / o.co_ratio_21 : 1.0;
  double per_flux = co_line_luminosity(1.0, o.line, o.distance_mpc, o.redshift);
  MolecularGasSummary s;
  s.leading_lprime = per_flux * leading_flux;
  s.trailing_lprime = per_flux * trailing_flux;
  s.leading_mass = o.alpha_co * to_10 * s.leading_lprime;
  s.trailing_mass = o.alpha_co * to_10 * s.trailing_lprime;
  s.leading_mass_err = std::isfinite(leading_err) ? o.alpha_co * to_10 * per_flux * leading_err : NAN;
  s.trailing_mass_err = std::isfinite(trailing_err) ? o.alpha_co * to_10 * per_flux * trailing_err : NAN;
  return s;
}

nlohmann::json MolecularGasSummary::to_json(const MolecularGasOptions& o) const {
  auto num = [](double v) { return std::isfinite(v) ? nlohmann::json(v) : nlohmann::json(nullptr); };
  nlohmann::json j = {
      {"line", "CO(" + o.line + ")"},
      {"alpha_co", o.alpha_co},
      {"alpha_co_unit", "solMass / (K km / s pc2)"},
      {"alpha_co_source", "Bolatto, Wolfire & Leroy 2013, ARA&A 51, 207 (Galactic value, with helium)"},
      {"luminosity_source", "Solomon & Vanden Bout 2005, ARA&A 43, 677, eq. 3"},
      {"distance_mpc", o.distance_mpc},
      {"redshift", o.redshift},
      {"redshift_source", o.redshift_source},
      {"leading_lprime", leading_lprime},
      {"trailing_lprime", trailing_lprime},
      {"lprime_unit", "K km / s pc2"},
      {"leading_mass_msun", leading_mass},
      {"trailing_mass_msun", trailing_mass},
      {"leading_mass_err_msun", num(leading_mass_err)},
      {"trailing_mass_err_msun", num(trailing_mass_err)},
      {"note", "informative only; the verdict does not use these masses; errors from the flux errors only"}};
  if (o.line == "2-1") {
    j["co_ratio_21"] = o.co_ratio_21;
    j["co_ratio_21_source"] = "den Brok et al. 2021, MNRAS 504, 3221 (mean R21 of nearby discs; recalled, check)";
  }
  return j;
}

}  // namespace fulcrum::report
