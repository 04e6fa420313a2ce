// The global tilted-ring fit with Ceres (global_fit.hpp).
//
// Each pass: (1) from the current geometry, every sample gets its disc radius
// R and azimuth theta; it is used when 0 < R <= R_N and it lies outside the
// minor-axis wedge (|cos theta| >= sin(wedge)); its bracket is the node pair
// (k, k+1) with R_k <= R < R_{k+1}; its residual factor is
// sqrt(|cos theta|^k * w_robust) / sigma. (2) Samples are grouped by bracket,
// one residual block per group (RingPairResidual). (3) Levenberg-Marquardt
// with a sparse normal-equations solver (the Jacobian has ~7 non-zeros per
// row). Robust losses are applied as iteratively reweighted least squares
// across passes, since one block holds many pixels: Huber w = min(1, 1/|u|),
// Cauchy w = 1 / (1 + u^2), u = r / (loss_scale * s) with s = 1.4826 MAD of
// the normalised residuals of the previous pass.
//
// Units: arcsec, radians inside, degrees outside, km/s.
#include "fulcrum/kinematics/global_fit.hpp"
#include "fulcrum/core/jacobian_covariance.hpp"

#include <ceres/ceres.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <memory>
#include <numbers>

#include "fulcrum/kinematics/tilted_ring_model.hpp"
#include "fulcrum/sky/angle.hpp"

