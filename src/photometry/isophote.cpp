// Harmonic ellipse fitting at a fixed isophote level (see isophote.hpp for
// the derivation of the corrections).
#include "fulcrum/photometry/isophote.hpp"

#include <Eigen/Dense>
#include <algorithm>
#include <array>
#include <cmath>
#include <numbers>
#include <unordered_map>

namespace fulcrum::photometry {

namespace {

struct Ellipse {
  PixelCoord c;
  double a = 1.0;      // arcsec
  double eps = 0.0;
  double theta = 0.0;  // rad, PA of the major axis
};

struct Harmonics {
  double i0 = 0, a1 = 0, b1 = 0, a2 = 0, b2 = 0;
  int valid = 0, total = 0;
  bool ok = false;
};

// cos E, sin E, sin 2E, cos 2E at E_k = 2 pi (k + 1/2) / n, k < n: the same
// for every ellipse with n samples, so kept per thread for each n met (n
// follows the ellipse's circumference, which changes from step to step of
// the iteration; at most 256 tables are kept, cleared when full).
const std::vector<std::array<double, 4>>& anomaly_table(int n) {
  thread_local std::unordered_map<int, std::vector<std::array<double, 4>>> tables;
  const auto found = tables.find(n);
  if (found != tables.end()) return found->second;
  if (tables.size() >= 256) tables.clear();
  std::vector<std::array<double, 4>>& table = tables[n];
  table.resize(static_cast<std::size_t>(n));
  for (int k = 0; k < n; ++k) {
    const double e = 2.0 * std::numbers::pi * (k + 0.5) / n;
    table[static_cast<std::size_t>(k)] = {std::cos(e), std::sin(e), std::sin(2 * e), std::cos(2 * e)};
  }
  return table;
}

Harmonics sample(const PreparedImage& p, const std::vector<double>& data, const Ellipse& el,
                 bool full) {
  Harmonics h;
  const double circ_px = 2.0 * std::numbers::pi * el.a / p.pixel_scale_arcsec;
  const int n = std::max(64, static_cast<int>(std::ceil(circ_px)));
  h.total = n;
  const Eigen::Matrix2d ji = p.jacobian.inverse();
  const Eigen::Vector2d uh(std::sin(el.theta), std::cos(el.theta));
  const Eigen::Vector2d vh(std::cos(el.theta), -std::sin(el.theta));
  Eigen::Matrix<double, 5, 5> ata = Eigen::Matrix<double, 5, 5>::Zero();
  Eigen::Matrix<double, 5, 1> atb = Eigen::Matrix<double, 5, 1>::Zero();
  double sum = 0;
  const std::vector<std::array<double, 4>>& trig = anomaly_table(n);
  for (int k = 0; k < n; ++k) {
    const auto& [cos_e, sin_e, sin_2e, cos_2e] = trig[static_cast<std::size_t>(k)];
    const Eigen::Vector2d d = el.a * cos_e * uh + el.a * (1.0 - el.eps) * sin_e * vh;
    const Eigen::Vector2d px = ji * d;
    const double v = bilinear(data, p.nx, p.ny, el.c.x + px(0), el.c.y + px(1));
    if (!std::isfinite(v)) continue;
    ++h.valid;
    sum += v;
    if (full) {
      Eigen::Matrix<double, 5, 1> row;
      row << 1.0, sin_e, cos_e, sin_2e, cos_2e;
      ata += row * row.transpose();
      atb += row * v;
    }
  }
  if (h.valid < 8) return h;
  if (!full) {
    h.i0 = sum / h.valid;
    h.ok = true;
    return h;
  }
  Eigen::Matrix<double, 5, 1> s = ata.ldlt().solve(atb);
  h.i0 = s(0);
  h.a1 = s(1);
  h.b1 = s(2);
  h.a2 = s(3);
  h.b2 = s(4);
  h.ok = s.allFinite();
  return h;
}

// Half-light radius (arcsec, circular) of the light within `r_max` of c.
double half_light_radius(const PreparedImage& p, const std::vector<double>& data, PixelCoord c,
                         double r_max) {
  std::vector<std::pair<double, double>> rf;
  for (int y = 0; y < p.ny; ++y)
    for (int x = 0; x < p.nx; ++x) {
      const double f = data[x + p.nx * y];
      if (!std::isfinite(f)) continue;
      const double r = p.to_sky(x - c.x, y - c.y).norm();
      if (r <= r_max) rf.emplace_back(r, f);
    }
  if (rf.empty()) return p.radius_arcsec;
  std::sort(rf.begin(), rf.end());
  double total = 0;
  for (auto& [r, f] : rf) total += f;
  double cum = 0;
  for (auto& [r, f] : rf) {
    cum += f;
    if (cum >= 0.5 * total) return std::max(r, p.pixel_scale_arcsec);
  }
  return rf.back().first;
}

Ellipse first_guess(const PreparedImage& p, const IsophoteOptions& o) {
  Ellipse el;
  el.c = o.start.value_or(p.guess);
  el.eps = std::clamp(1.0 - p.axis_ratio, 0.0, 0.9);
  el.theta = p.pa_deg * std::numbers::pi / 180.0;
  return el;
}

}  // namespace

double isophote_level(const PreparedImage& p, const std::vector<double>& data, double noise_rms,
                      const IsophoteOptions& o) {
  if (o.level) return *o.level;
  Ellipse el = first_guess(p, o);
  const double rh = half_light_radius(p, data, el.c, 1.5 * p.radius_arcsec);
  el.a = o.level_radius_factor * rh / std::sqrt(std::max(1.0 - el.eps, 0.1));
  const Harmonics h = sample(p, data, el, false);
  double level = h.ok ? h.i0 : 0.0;
  return std::max(level, o.min_level_sigma * noise_rms);
}

PixelEstimate estimate_isophote_centre(const PreparedImage& p, const std::vector<double>& data,
                                       double noise_rms, const IsophoteOptions& o) {
  if (!p.ok) return PixelEstimate::failure(p.reason);
  const double level = isophote_level(p, data, noise_rms, o);
  Ellipse el = first_guess(p, o);
  el.a = std::max(p.radius_arcsec * 0.5, 2.0 * p.pixel_scale_arcsec);
  if (o.start_ellipse) {
    el.c = o.start_ellipse->centre;
    el.a = o.start_ellipse->semi_major_arcsec;
    el.eps = o.start_ellipse->ellipticity;
    el.theta = o.start_ellipse->theta_rad;
  } else {
    // Bring a to the level first along the first-guess geometry (bisection
    // on the mean intensity, which falls outward for a galaxy).
    double lo = 0.5 * p.pixel_scale_arcsec, hi = 3.0 * p.radius_arcsec + 10 * p.pixel_scale_arcsec;
    for (int it = 0; it < 60; ++it) {
      Ellipse t = el;
      t.a = 0.5 * (lo + hi);
      const Harmonics h = sample(p, data, t, false);
      if (!h.ok || h.i0 < level) hi = t.a; else lo = t.a;
    }
    el.a = 0.5 * (lo + hi);
  }
  const Eigen::Matrix2d ji = p.jacobian.inverse();
  bool converged = false;
  int it = 0;
  Harmonics h;
  double grad = 0;
  for (; it < o.max_iterations; ++it) {
    h = sample(p, data, el, true);
    if (!h.ok || h.valid < o.min_valid_fraction * h.total)
      return PixelEstimate::failure("the isophote at level " + std::to_string(level) +
                                    " runs off the usable image (too many masked or missing "
                                    "samples)");
    const double da = std::max(0.1 * el.a, p.pixel_scale_arcsec);
    Ellipse lo = el, hi = el;
    lo.a = std::max(el.a - da, 0.25 * p.pixel_scale_arcsec);
    hi.a = el.a + da;
    const Harmonics hl = sample(p, data, lo, false), hh = sample(p, data, hi, false);
    if (!hl.ok || !hh.ok)
      return PixelEstimate::failure("cannot measure the intensity gradient at the isophote");
    grad = (hh.i0 - hl.i0) / (hi.a - lo.a);
    if (!(grad < 0.0))
      return PixelEstimate::failure("the intensity does not fall outward at the isophote level " +
                                    std::to_string(level));
    const double qq = 1.0 - el.eps;
    const double du = -h.b1 / grad, dv = -h.a1 * qq / grad;
    double deps = -2.0 * h.b2 * qq / (el.a * grad);
    double dth = qq < 0.98 ? -2.0 * h.a2 * qq / (el.a * grad * (1.0 - qq * qq)) : 0.0;
    double dA = (level - h.i0) / grad;
    // Keep single steps modest so the iteration cannot jump off the galaxy.
    dA = std::clamp(dA, -0.3 * el.a, 0.3 * el.a);
    deps = std::clamp(deps, -0.1, 0.1);
    dth = std::clamp(dth, -0.2, 0.2);
    const Eigen::Vector2d uh(std::sin(el.theta), std::cos(el.theta));
    const Eigen::Vector2d vh(std::cos(el.theta), -std::sin(el.theta));
    Eigen::Vector2d dpix = ji * (du * uh + dv * vh);
    const double maxstep = std::max(0.2 * el.a / p.pixel_scale_arcsec, 0.5);
    if (dpix.norm() > maxstep) dpix *= maxstep / dpix.norm();
    el.c.x += dpix(0);
    el.c.y += dpix(1);
    el.a += dA;
    el.eps = std::clamp(el.eps + deps, 0.0, 0.95);
    el.theta += dth;
    if (el.a < 0.5 * p.pixel_scale_arcsec)
      return PixelEstimate::failure("the isophote shrank below half a pixel");
    if (dpix.norm() < o.tolerance_pixels && std::abs(dA) < 1e-6 * el.a) {
      converged = true;
      break;
    }
  }
  if (!converged)
    return PixelEstimate::failure("the isophote ellipse did not converge in " +
                                  std::to_string(o.max_iterations) + " iterations");
  PixelEstimate e;
  e.ok = true;
  e.centre = el.c;
  double pa = std::fmod(el.theta * 180.0 / std::numbers::pi, 180.0);
  if (pa < 0) pa += 180.0;
  e.details = {{"level", level},
               {"level_sigma", level / noise_rms},
               {"semi_major_arcsec", el.a},
               {"axis_ratio", 1.0 - el.eps},
               {"pa_deg", pa},
               {"gradient_per_arcsec", grad},
               {"residual_harmonics", {h.a1, h.b1, h.a2, h.b2}},
               {"samples_valid", h.valid},
               {"samples", h.total},
               {"iterations", it + 1}};
  return e;
}

IsophoteEllipse isophote_ellipse(const PixelEstimate& e) {
  IsophoteEllipse el;
  el.centre = e.centre;
  el.semi_major_arcsec = e.details.value("semi_major_arcsec", 1.0);
  el.ellipticity = 1.0 - e.details.value("axis_ratio", 1.0);
  el.theta_rad = e.details.value("pa_deg", 0.0) * std::numbers::pi / 180.0;
  return el;
}

}  // namespace fulcrum::photometry
