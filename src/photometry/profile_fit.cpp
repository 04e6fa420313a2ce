// Sérsic profile fit with a Gaussian PSF and a free background, by Ceres
// (see profile_fit.hpp for the model and its uncertainty).
#include "fulcrum/photometry/profile_fit.hpp"

#include <ceres/ceres.h>

#include <algorithm>
#include <cmath>
#include <memory>
#include <numbers>

#include "fulcrum/imaging/gaussian_smooth.hpp"
#include "fulcrum/io/beam.hpp"
#include "fulcrum/photometry/centroid.hpp"
#include "fulcrum/photometry/sersic_profile.hpp"

namespace fulcrum::photometry {

namespace {

// Renders PSF * Sérsic on a rectangle [x0, x1] x [y0, y1] (0-based pixels).
class SersicRenderer {
 public:
  SersicRenderer(const PreparedImage& p, int bx0, int bx1, int by0, int by1, PixelCoord sub_centre)
      : jac_(p.jacobian), x0_(bx0), y0_(by0), w_(bx1 - bx0 + 1), h_(by1 - by0 + 1) {
    const Eigen::Matrix2d c =
        pixel_covariance(Beam{p.psf_fwhm_arcsec, p.psf_fwhm_arcsec, 0.0}, p.jacobian);
    const double smax = std::sqrt(std::max(c(0, 0), c(1, 1)));
    m_ = std::max(1, static_cast<int>(std::ceil(4.0 * smax)));
    separable_ = std::abs(c(0, 1)) <= 1e-9 * (c(0, 0) + c(1, 1));
    if (separable_) {
      kx_ = kernel_1d(std::sqrt(c(0, 0)));
      ky_ = kernel_1d(std::sqrt(c(1, 1)));
    } else {
      const Eigen::Matrix2d ci = c.inverse();
      const int k = 2 * m_ + 1;
      k2_.assign(static_cast<std::size_t>(k * k), 0.0);
      double sum = 0;
      for (int dy = -m_; dy <= m_; ++dy)
        for (int dx = -m_; dx <= m_; ++dx) {
          const Eigen::Vector2d d(dx, dy);
          const double v = std::exp(-0.5 * d.dot(ci * d));
          k2_[(dx + m_) + k * (dy + m_)] = v;
          sum += v;
        }
      for (double& v : k2_) v /= sum;
    }
    // Sub-sampling per rendered pixel, fixed for the whole fit.
    rw_ = w_ + 2 * m_;
    rh_ = h_ + 2 * m_;
    nsub_.assign(static_cast<std::size_t>(rw_ * rh_), 1);
    for (int y = 0; y < rh_; ++y)
      for (int x = 0; x < rw_; ++x) {
        const double d = std::hypot(x - m_ + x0_ - sub_centre.x, y - m_ + y0_ - sub_centre.y);
        nsub_[x + rw_ * y] = d < 2.0 ? 9 : (d < 4.0 ? 5 : (d < 8.0 ? 3 : 1));
      }
  }

  int width() const { return w_; }
  int height() const { return h_; }

