// The dynamical centre's error budget (centre_error_terms.hpp).
#include "fulcrum/kinematics/centre_error_terms.hpp"

#include <Eigen/Dense>
#include <algorithm>
#include <cmath>

namespace fulcrum::kinematics {

double semi_major_arcsec(const Eigen::Matrix2d& c) {
  Eigen::SelfAdjointEigenSolver<Eigen::Matrix2d> es(0.5 * (c + c.transpose()));
  return std::sqrt(std::max(0.0, es.eigenvalues()(1)));
}

CentreErrorTerms centre_error_terms(const VelocitySamples& s, const GlobalFitSummary& fit,
                                    const GeometryCovarianceOptions& opt,
                                    const std::optional<MethodCentre>& harmonic,
                                    const std::vector<RingFit>& rings) {
  CentreErrorTerms t;
  t.formal = fit.centre_covariance();
  t.adopted = fit.geometry.centre;
  const GeometryCovariance gc = geometry_covariance(s, fit, opt);
  t.residual_scale2 = gc.residual_scale2;
  t.residual_scale2_measured = gc.residual_scale2_measured;
  t.correlation = gc.correlation;
  t.model_correlation_scale = gc.model_correlation_scale;
  t.effective_dof = gc.effective_dof;
  t.expected_residual_fraction = gc.n_used > 0 ? gc.effective_dof / gc.n_used : 0.0;
  t.smeared_jacobian = gc.smeared_jacobian;
  if (!gc.ok) {
    t.reason = "the residual covariance could not be computed (" + gc.reason + "): the formal one is kept";
    return t;
  }
  t.statistical = gc.statistical.topLeftCorner<2, 2>();
  t.model_misfit = gc.centre_misfit();
  const Eigen::Matrix2d sandwich = t.statistical + t.model_misfit;
  if (harmonic) t.methods.push_back(*harmonic);
  if (auto rr = ring_by_ring_centre(rings)) t.methods.push_back(*rr);
  if (!opt.fix_centre) t.method_spread = method_spread(fit.geometry.centre, sandwich, t.methods);
  t.total = sandwich + t.method_spread;
  t.geometry = gc.total;
  t.geometry.topLeftCorner<2, 2>() = t.total;
  const double a = semi_major_arcsec(t.statistical), b = semi_major_arcsec(t.model_misfit),
               c = semi_major_arcsec(t.method_spread);
  t.dominant = a >= b && a >= c ? "statistical" : (b >= c ? "model_misfit" : "method_spread");
  t.applied = true;
  return t;
}

nlohmann::json to_json(const CentreErrorTerms& t) {
  auto mat = [](const Eigen::Matrix2d& m) {
    return nlohmann::json{{m(0, 0), m(0, 1)}, {m(1, 0), m(1, 1)}};
  };
  nlohmann::json j;
  j["applied"] = t.applied;
  if (!t.applied) j["reason"] = t.reason;
  j["formal_arcsec"] = semi_major_arcsec(t.formal);
  j["formal_cov_arcsec2"] = mat(t.formal);
  if (!t.applied) return j;
  j["statistical_arcsec"] = semi_major_arcsec(t.statistical);
  j["model_misfit_arcsec"] = semi_major_arcsec(t.model_misfit);
  j["method_spread_arcsec"] = semi_major_arcsec(t.method_spread);
  j["total_arcsec"] = semi_major_arcsec(t.total);
  j["dominant"] = t.dominant;
  j["statistical_cov_arcsec2"] = mat(t.statistical);
  j["model_misfit_cov_arcsec2"] = mat(t.model_misfit);
  j["method_spread_cov_arcsec2"] = mat(t.method_spread);
  j["residual_scale2"] = t.residual_scale2;
  j["residual_scale2_measured"] = t.residual_scale2_measured;
  j["residual_effective_dof"] = t.effective_dof;
  j["smeared_jacobian"] = t.smeared_jacobian;
  j["residual_correlation"] = {
      {"measured", t.correlation.measured},
      {"fitted_beam_scale", t.correlation.fitted_scale},
      {"adopted_beam_scale", t.correlation.scale},
      {"noise_model_beam_scale", t.model_correlation_scale},
      {"sigma_major_arcsec", t.correlation.correlation.sigma_major_arcsec},
      {"sigma_minor_arcsec", t.correlation.correlation.sigma_minor_arcsec},
      {"lags", t.correlation.lags}};
  if (!t.correlation.measured) j["residual_correlation"]["reason"] = t.correlation.reason;
  nlohmann::json ms = nlohmann::json::array();
  for (const auto& m : t.methods)
    ms.push_back({{"method", m.method},
                  {"east_from_adopted_arcsec", m.centre.east - t.adopted.east},
                  {"north_from_adopted_arcsec", m.centre.north - t.adopted.north},
                  {"err_arcsec", semi_major_arcsec(m.covariance)},
                  {"excess_arcsec", std::sqrt(m.excess_arcsec2)}});
  j["methods"] = ms;
  return j;
}

}  // namespace fulcrum::kinematics
