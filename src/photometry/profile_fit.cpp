// Sérsic profile fit with a Gaussian PSF and a free background, by Ceres
// (see profile_fit.hpp for the model and its uncertainty).
#include "fulcrum/photometry/profile_fit.hpp"

#include <ceres/ceres.h>

#include <algorithm>
#include <array>
#include <cmath>
#include <memory>
#include <numbers>

#include "fulcrum/core/jacobian_covariance.hpp"
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
    const Shape sh(q, jac_);
    raw_.resize(static_cast<std::size_t>(rw_ * rh_));  // every element written below
    for (int y = 0; y < rh_; ++y)
      for (int x = 0; x < rw_; ++x) {
        const double px = x - m_ + x0_ - sh.cx, py = y - m_ + y0_ - sh.cy;
        const int ns = nsub_[x + rw_ * y];
        double acc = 0;
        if (ns == 1) {
          acc = sh.value(px, py);
        } else {
          const double step = 1.0 / ns;
          for (int j = 0; j < ns; ++j)
            for (int i = 0; i < ns; ++i)
              acc += sh.value(px - 0.5 + (i + 0.5) * step, py - 0.5 + (j + 0.5) * step);
          acc /= ns * ns;
        }
        raw_[x + rw_ * y] = sh.ie * acc;
      }
    convolve(raw_, out);
  }

  // The model and its derivatives with respect to the 7 parameters, on the
  // same sub-samples: d[j] holds w*h values of dm/dq_j (convolution is
  // linear, so the derivative of the convolved model is the convolved
  // derivative of the profile).
  void render_with_derivatives(const double* q, std::vector<double>& out,
                               std::array<std::vector<double>, 7>& d) const {
    const Shape sh(q, jac_);
    const std::size_t nr = static_cast<std::size_t>(rw_ * rh_);
    raw_.resize(nr);  // every element written below
    for (auto& r : rawd_) r.resize(nr);
    double g[7];
    for (int y = 0; y < rh_; ++y)
      for (int x = 0; x < rw_; ++x) {
        const double px = x - m_ + x0_ - sh.cx, py = y - m_ + y0_ - sh.cy;
        const int ns = nsub_[x + rw_ * y];
        double acc = 0, accd[7] = {0, 0, 0, 0, 0, 0, 0};
        const double step = 1.0 / ns;
        for (int j = 0; j < ns; ++j)
          for (int i = 0; i < ns; ++i) {
            const double sx = ns == 1 ? px : px - 0.5 + (i + 0.5) * step;
            const double sy = ns == 1 ? py : py - 0.5 + (j + 0.5) * step;
            acc += sh.value_and_gradient(sx, sy, g);
            for (int k = 0; k < 7; ++k) accd[k] += g[k];
          }
        const double norm = sh.ie / (ns * ns);
        const std::size_t at = static_cast<std::size_t>(x + rw_ * y);
        raw_[at] = norm * acc;
        for (int k = 0; k < 7; ++k) rawd_[k][at] = norm * accd[k];
      }
    convolve(raw_, out);
    for (int k = 0; k < 7; ++k) convolve(rawd_[k], d[k]);
  }

 private:
  // The profile's geometry for one parameter vector. value(px, py) is
  // S / I_e at the pixel displacement (px, py) from the centre;
  // value_and_gradient also gives the derivatives of S / I_e with respect to
  // (x0, y0, ln I_e, ln r_e, n, e1, e2) -- the one for ln I_e is the value
  // itself. With rho^2 = u^2 + (w / q)^2 (arcsec^2), r = rho / r_e,
  // s = r^(1/n) and S = I_e exp(-b_n (s - 1)):
  //   dS/d(rho^2) = -S b_n s / (2 n rho^2)
  //   dS/d ln r_e = S b_n s / n
  //   dS/dn       = S [ -b_n'(n) (s - 1) + b_n s ln(r) / n^2 ]
  //   d(rho^2)/dx0 = -2 (u a_u + (w / q^2) a_v)   (likewise y0 with b_u, b_v)
  //   d(rho^2)/dtheta = 2 u w (1 - 1/q^2),  d(rho^2)/dq = -2 w^2 / q^3
  // (du/dtheta = w, dw/dtheta = -u), and through theta = atan2(e2, e1) / 2,
  // q = (1 - eps) / (1 + eps), eps = |e| (1 - 1/q^2 = -4 eps / (1 - eps)^2,
  // which cancels the 1/eps of dtheta/de at eps -> 0). b_n'(n) is the
  // central difference of the exact b_n (step 1e-5 n; error ~1e-9).
  struct Shape {
    double cx, cy, ie, re, n, bn, dbn, inv_n, inv_re, inv_q, axq, eps, c2, s2, ratio;
    double a_u, b_u, a_v, b_v;
    bool clamped;
    Shape(const double* q, const Eigen::Matrix2d& jac) {
      cx = q[0];
      cy = q[1];
      ie = std::exp(q[2]);
      re = std::exp(q[3]);
      n = q[4];
      const double e1 = q[5], e2 = q[6];
      const double eps0 = std::hypot(e1, e2);
      clamped = eps0 > 0.95;
      eps = clamped ? 0.95 : eps0;
      ratio = clamped ? 0.95 / eps0 : 1.0;  // eps / |e|
      axq = (1.0 - eps) / (1.0 + eps);
      const double theta = 0.5 * std::atan2(e2, e1);  // PA of the major axis (rad)
      c2 = std::cos(2.0 * theta);
      s2 = std::sin(2.0 * theta);
      const double st = std::sin(theta), ct = std::cos(theta);
      bn = sersic_bn(n);
      const double h = 1e-5 * n;
      dbn = (sersic_bn(n + h) - sersic_bn(n - h)) / (2.0 * h);
      inv_n = 1.0 / n;
      inv_re = 1.0 / re;
      inv_q = 1.0 / axq;
      // Sky offset of a pixel displacement, then major/minor coordinates:
      // u = d . (sin t, cos t), w = d . (cos t, -sin t).
      a_u = jac(0, 0) * st + jac(1, 0) * ct;
      b_u = jac(0, 1) * st + jac(1, 1) * ct;
      a_v = jac(0, 0) * ct - jac(1, 0) * st;
      b_v = jac(0, 1) * ct - jac(1, 1) * st;
    }
    double value(double dx, double dy) const {
      const double u = a_u * dx + b_u * dy;
      const double v = (a_v * dx + b_v * dy) * inv_q;
      const double r = std::sqrt(u * u + v * v) * inv_re;
      return std::exp(-bn * (std::pow(r, inv_n) - 1.0));
    }
    double value_and_gradient(double dx, double dy, double g[7]) const {
      const double u = a_u * dx + b_u * dy;
      const double w = a_v * dx + b_v * dy;
      const double v = w * inv_q;
      const double rho2 = u * u + v * v;
      const double r = std::sqrt(rho2) * inv_re;
      const double sp = std::pow(r, inv_n);
      const double val = std::exp(-bn * (sp - 1.0));
      g[2] = val;
      if (!(rho2 > 0.0)) {  // exactly at the centre: the profile's cusp
        g[0] = g[1] = g[3] = g[5] = g[6] = 0.0;
        g[4] = -val * dbn * (sp - 1.0);
        return val;
      }
      const double k = -val * bn * sp * inv_n / (2.0 * rho2);  // dS/d(rho^2) / I_e
      g[0] = k * -2.0 * (u * a_u + v * inv_q * a_v);
      g[1] = k * -2.0 * (u * b_u + v * inv_q * b_v);
      g[3] = val * bn * sp * inv_n;
      g[4] = val * (-dbn * (sp - 1.0) + bn * sp * std::log(r) * inv_n * inv_n);
      // Through theta: d(rho^2)/dtheta * dtheta/de, with the 1/eps cancelled.
      const double om = 1.0 - eps;
      const double t = 4.0 * u * w * ratio / (om * om);
      double d1 = t * s2, d2 = -t * c2;
      if (!clamped) {
        // Through q: d(rho^2)/dq * dq/deps * deps/de = 4 v^2 / (q (1 + eps)^2) (cos 2t, sin 2t).
        const double op = 1.0 + eps;
        const double tq = 4.0 * v * v * inv_q / (op * op);
        d1 += tq * c2;
        d2 += tq * s2;
      }
      g[5] = k * d1;
      g[6] = k * d2;
      return val;
    }
  };

  void convolve(const std::vector<double>& raw, std::vector<double>& out) const {
    out.resize(static_cast<std::size_t>(w_ * h_));  // every element written below
    if (separable_) {
      // Along x on rows that cover the output plus the y margin, then along y.
      tmp_.resize(static_cast<std::size_t>(w_ * rh_));
      for (int y = 0; y < rh_; ++y)
        for (int x = 0; x < w_; ++x) {
          double acc = 0;
          for (int k = -m_; k <= m_; ++k) acc += kx_[k + m_] * raw[(x + m_ + k) + rw_ * y];
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
              acc += k2_[(dx + m_) + k * (dy + m_)] * raw[(x + m_ - dx) + rw_ * (y + m_ - dy)];
          out[x + w_ * y] = acc;
        }
    }
  }

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
  mutable std::array<std::vector<double>, 7> rawd_;
};