  // params: x0, y0, ln Ie, ln re, n, e1, e2. out: w*h values (no background).
  void render(const double* q, std::vector<double>& out) const {
    const double cx = q[0], cy = q[1], ie = std::exp(q[2]), re = std::exp(q[3]);
    const double n = q[4];
    double e1 = q[5], e2 = q[6];
    double eps = std::hypot(e1, e2);
    if (eps > 0.95) {
      e1 *= 0.95 / eps;
      e2 *= 0.95 / eps;
      eps = 0.95;
    }
    const double axq = (1.0 - eps) / (1.0 + eps);
    const double theta = 0.5 * std::atan2(e2, e1);  // PA of the major axis (rad)
    const double st = std::sin(theta), ct = std::cos(theta);
    const double bn = sersic_bn(n);
    const double inv_n = 1.0 / n;
    // Sky offset of a pixel displacement, then major/minor coordinates:
    // u = d . (sin t, cos t), v = d . (cos t, -sin t).
    const double a_u = jac_(0, 0) * st + jac_(1, 0) * ct, b_u = jac_(0, 1) * st + jac_(1, 1) * ct;
    const double a_v = jac_(0, 0) * ct - jac_(1, 0) * st, b_v = jac_(0, 1) * ct - jac_(1, 1) * st;
    const double inv_re = 1.0 / re, inv_q = 1.0 / axq;
    auto sersic = [&](double dx, double dy) {
      const double u = a_u * dx + b_u * dy;
      const double v = (a_v * dx + b_v * dy) * inv_q;
      const double r = std::sqrt(u * u + v * v) * inv_re;
      return std::exp(-bn * (std::pow(r, inv_n) - 1.0));
    };
    raw_.assign(static_cast<std::size_t>(rw_ * rh_), 0.0);
    for (int y = 0; y < rh_; ++y)
      for (int x = 0; x < rw_; ++x) {
        const double px = x - m_ + x0_ - cx, py = y - m_ + y0_ - cy;
        const int ns = nsub_[x + rw_ * y];
        double acc = 0;
        if (ns == 1) {
          acc = sersic(px, py);
        } else {
          const double step = 1.0 / ns;
          for (int j = 0; j < ns; ++j)
            for (int i = 0; i < ns; ++i)
              acc += sersic(px - 0.5 + (i + 0.5) * step, py - 0.5 + (j + 0.5) * step);
          acc /= ns * ns;
        }
        raw_[x + rw_ * y] = ie * acc;
      }
    out.assign(static_cast<std::size_t>(w_ * h_), 0.0);
    if (separable_) {
      // Along x on rows that cover the output plus the y margin, then along y.
      tmp_.assign(static_cast<std::size_t>(w_ * rh_), 0.0);
      for (int y = 0; y < rh_; ++y)
        for (int x = 0; x < w_; ++x) {
          double acc = 0;
          for (int k = -m_; k <= m_; ++k) acc += kx_[k + m_] * raw_[(x + m_ + k) + rw_ * y];
          tmp_[x + w_ * y] = acc;
        }
      for (int y = 0; y < h_; ++y)
        for (int x = 0; x < w_; ++x) {
          double acc = 0;
          for (int k = -m_; k <= m_; ++k) acc += ky_[k + m_] * tmp_[x + w_ * (y + m_ + k)];
          out[x + w_ * y] = acc;
        }
    } else {
      const int k = 2 * m_ + 1;
      for (int y = 0; y < h_; ++y)
        for (int x = 0; x < w_; ++x) {
          double acc = 0;
          for (int dy = -m_; dy <= m_; ++dy)
            for (int dx = -m_; dx <= m_; ++dx)
              acc += k2_[(dx + m_) + k * (dy + m_)] * raw_[(x + m_ - dx) + rw_ * (y + m_ - dy)];
          out[x + w_ * y] = acc;
        }
    }
  }

 private:
  std::vector<double> kernel_1d(double sigma) const {
    std::vector<double> k(static_cast<std::size_t>(2 * m_ + 1));
    double sum = 0;
    for (int i = -m_; i <= m_; ++i) {
      k[i + m_] = std::exp(-0.5 * i * i / (sigma * sigma));
      sum += k[i + m_];
    }
    for (double& v : k) v /= sum;
    return k;
  }

