// A at each kind of centre and the sentence that quotes it
// (pipeline/centre_asymmetries.hpp).
#include "fulcrum/pipeline/centre_asymmetries.hpp"

#include <cctype>
#include <cmath>

#include "fulcrum/core/number_text.hpp"
#include "fulcrum/pipeline/adopted_centre.hpp"

namespace fulcrum::pipeline {

namespace {

std::optional<AsymmetryAt> at_centre(const GalaxySummary& s, const Centre& c) {
  if (!c.ok() || !s.robustness) return std::nullopt;
  for (const auto& e : s.robustness->at_centres)
    if (e.id == c.id()) return AsymmetryAt{e.id, e.split.asymmetry, e.split.asymmetry_err};
  return std::nullopt;
}

std::optional<AsymmetryAt> first_of(const GalaxySummary& s, const std::vector<CentreMethod>& order) {
  for (CentreMethod m : order)
    for (const auto& c : s.centres)
      if (c.method == m)
        if (auto a = at_centre(s, c)) return a;
  return std::nullopt;
}

std::string signed_text(double v, int decimals) {
  const std::string t = fixed_text(v, decimals);
  return t[0] == '-' ? t : "+" + t;
}

std::string a_text(const AsymmetryAt& a) {
  std::string t = "A = " + signed_text(a.asymmetry, 3);
  if (std::isfinite(a.asymmetry_err)) t += " +- " + fixed_text(a.asymmetry_err, 3);
  return t;
}

}  // namespace

CentreAsymmetries centre_asymmetries(const GalaxySummary& s) {
  CentreAsymmetries out;
  if (s.verdict == robustness::Verdict::undetermined || !s.robustness) return out;
  out.kinematic = first_of(s, {CentreMethod::kinematic_rings, CentreMethod::kinematic_harmonic});
  out.optical = first_of(s, photometric_preference());
  for (const auto& c : s.centres)
    if (c.method == CentreMethod::external)
      if (auto a = at_centre(s, c)) out.external.push_back(*a);
  return out;
}

std::string centre_sentence(const GalaxySummary& s) {
  const CentreAsymmetries ca = centre_asymmetries(s);
  if (!s.robustness || (!ca.kinematic && !ca.optical && ca.external.empty())) return "";
  const double a0 = s.robustness->split.asymmetry;
  auto sign_note = [&](const AsymmetryAt& a) {
    return (a.asymmetry > 0) != (a0 > 0) ? std::string(", the opposite sign") : std::string();
  };
  std::vector<std::string> parts;
  if (ca.kinematic) parts.push_back("at the kinematic centre (" + ca.kinematic->id + ") " + a_text(*ca.kinematic) +
                                    sign_note(*ca.kinematic));
  if (ca.optical) parts.push_back("at the optical centre (" + ca.optical->id + ") " + a_text(*ca.optical) +
                                  sign_note(*ca.optical));
  for (const auto& e : ca.external) parts.push_back("at " + e.id + " " + a_text(e) + sign_note(e));
  std::string t;
  for (std::size_t i = 0; i < parts.size(); ++i) t += (i ? "; " : "") + parts[i];
  t[0] = static_cast<char>(std::toupper(static_cast<unsigned char>(t[0])));
  const auto& flip = s.robustness->flip;
  const Centre* adopted = s.adopted_centre();
  if (flip.nominal.found && adopted)
    t += "; the sign changes " + fixed_text(flip.nominal.distance_arcsec, 2) + " arcsec (" +
         fixed_text(flip.nominal_beams, 2) + " beam) from the adopted centre (" + adopted->id() + ") towards PA " +
         fixed_text(flip.nominal.direction_pa_deg, 0) + " deg";
  return t + ".";
}

}  // namespace fulcrum::pipeline