// Whitened residuals (m_i + B - d_i) / sigma over the fitted pixels, with
// the analytic Jacobian of SersicRenderer::render_with_derivatives (and 1 /
// sigma for the background B).
class SersicCost : public ceres::CostFunction {
 public:
  SersicCost(const SersicRenderer* renderer, const std::vector<int>* index,
             const std::vector<double>* value, double inv_sigma)
      : renderer_(renderer), index_(index), value_(value), inv_sigma_(inv_sigma) {
    set_num_residuals(static_cast<int>(index->size()));
    mutable_parameter_block_sizes()->push_back(8);
  }
  bool Evaluate(double const* const* parameters, double* residuals, double** jacobians) const override {
    const double* q = parameters[0];
    thread_local std::vector<double> model;
    thread_local std::array<std::vector<double>, 7> deriv;
    const bool want_jacobian = jacobians != nullptr && jacobians[0] != nullptr;
    if (want_jacobian)
      renderer_->render_with_derivatives(q, model, deriv);
    else
      renderer_->render(q, model);
    const std::vector<int>& index = *index_;
    for (std::size_t k = 0; k < index.size(); ++k) {
      const double m = model[index[k]];
      if (!std::isfinite(m)) return false;
      residuals[k] = (m + q[7] - (*value_)[k]) * inv_sigma_;
    }
    if (want_jacobian) {
      double* J = jacobians[0];  // row-major, residuals x 8
      for (std::size_t k = 0; k < index.size(); ++k) {
        double* row = J + 8 * k;
        for (int j = 0; j < 7; ++j) row[j] = deriv[j][index[k]] * inv_sigma_;
        row[7] = inv_sigma_;
      }
    }
    return true;
  }