  Eigen::Matrix2d jac_;
  int x0_, y0_, w_, h_, m_ = 1, rw_ = 0, rh_ = 0;
  bool separable_ = true;
  std::vector<double> kx_, ky_, k2_;
  std::vector<int> nsub_;
  mutable std::vector<double> raw_, tmp_;
};

struct SersicResidual {
  const SersicRenderer* renderer;
  const std::vector<int>* index;   // box-local indices of fitted pixels
  const std::vector<double>* value;
  double inv_sigma;
  bool operator()(const double* q, double* r) const {
    thread_local std::vector<double> model;
    renderer->render(q, model);
    for (std::size_t k = 0; k < index->size(); ++k)
      r[k] = (model[(*index)[k]] + q[7] - (*value)[k]) * inv_sigma;
    return true;
  }
};

}  // namespace

std::vector<double> render_sersic_model(const PreparedImage& p, const double params[7],
                                        PixelCoord subsample_centre) {
  SersicRenderer rend(p, 0, p.nx - 1, 0, p.ny - 1, subsample_centre);
  std::vector<double> out;
  rend.render(params, out);
  return out;
}

PixelEstimate fit_sersic_profile(const PreparedImage& p, const std::vector<double>& data,
                                 double noise_rms, const ProfileFitOptions& o) {
  if (!p.ok) return PixelEstimate::failure(p.reason);
  if (!(noise_rms > 0.0)) return PixelEstimate::failure("the pixel noise is not positive");
  const PixelCoord start = o.start.value_or(p.guess);
  const double fit_r = o.fit_radius_arcsec > 0 ? o.fit_radius_arcsec : 2.25 * p.radius_arcsec;
  const Eigen::Matrix2d ji = p.jacobian.inverse();
  const double ex = fit_r * ji.row(0).norm(), ey = fit_r * ji.row(1).norm();
  const int bx0 = std::max(0, static_cast<int>(std::floor(start.x - ex)));
  const int bx1 = std::min(p.nx - 1, static_cast<int>(std::ceil(start.x + ex)));
  const int by0 = std::max(0, static_cast<int>(std::floor(start.y - ey)));
  const int by1 = std::min(p.ny - 1, static_cast<int>(std::ceil(start.y + ey)));
  if (bx1 - bx0 < 6 || by1 - by0 < 6)
    return PixelEstimate::failure("the galaxy is too small or too close to the edge to fit");

  SersicRenderer rend(p, bx0, bx1, by0, by1, start);
  std::vector<int> index;
  std::vector<double> value;
  // Starting size: the half-light radius of the light inside the fit radius.
  std::vector<std::pair<double, double>> rf;
  for (int y = by0; y <= by1; ++y)
    for (int x = bx0; x <= bx1; ++x) {
      const double f = data[x + p.nx * y];
      if (!std::isfinite(f)) continue;
      index.push_back((x - bx0) + rend.width() * (y - by0));
      value.push_back(f);
      const double r = p.to_sky(x - start.x, y - start.y).norm();
      if (r <= fit_r) rf.emplace_back(r, f);
    }
  const int npar = 8;
  if (static_cast<int>(index.size()) < 4 * npar)
    return PixelEstimate::failure("too few usable pixels to fit a profile");
  std::sort(rf.begin(), rf.end());
  double total = 0;
  for (auto& [r, f] : rf) total += f;
  if (!(total > 0)) return PixelEstimate::failure("no positive light to fit a profile to");
  double cum = 0, r_half = rf.back().first;
  for (auto& [r, f] : rf) {
    cum += f;
    if (cum >= 0.5 * total) {
      r_half = r;
      break;
    }
  }
  r_half = std::max(r_half, 0.5 * p.pixel_scale_arcsec);
  const double q0 = std::clamp(p.axis_ratio, 0.1, 1.0);
  const double re0 = r_half / std::sqrt(q0);
  const double n0 = std::clamp(o.n_start, o.n_min, o.n_max);
  const double eps0 = (1.0 - q0) / (1.0 + q0);
  const double th0 = p.pa_deg * std::numbers::pi / 180.0;
  const double pixarea = p.pixel_scale_arcsec * p.pixel_scale_arcsec;
  const double ie0 = total * pixarea / sersic_total_flux(1.0, re0, n0, q0);
  double q[8] = {start.x,   start.y, std::log(std::max(ie0, 1e-30)), std::log(re0), n0,
                 eps0 * std::cos(2 * th0), eps0 * std::sin(2 * th0), 0.0};

  ceres::NumericDiffOptions nd;
  nd.relative_step_size = 1e-6;
  auto* functor = new SersicResidual{&rend, &index, &value, 1.0 / noise_rms};
  auto* cost = new ceres::NumericDiffCostFunction<SersicResidual, ceres::FORWARD, ceres::DYNAMIC, 8>(
      functor, ceres::TAKE_OWNERSHIP, static_cast<int>(index.size()), nd);
  ceres::Problem problem;
  problem.AddResidualBlock(cost, nullptr, q);
  problem.SetParameterLowerBound(q, 0, bx0);
  problem.SetParameterUpperBound(q, 0, bx1);
  problem.SetParameterLowerBound(q, 1, by0);
  problem.SetParameterUpperBound(q, 1, by1);
  problem.SetParameterLowerBound(q, 3, std::log(0.05 * p.pixel_scale_arcsec));
  problem.SetParameterUpperBound(q, 3, std::log(20.0 * fit_r));
  problem.SetParameterLowerBound(q, 4, o.n_min);
  problem.SetParameterUpperBound(q, 4, o.n_max);
  for (int k : {5, 6}) {
    problem.SetParameterLowerBound(q, k, -0.9);
    problem.SetParameterUpperBound(q, k, 0.9);
  }
  ceres::Solver::Options so;
  so.linear_solver_type = ceres::DENSE_QR;
  so.max_num_iterations = o.max_iterations;
  so.function_tolerance = 1e-12;
  so.parameter_tolerance = 1e-12;
  so.gradient_tolerance = 1e-14;
  so.num_threads = 1;
  so.logging_type = ceres::SILENT;
  ceres::Solver::Summary sum;
  ceres::Solve(so, &problem, &sum);
  if (!sum.IsSolutionUsable() || !std::isfinite(sum.final_cost))
    return PixelEstimate::failure("the profile fit failed: " + sum.message);
  // Ceres stops at max_num_iterations with NO_CONVERGENCE and a usable but
  // unconverged solution: say so rather than report it as a centre.
  if (sum.termination_type == ceres::NO_CONVERGENCE)
    return PixelEstimate::failure("the profile fit did not converge in " +
                                  std::to_string(o.max_iterations) + " iterations");
  const double edge_tol = 1e-3;
  if (q[0] - bx0 < edge_tol || bx1 - q[0] < edge_tol || q[1] - by0 < edge_tol ||
      by1 - q[1] < edge_tol)
    return PixelEstimate::failure("the profile fit's centre ran to the edge of the fit box");

  ceres::Covariance::Options co;
  co.algorithm_type = ceres::DENSE_SVD;
  co.null_space_rank = -1;
  co.num_threads = 1;
  ceres::Covariance cov(co);
  std::vector<std::pair<const double*, const double*>> blocks{{q, q}};
  if (!cov.Compute(blocks, &problem))
    return PixelEstimate::failure("the covariance of the profile fit could not be computed");
  double c8[64];
  cov.GetCovarianceBlock(q, q, c8);
  const int dof = static_cast<int>(index.size()) - npar;
  const double chi2_red = 2.0 * sum.final_cost / std::max(dof, 1);
  const double scale = o.scale_covariance_by_chi2 ? chi2_red : 1.0;
  Eigen::Matrix2d cp;
  cp << c8[0], c8[1], c8[8], c8[9];
  cp *= scale;

  const double eps = std::min(std::hypot(q[5], q[6]), 0.95);
  PixelEstimate e;
  e.ok = true;
  e.centre = {q[0], q[1]};
  e.cov_pixels = cp;
  e.details = {{"sersic_n", q[4]},
               {"sersic_n_sigma", std::sqrt(std::max(c8[4 * 8 + 4] * scale, 0.0))},
               {"re_arcsec", std::exp(q[3])},
               {"axis_ratio", (1.0 - eps) / (1.0 + eps)},
               {"pa_deg", std::fmod(0.5 * std::atan2(q[6], q[5]) * 180.0 / std::numbers::pi + 360.0, 180.0)},
               {"ie_counts_per_pixel", std::exp(q[2])},
               {"bn", sersic_bn(q[4])},
               {"background", q[7]},
               {"chi2_reduced", chi2_red},
               {"covariance_scale", scale},
               {"fitted_pixels", index.size()},
               {"iterations", sum.iterations.size()},
               {"n_at_bound", q[4] <= o.n_min + 1e-6 || q[4] >= o.n_max - 1e-6},
               {"termination", sum.message}};
  return e;
}

}  // namespace fulcrum::photometry
