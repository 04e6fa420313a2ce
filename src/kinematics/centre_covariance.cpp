// Sandwich covariance of the global tilted-ring geometry from the residuals
// (centre_covariance.hpp; derivation in docs/uncertainties.md §3).
#include "fulcrum/kinematics/centre_covariance.hpp"

#include <Eigen/Dense>
#include <algorithm>
#include <array>
#include <cmath>
#include <numbers>

#include "fulcrum/kinematics/beam_smearing.hpp"
#include "fulcrum/kinematics/tilted_ring_model.hpp"
#include "fulcrum/sky/angle.hpp"

namespace fulcrum::kinematics {

namespace {

// A geometry with the sines and cosines of its PA and inclination, taken
// once for the many samples it is evaluated at (the same numbers).
struct TrigGeometry {
  DiscGeometry g;
  double cos_pa = 1.0, sin_pa = 0.0, cos_inc = 1.0, sin_inc = 0.0;
  explicit TrigGeometry(const DiscGeometry& geometry) : g(geometry) {
    const double pa = g.pa_deg * kRadPerDeg, inc = g.inc_deg * kRadPerDeg;
    cos_pa = std::cos(pa);
    sin_pa = std::sin(pa);
    cos_inc = std::cos(inc);
    sin_inc = std::sin(inc);
  }
};

// The model velocity for a geometry and node table (as global_model_velocity).
double model_at(const TrigGeometry& t, const std::vector<RingNode>& nodes, double e, double n) {
  double X, Y;
  disc_plane(e, n, t.g.centre.east, t.g.centre.north, t.cos_pa, t.sin_pa, t.cos_inc, &X, &Y);
  const double R = std::hypot(X, Y);
  return tilted_ring_velocity(X, Y, R, t.sin_inc, t.g.vsys_kms, rotation_at(nodes, R, false),
                              rotation_at(nodes, R, true));
}

// The geometry and its ten perturbations (+- h in each of ce, cn, pa, inc,
// vsys) of the central differences of the Jacobian rows.
struct JacobianGeometries {
  static constexpr double kStep[5] = {1e-3, 1e-3, 1e-3, 1e-3, 1e-3};  // arcsec, arcsec, deg, deg, km/s
  TrigGeometry base;
  std::vector<TrigGeometry> plus, minus;
  explicit JacobianGeometries(const DiscGeometry& g) : base(g) {
    for (int q = 0; q < 5; ++q) {
      DiscGeometry a = g, b = g;
      double* pa[5] = {&a.centre.east, &a.centre.north, &a.pa_deg, &a.inc_deg, &a.vsys_kms};
      double* pb[5] = {&b.centre.east, &b.centre.north, &b.pa_deg, &b.inc_deg, &b.vsys_kms};
      *pa[q] += kStep[q];
      *pb[q] -= kStep[q];
      plus.emplace_back(a);
      minus.emplace_back(b);
    }
  }
};

// One sample's Jacobian row: 5 geometry derivatives (ce, cn, pa, inc, vsys
// per arcsec, deg, km/s) and up to two node speeds (vrot, and vrad).
struct Row {
  std::array<double, 5> geom{};
  int node[2] = {-1, -1};          // index into nodes
  double dvrot[2] = {0, 0}, dvrad[2] = {0, 0};
};

Row jacobian_row(const JacobianGeometries& jg, const std::vector<RingNode>& nodes, double e, double n) {
  Row r;
  for (int q = 0; q < 5; ++q)
    r.geom[q] = (model_at(jg.plus[q], nodes, e, n) - model_at(jg.minus[q], nodes, e, n)) /
                (2 * JacobianGeometries::kStep[q]);
  const TrigGeometry& t = jg.base;
  double X, Y;
  disc_plane(e, n, t.g.centre.east, t.g.centre.north, t.cos_pa, t.sin_pa, t.cos_inc, &X, &Y);
  const double R = std::hypot(X, Y);
  if (R < 1e-12 || nodes.empty()) return r;
  // Linear interpolation weights of the node speeds at R (node 0 at R = 0 is
  // fixed at zero; beyond the outer node its value holds).
  double wts[2] = {0, 0};
  if (R >= nodes.back().radius_arcsec) {
    r.node[0] = static_cast<int>(nodes.size()) - 1;
    wts[0] = 1.0;
  } else {
    std::size_t k = 0;
    while (k < nodes.size() && R >= nodes[k].radius_arcsec) ++k;
    const double r0 = k > 0 ? nodes[k - 1].radius_arcsec : 0.0;
    const double f = (R - r0) / (nodes[k].radius_arcsec - r0);
    r.node[0] = static_cast<int>(k);
    wts[0] = f;
    if (k > 0) { r.node[1] = static_cast<int>(k) - 1; wts[1] = 1.0 - f; }
  }
  for (int m = 0; m < 2; ++m) {
    r.dvrot[m] = t.sin_inc * X / R * wts[m];
    r.dvrad[m] = t.sin_inc * Y / R * wts[m];
  }
  return r;
}

}  // namespace

Eigen::Matrix2d positive_part(const Eigen::Matrix2d& m) {
  Eigen::SelfAdjointEigenSolver<Eigen::Matrix2d> es(0.5 * (m + m.transpose()));
  const Eigen::Vector2d ev = es.eigenvalues().cwiseMax(0.0);
  return es.eigenvectors() * ev.asDiagonal() * es.eigenvectors().transpose();
}

Eigen::Matrix2d GeometryCovariance::centre_misfit() const {
  return positive_part(total.topLeftCorner<2, 2>() - statistical.topLeftCorner<2, 2>());
}

Matrix5d correlated_outer_sum(const SampleGrid& g, const std::vector<Eigen::Matrix<double, 5, 1>>& u,
                              const NoiseCorrelation& corr, double reach_sigma) {
  Matrix5d out = Matrix5d::Zero();
  // Diagonal (zero lag).
  for (int i : g.index)
    if (i >= 0) out += u[i] * u[i].transpose();
  if (!g.jacobian_ok) return out;
  const double step = std::sqrt(std::abs(g.jacobian.determinant()));
  const double reach = reach_sigma * corr.sigma_major_arcsec;
  const int L = static_cast<int>(std::ceil(reach / step));
  const double cut = std::exp(-0.5 * reach_sigma * reach_sigma);
  // half = sum over the half-plane of lags of rho(lag) sum_x u(x) u(x + lag)^T
  //      = sum_x u(x) w(x)^T,   w(x) = sum_lag rho(lag) u(x + lag):
  // five multiply-adds per pixel and lag instead of 25 (the same sum, in
  // another order: equal up to rounding).
  using Vector5d = Eigen::Matrix<double, 5, 1>;
  std::vector<Vector5d> w(u.size(), Vector5d::Zero());
  for (int dy = 0; dy <= L; ++dy)
    for (int dx = -L; dx <= L; ++dx) {
      if (dy == 0 && dx <= 0) continue;  // each unordered pair once
      const Eigen::Vector2d d = g.lag(dx, dy);
      const double rho = corr.at(d(0), d(1));
      if (rho < cut) continue;
      for (int y = g.y0; y < g.y0 + g.ny; ++y)
        for (int x = g.x0; x < g.x0 + g.nx; ++x) {
          const int i = g.at(x, y);
          if (i < 0) continue;
          const int j = g.at(x + dx, y + dy);
          if (j >= 0) w[i].noalias() += rho * u[j];
        }
    }
  Matrix5d half = Matrix5d::Zero();
  for (int i : g.index)
    if (i >= 0) half.noalias() += u[i] * w[i].transpose();
  return out + half + half.transpose();
}

namespace {

// The weighted least-squares problem at the solution: free columns
// (geometry first, then node speeds with pixels), Jacobian rows, weights,
// normalised residuals and the normal matrix A = J^T W J.
struct NormalSystem {
  std::vector<int> gcol, ncol, rcol;  // column of each geometry parameter / node (-1: none)
  int p = 0, ngeom = 0, used = 0;
  std::vector<Row> rows;
  std::vector<double> w, z;
  double zz = 0.0;                    // sum of z^2
  Eigen::MatrixXd A;
};

// The non-zero entries (column, value) of sample i's Jacobian row.
int row_entries(const NormalSystem& ns, const Row& r, bool radial, std::array<std::pair<int, double>, 9>& nz) {
  int m = 0;
  for (int q = 0; q < 5; ++q)
    if (ns.gcol[q] >= 0) nz[m++] = {ns.gcol[q], r.geom[q]};
  for (int side = 0; side < 2; ++side) {
    const int k = r.node[side];
    if (k < 0) continue;
    if (ns.ncol[k] >= 0) nz[m++] = {ns.ncol[k], r.dvrot[side]};
    if (radial && ns.rcol[k] >= 0) nz[m++] = {ns.rcol[k], r.dvrad[side]};
  }
  return m;
}

NormalSystem build_normal_system(const VelocitySamples& s, const GlobalFitSummary& fit,
                                 const GeometryCovarianceOptions& opt) {
  NormalSystem ns;
  const std::size_t n = s.size();
  const int nn = static_cast<int>(fit.nodes.size());
  const bool fixed[5] = {opt.fix_centre, opt.fix_centre, opt.fix_pa, opt.fix_inc, opt.fix_vsys};
  ns.gcol.assign(5, -1);
  ns.ncol.assign(nn, -1);
  ns.rcol.assign(nn, -1);
  for (int q = 0; q < 5; ++q)
    if (!fixed[q]) ns.gcol[q] = ns.p++;
  ns.ngeom = ns.p;
  for (int k = 0; k < nn; ++k)
    if (fit.nodes[k].n_pixels > 0) ns.ncol[k] = ns.p++;
  if (opt.radial)
    for (int k = 0; k < nn; ++k)
      if (fit.nodes[k].n_pixels > 0) ns.rcol[k] = ns.p++;
  ns.rows.resize(n);
  ns.w.assign(n, 0.0);
  ns.z.assign(n, 0.0);
  ns.A = Eigen::MatrixXd::Zero(ns.p, ns.p);
  const JacobianGeometries jg(fit.geometry);
  const TrigGeometry& t = jg.base;
  for (std::size_t i = 0; i < n; ++i) {
    if (!fit.used[i]) continue;
    double X, Y;
    disc_plane(s.east[i], s.north[i], t.g.centre.east, t.g.centre.north, t.cos_pa, t.sin_pa, t.cos_inc, &X, &Y);
    const double R = std::hypot(X, Y);
    ns.w[i] = std::pow(std::abs(R > 0 ? X / R : 0.0), opt.weight_power) / (s.sigma[i] * s.sigma[i]);
    ns.rows[i] = jacobian_row(jg, fit.nodes, s.east[i], s.north[i]);
    ns.z[i] = (s.velocity[i] - model_at(t, fit.nodes, s.east[i], s.north[i])) / s.sigma[i];
    ns.zz += ns.z[i] * ns.z[i];
    ++ns.used;
    // Sparse row -> (column, value) pairs, accumulated into A.
    std::array<std::pair<int, double>, 9> nz;
    const int m = row_entries(ns, ns.rows[i], opt.radial, nz);
    for (int a = 0; a < m; ++a)
      for (int b = 0; b < m; ++b) ns.A(nz[a].first, nz[b].first) += ns.w[i] * nz[a].second * nz[b].second;
  }
  return ns;
}

// The smeared Jacobian J_s = S J at the samples (header): every free column
// of J on the smearing grid's pixels, smeared like the model, read at each
// used sample; one column per sample (p x n). Empty when the grid does not
// match the samples.
Eigen::MatrixXd smeared_jacobian(const NormalSystem& ns, const VelocitySamples& s,
                                 const GlobalFitSummary& fit, const GeometryCovarianceOptions& opt) {
  const SmearingGrid& g = *opt.smearing;
  if (g.sample_pixel.size() != s.size() || !g.usable()) return {};
  const std::size_t nb = g.east.size();
  std::vector<std::vector<double>> col(ns.p, std::vector<double>(nb, 0.0));
  std::array<std::pair<int, double>, 9> nz;
  const JacobianGeometries jg(fit.geometry);
  for (std::size_t b = 0; b < nb; ++b) {
    const Row r = jacobian_row(jg, fit.nodes, g.east[b], g.north[b]);
    const int m = row_entries(ns, r, opt.radial, nz);
    for (int a = 0; a < m; ++a) col[nz[a].first][b] += nz[a].second;
  }
  Eigen::MatrixXd Js = Eigen::MatrixXd::Zero(ns.p, static_cast<Eigen::Index>(s.size()));
  const auto smeared = smear_moment1_fields(col, g.intensity, g.nx, g.ny, g.pixel_cov, g.wanted);
  for (int c = 0; c < ns.p; ++c) {
    const std::vector<double>& sm = smeared[static_cast<std::size_t>(c)];
    for (std::size_t i = 0; i < s.size(); ++i) {
      if (!fit.used[i] || !(ns.w[i] > 0.0)) continue;
      const std::size_t b = g.sample_pixel[i];
      Js(c, static_cast<Eigen::Index>(i)) = std::isfinite(sm[b]) ? sm[b] : col[c][b];  // no emission in reach: unsmeared
    }
  }
  return Js;
}

// Sample i's Jacobian row as a dense p-vector.
Eigen::VectorXd dense_row(const NormalSystem& ns, std::size_t i, bool radial) {
  Eigen::VectorXd j = Eigen::VectorXd::Zero(ns.p);
  std::array<std::pair<int, double>, 9> nz;
  const int m = row_entries(ns, ns.rows[i], radial, nz);
  for (int a = 0; a < m; ++a) j(nz[a].first) += nz[a].second;
  return j;
}

// A_s = J^T W J_s from the smeared Jacobian's columns.
Eigen::MatrixXd smeared_normal_matrix(const NormalSystem& ns, const Eigen::MatrixXd& Js,
                                      const std::vector<unsigned char>& used, bool radial) {
  Eigen::MatrixXd A = Eigen::MatrixXd::Zero(ns.p, ns.p);
  for (std::size_t i = 0; i < used.size(); ++i) {
    if (!used[i] || !(ns.w[i] > 0.0)) continue;
    A.noalias() += ns.w[i] * dense_row(ns, i, radial) * Js.col(static_cast<Eigen::Index>(i)).transpose();
  }
  return A;
}

// Sum over ordered pairs of used samples of rho_ij a_i . b_j (i = j
// included), a and b holding one column per sample, neighbours out to
// reach_sigma correlation sigmas on the pixel grid.
double correlated_pair_sum(const SampleGrid& g, const Eigen::MatrixXd& a, const Eigen::MatrixXd& b,
                           const NoiseCorrelation& corr, double reach_sigma) {
  double out = 0.0;
  for (int i : g.index)
    if (i >= 0) out += a.col(i).dot(b.col(i));
  if (!g.jacobian_ok) return out;
  const double step = std::sqrt(std::abs(g.jacobian.determinant()));
  const int L = static_cast<int>(std::ceil(reach_sigma * corr.sigma_major_arcsec / step));
  const double cut = std::exp(-0.5 * reach_sigma * reach_sigma);
  for (int dy = 0; dy <= L; ++dy)
    for (int dx = -L; dx <= L; ++dx) {
      if (dy == 0 && dx <= 0) continue;  // each unordered pair once, both orders summed
      const Eigen::Vector2d d = g.lag(dx, dy);
      const double rho = corr.at(d(0), d(1));
      if (rho < cut) continue;
      double acc = 0.0;
      for (int y = g.y0; y < g.y0 + g.ny; ++y)
        for (int x = g.x0; x < g.x0 + g.nx; ++x) {
          const int i = g.at(x, y);
          if (i < 0) continue;
          const int j = g.at(x + dx, y + dy);
          if (j >= 0) acc += a.col(i).dot(b.col(j)) + a.col(j).dot(b.col(i));
        }
      out += rho * acc;
    }
  return out;
}

// The expected sum of squared normalised residuals when the noise is exactly
// as stated (c = 1, correlation `corr`), for the linearised estimator
// dp = G J^T W dv and residual r = dv - J_s dp (docs/uncertainties.md §3):
//   E sum z^2 = N - 2 sum_ij rho_ij g_i . c_j + sum_ij rho_ij c_i . (K c_j),
// with c_i = G J_i^T w_i sigma_i, g_i = J_s,i^T / sigma_i, K = sum_i g_i g_i^T.
// For independent pixels and W = S^-1 it is N - p; for a noise correlated
// over eta pixels and parameters whose influence is smooth on that scale,
// about N - p eta.
double expected_residual_sum(const NormalSystem& ns, const Eigen::MatrixXd& G, const Eigen::MatrixXd* Js,
                             const VelocitySamples& s, const std::vector<unsigned char>& used, bool radial,
                             const SampleGrid& grid, const NoiseCorrelation& corr, double reach_sigma) {
  const Eigen::Index n = static_cast<Eigen::Index>(s.size());
  Eigen::MatrixXd c = Eigen::MatrixXd::Zero(ns.p, n), gs = Eigen::MatrixXd::Zero(ns.p, n);
  for (std::size_t i = 0; i < s.size(); ++i) {
    if (!used[i]) continue;
    const Eigen::Index k = static_cast<Eigen::Index>(i);
    const Eigen::VectorXd j = dense_row(ns, i, radial);
    c.col(k) = G * j * (ns.w[i] * s.sigma[i]);
    gs.col(k) = (Js ? Eigen::VectorXd(Js->col(k)) : j) / s.sigma[i];
  }
  // Sums in a fixed order (Eigen's threaded matrix products may change the
  // blocking, hence the last bits, with the thread count).
  Eigen::MatrixXd K = Eigen::MatrixXd::Zero(ns.p, ns.p);
  for (Eigen::Index k = 0; k < n; ++k) K.noalias() += gs.col(k) * gs.col(k).transpose();
  Eigen::MatrixXd e(ns.p, n);
  for (Eigen::Index k = 0; k < n; ++k) e.col(k).noalias() = K * c.col(k);
  return static_cast<double>(ns.used) - 2.0 * correlated_pair_sum(grid, gs, c, corr, reach_sigma) +
         correlated_pair_sum(grid, c, e, corr, reach_sigma);
}

// v_i = sigma_i w_i J_i A^-1[:, geometry], in the 5-slot layout (zero for
// fixed parameters and unused samples).
std::vector<Eigen::Matrix<double, 5, 1>> influence(const NormalSystem& ns, const Eigen::MatrixXd& Ainv,
                                                   const VelocitySamples& s,
                                                   const std::vector<unsigned char>& used, bool radial) {
  const Eigen::MatrixXd G = Ainv.leftCols(ns.ngeom);
  std::vector<Eigen::Matrix<double, 5, 1>> v(s.size(), Eigen::Matrix<double, 5, 1>::Zero());
  for (std::size_t i = 0; i < s.size(); ++i) {
    if (!used[i]) continue;
    Eigen::RowVectorXd jg = Eigen::RowVectorXd::Zero(ns.ngeom);
    for (int q = 0; q < 5; ++q)
      if (ns.gcol[q] >= 0) jg += ns.rows[i].geom[q] * G.row(ns.gcol[q]);
    for (int t = 0; t < 2; ++t) {
      const int k = ns.rows[i].node[t];
      if (k < 0) continue;
      if (ns.ncol[k] >= 0) jg += ns.rows[i].dvrot[t] * G.row(ns.ncol[k]);
      if (radial && ns.rcol[k] >= 0) jg += ns.rows[i].dvrad[t] * G.row(ns.rcol[k]);
    }
    for (int q = 0; q < 5; ++q)
      if (ns.gcol[q] >= 0) v[i](q) = ns.w[i] * s.sigma[i] * jg(ns.gcol[q]);
  }
  return v;
}

}  // namespace

GeometryCovariance geometry_covariance(const VelocitySamples& s, const GlobalFitSummary& fit,
                                       const GeometryCovarianceOptions& opt) {
  GeometryCovariance out;
  if (fit.used.size() != s.size() || fit.nodes.empty()) {
    out.reason = "the fit has no used pixels";
    return out;
  }
  const NormalSystem ns = build_normal_system(s, fit, opt);
  out.n_used = ns.used;
  out.n_parameters = ns.p;
  if (ns.used <= ns.p) {
    out.reason = "fewer used pixels than parameters";
    return out;
  }
  Eigen::LDLT<Eigen::MatrixXd> ldlt(ns.A);
  if (ldlt.info() != Eigen::Success || !(ldlt.vectorD().minCoeff() > 0)) {
    out.reason = "the normal matrix is singular";
    return out;
  }
  const Eigen::MatrixXd Ainv = ldlt.solve(Eigen::MatrixXd::Identity(ns.p, ns.p));
  for (int a = 0; a < 5; ++a)
    for (int b = 0; b < 5; ++b)
      out.formal(a, b) = (ns.gcol[a] >= 0 && ns.gcol[b] >= 0) ? Ainv(ns.gcol[a], ns.gcol[b]) : 0.0;
  // The bread: A^-1, or with the smearing correction G_K (header; not
  // symmetric: influence() reads the columns of the matrix it is given, so it
  // gets G_K^T, whose geometry columns are the geometry rows of G_K).
  Eigen::MatrixXd G = Ainv;  // dp = G J^T W dv
  Eigen::MatrixXd Js;
  if (opt.smearing && opt.smearing_refits > 0) {
    Js = smeared_jacobian(ns, s, fit, opt);
    if (Js.size() > 0) {
      const Eigen::MatrixXd M = Ainv * (smeared_normal_matrix(ns, Js, fit.used, opt.radial) - ns.A);
      Eigen::MatrixXd Gk = Ainv;
      for (int k = 0; k < opt.smearing_refits; ++k) Gk = Ainv - M * Gk;
      if (Gk.allFinite()) {
        G = Gk;
        out.smeared_jacobian = true;
      } else {
        Js.resize(0, 0);
      }
    }
  }
  // influence() reads the columns of the matrix it is given: G^T, whose
  // geometry columns are the geometry rows of G.
  const auto v = influence(ns, G.transpose(), s, fit.used, opt.radial);
  // Residual correlation, then the residual scale c^2 = sum z^2 / E sum z^2,
  // the expectation taken for noise exactly as stated (the error map's sigmas
  // with the noise model's correlation), computed for this fit's estimator
  // (expected_residual_sum): a parameter absorbs part of the residual
  // variance, more when the noise is correlated, and how much depends on how
  // local its influence is.
  const SampleGrid grid = make_sample_grid(s, fit.used);
  const Beam beam = s.beam.value_or(Beam{});
  out.model_correlation_scale = std::sqrt(2.0);  // noise white before the beam
  out.correlation = measure_residual_correlation(grid, ns.z, fit.used, beam, opt.correlation);
  const NoiseCorrelation model_corr =
      s.beam ? scaled_beam_correlation(*s.beam, out.model_correlation_scale) : NoiseCorrelation{};
  const double expected = opt.expected_residual_fraction > 0.0
                              ? opt.expected_residual_fraction * ns.used
                              : expected_residual_sum(ns, G, Js.size() > 0 ? &Js : nullptr, s, fit.used,
                                                      opt.radial, grid, model_corr, opt.reach_sigma);
  // A fit that absorbs (nearly) everything leaves no residual to scale by:
  // at least one tenth of the samples' worth is kept as degrees of freedom.
  out.effective_dof = std::max(0.1 * ns.used, expected);
  out.residual_scale2_measured = ns.zz / out.effective_dof;
  out.residual_scale2 = s.has_errors ? std::max(1.0, out.residual_scale2_measured) : out.residual_scale2_measured;
  const double c_stat2 = s.has_errors ? 1.0 : out.residual_scale2;
  if (!s.beam || !out.correlation.measured) {
    // No beam or no measurement: independent pixels, or the beam model.
    const NoiseCorrelation c = s.beam ? noise_correlation_of_beam(*s.beam) : NoiseCorrelation{};
    const Matrix5d sum = correlated_outer_sum(grid, v, c, opt.reach_sigma);
    out.statistical = c_stat2 * sum;
    out.total = out.residual_scale2 * sum;
  } else {
    const double s_stat = std::min(out.correlation.scale, out.model_correlation_scale);
    const Matrix5d sum_stat =
        correlated_outer_sum(grid, v, scaled_beam_correlation(beam, s_stat), opt.reach_sigma);
    const Matrix5d sum_all = out.correlation.scale == s_stat
                                 ? sum_stat
                                 : correlated_outer_sum(grid, v, out.correlation.correlation, opt.reach_sigma);
    out.statistical = c_stat2 * sum_stat;
    out.total = out.residual_scale2 * sum_all;
  }
  out.ok = out.total.allFinite() && out.total(0, 0) > 0 && out.total(1, 1) > 0;
  if (!out.ok) out.reason = "the sandwich covariance is not finite and positive";
  return out;
}

}  // namespace fulcrum::kinematics