 private:
  const SersicRenderer* renderer_;
  const std::vector<int>* index_;
  const std::vector<double>* value_;
  double inv_sigma_;
};

}  // namespace

std::vector<double> render_sersic_model(const PreparedImage& p, const double params[7],
                                        PixelCoord subsample_centre) {
  SersicRenderer rend(p, 0, p.nx - 1, 0, p.ny - 1, subsample_centre);
  std::vector<double> out;
  rend.render(params, out);
  return out;
}

std::array<std::vector<double>, 7> render_sersic_derivatives(const PreparedImage& p, const double params[7],
                                                             PixelCoord subsample_centre) {
  SersicRenderer rend(p, 0, p.nx - 1, 0, p.ny - 1, subsample_centre);
  std::vector<double> out;
  std::array<std::vector<double>, 7> d;
  rend.render_with_derivatives(params, out, d);
  return d;
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

  auto* cost = new SersicCost(&rend, &index, &value, 1.0 / noise_rms);
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

  // The covariance from the Jacobian at the solution (the same pseudo-inverse
  // as Ceres's DENSE_SVD covariance, without forming the residual basis).
  Eigen::Matrix<double, Eigen::Dynamic, 8, Eigen::RowMajor> jac(index.size(), 8);
  std::vector<double> resid(index.size());
  const double* qp = q;
  double* jp = jac.data();
  if (!cost->Evaluate(&qp, resid.data(), &jp))
    return PixelEstimate::failure("the covariance of the profile fit could not be computed");
  const JacobianCovariance jc = covariance_from_jacobian(jac);
  if (!jc.ok) return PixelEstimate::failure("the covariance of the profile fit could not be computed");
  const Eigen::MatrixXd& c8 = jc.cov;
  const int dof = static_cast<int>(index.size()) - npar;
  const double chi2_red = 2.0 * sum.final_cost / std::max(dof, 1);
  const double scale = o.scale_covariance_by_chi2 ? chi2_red : 1.0;
  Eigen::Matrix2d cp;
  cp << c8(0, 0), c8(0, 1), c8(1, 0), c8(1, 1);
  cp *= scale;

  const double eps = std::min(std::hypot(q[5], q[6]), 0.95);
  PixelEstimate e;
  e.ok = true;
  e.centre = {q[0], q[1]};
  e.cov_pixels = cp;
  e.details = {{"sersic_n", q[4]},
               {"sersic_n_sigma", std::sqrt(std::max(c8(4, 4) * scale, 0.0))},
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