namespace fulcrum::kinematics {

namespace {

// A Gaussian prior on one parameter (or one axis of the centre):
// residual = (x - mean) / err, times the weight of GeometryPrior.
struct PriorResidual {
  PriorResidual(double mean, double scale, int index) : mean_(mean), scale_(scale), index_(index) {}
  template <typename T>
  bool operator()(const T* x, T* r) const {
    r[0] = (x[index_] - T(mean_)) * T(scale_);
    return true;
  }
  const double mean_, scale_;
  const int index_;
};

template <int Size>
void add_prior(ceres::Problem& problem, double* block, int index, double mean, double err,
               double weight) {
  auto* cost = new ceres::AutoDiffCostFunction<PriorResidual, 1, Size>(
      new PriorResidual(mean, weight / err, index));
  problem.AddResidualBlock(cost, nullptr, block);
}

struct Parameters {
  double centre[2] = {0, 0};
  double pa = 0, inc = 0, vsys = 0;
  std::vector<double> vrot, vrad;  // node 0..N (node 0 held at zero)
};

struct SampleState {
  double R = 0, cos_t = 0, sin_t = 0;
};

SampleState disc_state(const Parameters& p, double east, double north) {
  double X, Y;
  disc_plane(east, north, p.centre[0], p.centre[1], std::cos(p.pa), std::sin(p.pa),
             std::cos(p.inc), &X, &Y);
  SampleState s;
  s.R = std::hypot(X, Y);
  if (s.R > 0) {
    s.cos_t = X / s.R;
    s.sin_t = Y / s.R;
  }
  return s;
}

// The geometry priors (GeometryPrior) as residual blocks. The PA's mean is
// taken within 180 deg of the current PA (angles wrap).
void add_priors(ceres::Problem& problem, Parameters& p, const GlobalFitOptions& opt) {
  const GeometryPrior& pr = opt.prior;
  const double w = std::sqrt(std::max(1.0, opt.correlation_factor));
  if (pr.centre_err_arcsec && !opt.fix_centre) {
    add_prior<2>(problem, p.centre, 0, pr.mean.centre.east, *pr.centre_err_arcsec, w);
    add_prior<2>(problem, p.centre, 1, pr.mean.centre.north, *pr.centre_err_arcsec, w);
  }
  if (pr.pa_err_deg && !opt.fix_pa) {
    const double mean = p.pa + angle_diff_deg(pr.mean.pa_deg, p.pa / kRadPerDeg) * kRadPerDeg;
    add_prior<1>(problem, &p.pa, 0, mean, *pr.pa_err_deg * kRadPerDeg, w);
  }
  if (pr.inc_err_deg && !opt.fix_inc)
    add_prior<1>(problem, &p.inc, 0, pr.mean.inc_deg * kRadPerDeg, *pr.inc_err_deg * kRadPerDeg, w);
  if (pr.vsys_err_kms && !opt.fix_vsys)
    add_prior<1>(problem, &p.vsys, 0, pr.mean.vsys_kms, *pr.vsys_err_kms, w);
}

double model_of(const Parameters& p, const std::vector<double>& node_r, double east, double north,
                int bracket) {
  const SampleState s = disc_state(p, east, north);
  const int k = bracket;
  const double f = (s.R - node_r[k]) / (node_r[k + 1] - node_r[k]);
  const double vr = p.vrot[k] + (p.vrot[k + 1] - p.vrot[k]) * f;
  const double vd = p.vrad[k] + (p.vrad[k + 1] - p.vrad[k]) * f;
  return p.vsys + std::sin(p.inc) * (vr * s.cos_t + vd * s.sin_t);
}

// Fraction of samples whose bracket (or use) differs between two passes.
double changed_fraction(const std::vector<int>& a, const std::vector<int>& b) {
  if (a.size() != b.size() || a.empty()) return 1.0;
  std::size_t d = 0;
  for (std::size_t i = 0; i < a.size(); ++i) d += a[i] != b[i] ? 1 : 0;
  return static_cast<double>(d) / static_cast<double>(a.size());
}

// Bring the parameters to the canonical branch: 0 <= inc <= 90 deg and a
// positive mean rotation (the receding side at pa). The model is unchanged:
// inc -> -inc with (vrot, vrad) -> -(vrot, vrad); inc -> 180 - inc with
// vrad -> -vrad; pa -> pa + 180 with (vrot, vrad) -> -(vrot, vrad).
void normalise(Parameters& p) {
  auto flip = [](std::vector<double>& v) {
    for (double& x : v) x = -x;
  };
  p.inc = std::remainder(p.inc, 2.0 * std::numbers::pi);
  if (p.inc < 0) {
    p.inc = -p.inc;
    flip(p.vrot);
    flip(p.vrad);
  }
  if (p.inc > 0.5 * std::numbers::pi) {
    p.inc = std::numbers::pi - p.inc;
    flip(p.vrad);
  }
  double mean = 0;
  for (double v : p.vrot) mean += v;
  if (mean < 0) {
    p.pa += std::numbers::pi;
    flip(p.vrot);
    flip(p.vrad);
  }
  p.pa = std::remainder(p.pa, 2.0 * std::numbers::pi);
  if (p.pa < 0) p.pa += 2.0 * std::numbers::pi;
}

double median_abs(std::vector<double> v) {
  if (v.empty()) return 0;
  auto mid = v.begin() + static_cast<std::ptrdiff_t>(v.size() / 2);
  std::nth_element(v.begin(), mid, v.end());
  return *mid;
}

// First guesses of the node speeds: median of (v - vsys) / (sin i cos theta)
// over the samples near each node with |cos theta| > 0.5.
void guess_speeds(const VelocitySamples& s, Parameters& p, const std::vector<double>& node_r) {
  const int N = static_cast<int>(node_r.size()) - 1;
  const double w = node_r[1];
  std::vector<std::vector<double>> est(N + 1);
  const double si = std::max(0.1, std::sin(p.inc));
  for (std::size_t i = 0; i < s.size(); ++i) {
    const SampleState st = disc_state(p, s.east[i], s.north[i]);
    if (std::abs(st.cos_t) < 0.5) continue;
    const int k = static_cast<int>(std::lround(st.R / w));
    if (k < 1 || k > N) continue;
    est[k].push_back((s.velocity[i] - p.vsys) / (si * st.cos_t));
  }
  double last = 0;
  for (int k = 1; k <= N; ++k) {
    if (!est[k].empty()) {
      auto v = est[k];
      auto mid = v.begin() + static_cast<std::ptrdiff_t>(v.size() / 2);
      std::nth_element(v.begin(), mid, v.end());
      last = *mid;
    }
    p.vrot[k] = last;
  }
}

// The starting parameters: the start geometry (inclination inside the
// allowed range) and node speeds given or guessed.
Parameters initial_parameters(const VelocitySamples& s, const DiscGeometry& start, const GlobalFitOptions& opt,
                              const std::vector<double>& node_r) {
  const int N = static_cast<int>(node_r.size()) - 1;
  Parameters p;
  p.centre[0] = start.centre.east;
  p.centre[1] = start.centre.north;
  p.pa = start.pa_deg * kRadPerDeg;
  p.inc = std::clamp(start.inc_deg, opt.min_inc_deg, opt.max_inc_deg) * kRadPerDeg;
  p.vsys = start.vsys_kms;
  p.vrot.assign(N + 1, 0.0);
  p.vrad.assign(N + 1, 0.0);
  if (static_cast<int>(opt.start_vrot.size()) == N) {
    for (int k = 1; k <= N; ++k) p.vrot[k] = opt.start_vrot[k - 1];
    if (static_cast<int>(opt.start_vrad.size()) == N)
      for (int k = 1; k <= N; ++k) p.vrad[k] = opt.start_vrad[k - 1];
  } else {
    guess_speeds(s, p, node_r);
  }
  return p;
}

// Robust (Huber or Cauchy) weights from the normalised residuals of the
// used samples, their scale 1.4826 x the median |residual| x loss_scale.
void update_robust_weights(const GlobalFitOptions& opt, const std::vector<int>& bracket,
                           const std::vector<double>& norm_resid, std::vector<double>& robust) {
  std::vector<double> a;
  for (std::size_t i = 0; i < bracket.size(); ++i)
    if (bracket[i] >= 0) a.push_back(std::abs(norm_resid[i]));
  const double scale = std::max(1e-12, 1.4826 * median_abs(a)) * opt.loss_scale;
  for (std::size_t i = 0; i < bracket.size(); ++i) {
    const double u = std::abs(norm_resid[i]) / scale;
    robust[i] = opt.loss == RobustLoss::huber ? (u <= 1 ? 1.0 : 1.0 / u) : 1.0 / (1.0 + u * u);
  }
}

// The samples of one pass, grouped by the ring pair (lower node) that
// brackets them under the current geometry.
struct Selection {
  std::vector<std::unique_ptr<PixelGroup>> groups;
  std::vector<int> group_node;  // lower node of each group
  std::vector<int> bracket;     // per sample: lower node, or -1 when not used
};

Selection select_samples(const VelocitySamples& s, const Parameters& p, const GlobalFitOptions& opt,
                         const std::vector<double>& node_r, const std::vector<double>& robust) {
  const int N = static_cast<int>(node_r.size()) - 1;
  const double w = opt.ring_width_arcsec;
  const double sin_wedge = std::sin(std::clamp(opt.wedge_deg, 0.0, 89.0) * kRadPerDeg);
  Selection sel;
  sel.bracket.assign(s.size(), -1);
  std::vector<PixelGroup*> by_node(N, nullptr);
  for (std::size_t i = 0; i < s.size(); ++i) {
    const SampleState st = disc_state(p, s.east[i], s.north[i]);
    if (!(st.R > opt.min_radius_arcsec) || st.R > node_r[N] || std::abs(st.cos_t) < sin_wedge) continue;
    const int k = std::min(N - 1, static_cast<int>(st.R / w));
    sel.bracket[i] = k;
    if (!by_node[k]) {
      sel.groups.push_back(std::make_unique<PixelGroup>());
      sel.group_node.push_back(k);
      by_node[k] = sel.groups.back().get();
    }
    PixelGroup& g = *by_node[k];
    g.east.push_back(s.east[i]);
    g.north.push_back(s.north[i]);
    g.velocity.push_back(s.velocity[i]);
    const double wt = std::pow(std::abs(st.cos_t), opt.weight_power) * robust[i];
    g.scale.push_back(std::sqrt(wt) / s.sigma[i]);
    g.index.push_back(i);
  }
  return sel;
}

// The least-squares problem of one pass: one residual block per ring pair,
// node 0 held at zero, held parameters constant, the priors added.
std::unique_ptr<ceres::Problem> build_problem(const Selection& sel, Parameters& p, const GlobalFitOptions& opt,
                                              const std::vector<double>& node_r, bool hold_inc) {
  const bool radial = opt.fit_radial;
  auto problem = std::make_unique<ceres::Problem>();
  for (std::size_t gi = 0; gi < sel.groups.size(); ++gi) {
    const int k = sel.group_node[gi];
    auto* cf = new RingPairCostFunction(sel.groups[gi].get(), node_r[k], node_r[k + 1], radial);
    if (radial)
      problem->AddResidualBlock(cf, nullptr, p.centre, &p.pa, &p.inc, &p.vsys, &p.vrot[k], &p.vrot[k + 1],
                                &p.vrad[k], &p.vrad[k + 1]);
    else
      problem->AddResidualBlock(cf, nullptr, p.centre, &p.pa, &p.inc, &p.vsys, &p.vrot[k], &p.vrot[k + 1]);
  }
  if (problem->HasParameterBlock(&p.vrot[0])) problem->SetParameterBlockConstant(&p.vrot[0]);
  if (radial && problem->HasParameterBlock(&p.vrad[0])) problem->SetParameterBlockConstant(&p.vrad[0]);
  if (opt.fix_centre) problem->SetParameterBlockConstant(p.centre);
  if (opt.fix_pa) problem->SetParameterBlockConstant(&p.pa);
  if (opt.fix_vsys) problem->SetParameterBlockConstant(&p.vsys);
  if (hold_inc) problem->SetParameterBlockConstant(&p.inc);
  add_priors(*problem, p, opt);
  return problem;
}

// Levenberg-Marquardt settings: the final pass converges tightly, earlier
// passes (which only fix the selection) stop at a looser tolerance.
ceres::Solver::Options solver_options(const GlobalFitOptions& opt, bool final_pass) {
  ceres::Solver::Options so;
  so.minimizer_type = ceres::TRUST_REGION;
  so.trust_region_strategy_type = ceres::LEVENBERG_MARQUARDT;
  so.linear_solver_type = ceres::SPARSE_NORMAL_CHOLESKY;
  so.max_num_iterations = opt.max_iterations;
  so.function_tolerance = final_pass ? opt.function_tolerance : 1e-6;
  so.parameter_tolerance = final_pass ? opt.parameter_tolerance : 1e-6;
  so.gradient_tolerance = final_pass ? opt.gradient_tolerance : 1e-10;
  so.num_threads = 1;
  so.logging_type = ceres::SILENT;
  so.minimizer_progress_to_stdout = false;
  return so;
}

// The parameter vector (ce, cn, pa, inc, vsys, vrot[1..N], vrad[1..N] when
// radial), as RecordedProblem stores it.
std::vector<double> parameter_vector(const Parameters& p, int N, bool radial) {
  std::vector<double> v = {p.centre[0], p.centre[1], p.pa, p.inc, p.vsys};
  for (int k = 1; k <= N; ++k) v.push_back(p.vrot[k]);
  if (radial)
    for (int k = 1; k <= N; ++k) v.push_back(p.vrad[k]);
  return v;
}

// The covariance of `blocks` (row-major, dim x dim) from the Jacobian of the
// whole problem at the solution, by core/jacobian_covariance; constant blocks
// get zero rows and columns. False when the Jacobian is rank deficient (by
// SuiteSparseQR's default rank tolerance: the rule of Ceres's SPARSE_QR
// covariance, which this replaced at a fraction of its cost).
bool block_covariance(ceres::Problem& problem, const std::vector<const double*>& blocks,
                      const std::vector<int>& offset, std::vector<double>& full) {
  const int dim = offset.back();
  std::vector<double*> free;
  std::vector<int> free_offset;  // column of each free block in `full`
  for (std::size_t b = 0; b < blocks.size(); ++b)
    if (!problem.IsParameterBlockConstant(blocks[b])) {
      free.push_back(const_cast<double*>(blocks[b]));
      free_offset.push_back(offset[b]);
    }
  std::fill(full.begin(), full.end(), 0.0);
  if (free.empty()) return true;
  const Eigen::MatrixXd jac = problem_jacobian(problem, free);
  const JacobianCovariance jc = covariance_from_jacobian(jac, 0.0);
  if (!jc.ok || !jc.full_rank_by_default_tolerance) return false;
  const auto cols = static_cast<int>(jac.cols());
  std::vector<int> column_of(static_cast<std::size_t>(cols));  // full's index of each column
  for (std::size_t f = 0, c = 0; f < free.size(); ++f)
    for (int i = 0; i < problem.ParameterBlockSize(free[f]); ++i, ++c) column_of[c] = free_offset[f] + i;
  for (int i = 0; i < cols; ++i)
    for (int j = 0; j < cols; ++j)
      full[static_cast<std::size_t>(column_of[i]) * dim + column_of[j]] = jc.cov(i, j);
  return true;
}

// Scaled covariance of the geometry (ce, cn, pa, inc, vsys; deg for angles)
// and the node speed errors. Leaves covariance_ok false (and says so in the
// message) when the problem is rank deficient.
void fill_covariance(GlobalFitSummary& out, ceres::Problem& problem, Parameters& p, const GlobalFitOptions& opt,
                     int N) {
  const bool radial = opt.fit_radial;
  std::vector<const double*> blocks;
  if (!opt.fix_centre) blocks.push_back(p.centre);
  if (!opt.fix_pa) blocks.push_back(&p.pa);
  if (!opt.fix_inc) blocks.push_back(&p.inc);
  if (!opt.fix_vsys) blocks.push_back(&p.vsys);
  std::vector<int> node_blocks;
  for (int k = 1; k <= N; ++k)
    if (problem.HasParameterBlock(&p.vrot[k])) {
      blocks.push_back(&p.vrot[k]);
      node_blocks.push_back(k);
    }
  if (radial)
    for (int k = 1; k <= N; ++k)
      if (problem.HasParameterBlock(&p.vrad[k])) blocks.push_back(&p.vrad[k]);
  const int np = static_cast<int>(blocks.size());
  std::vector<int> offset(np + 1, 0);
  for (int b = 0; b < np; ++b) offset[b + 1] = offset[b] + problem.ParameterBlockSize(blocks[b]);
  const int dim = offset[np];
  std::vector<double> full(static_cast<std::size_t>(dim) * dim);
  if (block_covariance(problem, blocks, offset, full)) {
    auto at = [&](int i, int j) { return full[static_cast<std::size_t>(i) * dim + j]; };
    // Map the geometry rows (present ones) into the 5x5 (ce, cn, pa, inc, vsys).
    std::vector<int> where(5, -1);  // index in `full` of each of the 5
    int b = 0;
    if (!opt.fix_centre) { where[0] = offset[b]; where[1] = offset[b] + 1; ++b; }
    if (!opt.fix_pa) { where[2] = offset[b]; ++b; }
    if (!opt.fix_inc) { where[3] = offset[b]; ++b; }
    if (!opt.fix_vsys) { where[4] = offset[b]; ++b; }
    const double unit[5] = {1.0, 1.0, 1.0 / kRadPerDeg, 1.0 / kRadPerDeg, 1.0};
    const double f = out.scaling.factor();
    for (int i = 0; i < 5; ++i)
      for (int j = 0; j < 5; ++j)
        out.covariance(i, j) =
            (where[i] >= 0 && where[j] >= 0) ? at(where[i], where[j]) * unit[i] * unit[j] * f : 0.0;
    for (std::size_t q = 0; q < node_blocks.size(); ++q, ++b)
      out.nodes[node_blocks[q] - 1].vrot_err_kms = std::sqrt(at(offset[b], offset[b]) * f);
    if (radial)
      for (int k = 1; k <= N; ++k)
        if (problem.HasParameterBlock(&p.vrad[k])) {
          out.nodes[k - 1].vrad_err_kms = std::sqrt(at(offset[b], offset[b]) * f);
          ++b;
        }
    out.covariance_ok = out.covariance.allFinite();
  }
  if (!out.covariance_ok) out.message += " (covariance could not be computed: the problem is rank deficient)";
}

// Fit statistics, geometry and the node table of the solved problem.
void fill_solution(GlobalFitSummary& out, const VelocitySamples& s, const Parameters& p, const ceres::Problem& problem,
                   const GlobalFitOptions& opt, const std::vector<double>& node_r, const std::vector<int>& bracket) {
  const int N = static_cast<int>(node_r.size()) - 1;
  const bool radial = opt.fit_radial;
  const std::size_t n = s.size();
  out.used.assign(n, 0);
  double ss = 0;
  for (std::size_t i = 0; i < n; ++i)
    if (bracket[i] >= 0) {
      out.used[i] = 1;
      const double r = s.velocity[i] - model_of(p, node_r, s.east[i], s.north[i], bracket[i]);
      ss += r * r;
    }
  out.residual_rms_kms = out.n_used > 0 ? std::sqrt(ss / out.n_used) : 0.0;
  int np = (opt.fix_centre ? 0 : 2) + (opt.fix_pa ? 0 : 1) + (opt.fix_inc ? 0 : 1) + (opt.fix_vsys ? 0 : 1);
  for (int k = 1; k <= N; ++k) {
    np += problem.HasParameterBlock(&p.vrot[k]) ? 1 : 0;
    np += radial && problem.HasParameterBlock(&p.vrad[k]) ? 1 : 0;
  }
  out.n_parameters = np;
  out.geometry.centre = {p.centre[0], p.centre[1]};
  out.geometry.pa_deg = wrap_pa_deg(p.pa / kRadPerDeg);
  out.geometry.inc_deg = p.inc / kRadPerDeg;
  out.geometry.vsys_kms = p.vsys;

  out.nodes.resize(N);
  for (int k = 1; k <= N; ++k) {
    out.nodes[k - 1].radius_arcsec = node_r[k];
    out.nodes[k - 1].vrot_kms = p.vrot[k];
    out.nodes[k - 1].vrad_kms = p.vrad[k];
    out.nodes[k - 1].vrot_err_kms = std::numeric_limits<double>::quiet_NaN();
    out.nodes[k - 1].vrad_err_kms = radial ? std::numeric_limits<double>::quiet_NaN() : 0.0;
  }
  for (std::size_t i = 0; i < n; ++i)
    if (bracket[i] >= 0) {
      if (bracket[i] >= 1) out.nodes[bracket[i] - 1].n_pixels++;
      out.nodes[bracket[i]].n_pixels++;
    }
}

// The final pass's problem as data, for checks against an outside solver.
RecordedProblem recorded_problem(const Selection& sel, const std::vector<double>& node_r, bool radial,
                                 std::vector<double> start, std::vector<double> solution) {
  RecordedProblem r;
  r.radial = radial;
  r.node_radius = node_r;
  for (std::size_t gi = 0; gi < sel.groups.size(); ++gi) {
    const PixelGroup& g = *sel.groups[gi];
    for (std::size_t i = 0; i < g.size(); ++i) {
      r.east.push_back(g.east[i]);
      r.north.push_back(g.north[i]);
      r.velocity.push_back(g.velocity[i]);
      r.scale.push_back(g.scale[i]);
      r.bracket.push_back(sel.group_node[gi]);
    }
  }
  r.start = std::move(start);
  r.solution = std::move(solution);
  return r;
}

}  // namespace

double rotation_at(const std::vector<RingNode>& nodes, double R, bool radial) {
  if (nodes.empty() || R <= 0) return 0.0;
  auto val = [&](std::size_t k) { return radial ? nodes[k].vrad_kms : nodes[k].vrot_kms; };
  if (R >= nodes.back().radius_arcsec) return val(nodes.size() - 1);
  double r0 = 0, v0 = 0;
  for (std::size_t k = 0; k < nodes.size(); ++k) {
    if (R < nodes[k].radius_arcsec) {
      const double f = (R - r0) / (nodes[k].radius_arcsec - r0);
      return v0 + (val(k) - v0) * f;
    }
    r0 = nodes[k].radius_arcsec;
    v0 = val(k);
  }
  return v0;
}

double global_model_velocity(const GlobalFitSummary& fit, double east, double north) {
  const auto& g = fit.geometry;
  double X, Y;
  const Angle pa = g.pa_deg * degrees, inc = g.inc_deg * degrees;
  disc_plane(east, north, g.centre.east, g.centre.north, pa.cos(), pa.sin(), inc.cos(), &X, &Y);
  const double R = std::hypot(X, Y);
  return tilted_ring_velocity(X, Y, R, inc.sin(), g.vsys_kms, rotation_at(fit.nodes, R, false),
                              rotation_at(fit.nodes, R, true));
}

GlobalFitSummary fit_global_rings(const VelocitySamples& s, const DiscGeometry& start,
                                  const GlobalFitOptions& opt) {
  GlobalFitSummary out;
  const double w = opt.ring_width_arcsec;
  const int N = static_cast<int>(std::floor(opt.max_radius_arcsec / w + 1e-9));
  if (!(w > 0) || N < 1) {
    out.message = "no ring fits inside the outer radius (ring width " + std::to_string(w) +
                  " arcsec, outer radius " + std::to_string(opt.max_radius_arcsec) + " arcsec)";
    return out;
  }
  std::vector<double> node_r(N + 1);
  for (int k = 0; k <= N; ++k) node_r[k] = k * w;
  Parameters p = initial_parameters(s, start, opt, node_r);

  // Passes: select the samples and weight them under the current geometry,
  // solve, repeat until the geometry and the selection settle.
  const std::size_t n = s.size();
  const bool radial = opt.fit_radial;
  const int max_passes = std::max(1, opt.max_passes);
  std::vector<double> robust(n, 1.0), norm_resid(n, 0.0), pass_start;
  Selection sel;
  sel.bracket.assign(n, -1);
  double prev_moved = std::numeric_limits<double>::infinity();
  ceres::Solver::Summary last_summary;
  std::unique_ptr<ceres::Problem> problem;
  for (int pass = 0; pass < max_passes; ++pass) {
    const bool hold_inc = opt.fix_inc || (pass == 0 && max_passes > 2 && opt.hold_inc_first_pass);
    if (opt.loss != RobustLoss::none && pass > 0) update_robust_weights(opt, sel.bracket, norm_resid, robust);
    Selection next = select_samples(s, p, opt, node_r, robust);
    // The final, tightly converged pass: when the geometry has settled (the
    // last pass moved it by < 1e-3 arcsec / deg and the pixel brackets did
    // not change), or when the passes run out.
    const bool final_pass = pass == max_passes - 1 ||
                            (pass > 0 && !hold_inc && opt.loss == RobustLoss::none && prev_moved < 1e-3 &&
                             changed_fraction(next.bracket, sel.bracket) < 1e-3);
    sel = std::move(next);
    if (sel.groups.empty()) {
      out.message = "no pixels inside the rings";
      out.used.assign(n, 0);
      return out;
    }
    problem = build_problem(sel, p, opt, node_r, hold_inc);
    if (opt.record_problem) pass_start = parameter_vector(p, N, radial);

    const Parameters before = p;
    ceres::Solve(solver_options(opt, final_pass), problem.get(), &last_summary);
    out.iterations += static_cast<int>(last_summary.iterations.size());
    out.passes = pass + 1;
    out.n_used = 0;
    for (const auto& g : sel.groups) out.n_used += static_cast<int>(g->size());

    // Normalised residuals for the robust weights of the next pass.
    for (std::size_t i = 0; i < n; ++i)
      norm_resid[i] = sel.bracket[i] >= 0
                          ? (s.velocity[i] - model_of(p, node_r, s.east[i], s.north[i], sel.bracket[i])) / s.sigma[i]
                          : 0.0;
    normalise(p);
    prev_moved = std::max({std::abs(p.centre[0] - before.centre[0]), std::abs(p.centre[1] - before.centre[1]),
                           std::abs(angle_diff_deg(p.pa / kRadPerDeg, before.pa / kRadPerDeg)),
                           std::abs(p.inc - before.inc) / kRadPerDeg});
    if (!last_summary.IsSolutionUsable() || final_pass) break;
  }

  out.message = last_summary.message;
  out.converged = last_summary.IsSolutionUsable() && last_summary.termination_type == ceres::CONVERGENCE;
  out.stopped_at_iteration_limit =
      last_summary.IsSolutionUsable() && last_summary.termination_type == ceres::NO_CONVERGENCE && out.n_used > 0;
  out.chi2 = 2.0 * last_summary.final_cost;
  fill_solution(out, s, p, *problem, opt, node_r, sel.bracket);

  // Covariance (Ceres), scaled.
  const int dof = out.n_used - out.n_parameters;
  out.scaling.reduced_chi2 = dof > 0 ? out.chi2 / dof : std::numeric_limits<double>::infinity();
  out.scaling.correlation_factor = opt.correlation_factor;
  out.scaling.pixels_per_beam = pixels_per_beam(s.beam, s.pixel_area_arcsec2);
  if (opt.compute_covariance && out.converged && dof > 0) fill_covariance(out, *problem, p, opt, N);

  if (opt.record_problem) out.problem = recorded_problem(sel, node_r, radial, pass_start, parameter_vector(p, N, radial));
  return out;
}

}  // namespace fulcrum::kinematics
