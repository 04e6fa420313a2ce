// Optional molecular-gas masses of the two halves from their CO line fluxes.
// Informative only: the verdict never depends on these numbers.
//
// Line luminosity (Solomon & Vanden Bout 2005, ARA&A 43, 677, eq. 3):
//   L'_CO = 3.25e7 * S_CO dV * nu_obs^-2 * D_L^2 * (1 + z)^-3   [K km/s pc^2]
// with S_CO dV in Jy km/s, nu_obs = nu_rest / (1 + z) in GHz and D_L in Mpc.
// For CO(2-1) the CO(1-0) luminosity is L'_10 = L'_21 / R21 with R21 the
// CO(2-1)/CO(1-0) brightness-temperature ratio; default 0.65, the mean of
// den Brok et al. 2021 (MNRAS 504, 3221) for nearby discs (value recalled
// from memory: check it against the paper before quoting it).
// Mass (Bolatto, Wolfire & Leroy 2013, ARA&A 51, 207): M_H2 = alpha_CO *
// L'_10 with the Galactic alpha_CO = 4.3 Msun (K km/s pc^2)^-1, which
// includes helium (X_CO = 2e20 cm^-2 (K km/s)^-1).
// Rest frequencies: CO(1-0) 115.2712018 GHz, CO(2-1) 230.538 GHz (common
// practice; the laboratory values tabulated by the spectral-line catalogues).
#pragma once

#include <optional>
#include <string>

#include <nlohmann/json.hpp>

namespace fulcrum::report {

struct MolecularGasOptions {
  std::string line = "1-0";        // "1-0" or "2-1"
  double alpha_co = 4.3;           // Msun (K km/s pc^2)^-1, Bolatto+2013 Galactic
  double co_ratio_21 = 0.65;       // R21, den Brok+2021 mean (recalled)
  double distance_mpc = 0.0;       // luminosity distance
  double redshift = 0.0;
  std::string redshift_source;     // "given", "from the systemic velocity", "assumed 0"
};

double co_rest_frequency_ghz(const std::string& line);
// L'_CO of the observed line (K km/s pc^2) for a flux in Jy km/s.
double co_line_luminosity(double flux_jykms, const std::string& line, double distance_mpc,
                          double redshift);

struct MolecularGasSummary {
  double leading_lprime = 0, trailing_lprime = 0;    // of the observed line, K km/s pc^2
  double leading_mass = 0, trailing_mass = 0;        // Msun
  double leading_mass_err = 0, trailing_mass_err = 0;  // from the flux errors only
  nlohmann::json to_json(const MolecularGasOptions& o) const;
};

// Masses for the two halves; fluxes must be in Jy km/s (returns nullopt and
// sets `why` otherwise, e.g. when the map's unit is not per beam).
std::optional<MolecularGasSummary> molecular_gas_masses(double leading_flux, double trailing_flux,
                                                        double leading_err, double trailing_err,
                                                        const std::string& flux_unit,
                                                        const MolecularGasOptions& o,
                                                        std::string* why);

}  // namespace fulcrum::report
