// Flip distance: nearest zero of A(s) along the split normal, per angle (see
// the header for the method).
#include "fulcrum/robustness/flip_distance.hpp"

#include <cmath>
#include <limits>

#include "fulcrum/sky/angle.hpp"
#include "fulcrum/core/error.hpp"
#include "fulcrum/core/settings_check.hpp"

namespace fulcrum::robustness {

using split::ProjectionEngine;

namespace {

// Bisection on the exact profile (an engine or a table) between a (sign sa)
// and b (opposite sign).
template <class Profile>
double bisect(const Profile& e, double a, double b) {
  int sa = sign_of(e.asymmetry(a));
  for (int it = 0; it < 200 && std::abs(b - a) > 1e-12; ++it) {
    const double m = 0.5 * (a + b);
    const int sm = sign_of(e.asymmetry(m));
    if (sm == 0) return m;
    if (sm == sa) {
      a = m;
    } else {
      b = m;
    }
  }
  return 0.5 * (a + b);
}
// The march and bisection of nearest_zero; `e` (an engine or a table)
// answers asymmetry(s) and gives the pixel shape, range and window.
template <class Profile>
std::optional<double> nearest_zero_of(const Profile& e, double s0) {
  const double a0 = e.asymmetry(s0);
  if (!std::isfinite(a0)) return std::nullopt;
  const int sg = sign_of(a0);
  if (sg == 0) return s0;
  const double h = 0.25 * e.shape().w1;
  // The march below takes (hi - lo) / h steps: bounded only for a positive,
  // finite step (a degenerate pixel shape would otherwise loop forever).
  if (!(h > 0.0) || !std::isfinite(h)) return std::nullopt;
  // Search where A can change; a windowed engine is searched inside its window only.
  const double lo = std::max(e.s_min() - h, e.window_lo()), hi = std::min(e.s_max() + h, e.window_hi());
  double prev_p = s0, prev_m = s0;
  for (long long m = 1;; ++m) {
    const double sp = s0 + m * h, sm = s0 - m * h;
    const bool in_p = sp <= hi, in_m = sm >= lo;
    if (!in_p && !in_m) break;
    // Check the nearer candidates first; at equal distance the + side wins.
    if (in_p && sign_of(e.asymmetry(sp)) != sg) {
      const double zp = bisect(e, prev_p, sp);
      // A zero on the - side could be nearer within this step.
      if (in_m && sign_of(e.asymmetry(sm)) != sg) {
        const double zm = bisect(e, prev_m, sm);
        return (s0 - zm) < (zp - s0) ? zm : zp;
      }
      return zp;
    }
    if (in_m && sign_of(e.asymmetry(sm)) != sg) return bisect(e, prev_m, sm);
    prev_p = sp;
    prev_m = sm;
  }
  return std::nullopt;
}
}  // namespace

std::optional<double> nearest_zero(const ProjectionEngine& e, double s0) { return nearest_zero_of(e, s0); }

std::optional<double> nearest_zero(const split::ProfileTable& t, double s0) { return nearest_zero_of(t, s0); }

AngleFlip flip_at_angle(const ProjectionEngine& e, SkyOffset c0, int nominal_sign) {
  AngleFlip f;
  f.tail_pa_deg = e.tail_pa().wrap360().deg();
  f.normal = e.normal();
  f.s0 = e.s_of(c0);
  f.asymmetry_at_centre = e.asymmetry(f.s0);
  const int sg = sign_of(f.asymmetry_at_centre);
  if (nominal_sign != 0 && sg != nominal_sign) {
    f.already_reversed = true;
    f.found = true;
    f.s_zero = f.s0;
    f.distance_arcsec = 0.0;
    f.direction_pa_deg = std::numeric_limits<double>::quiet_NaN();
    return f;
  }
  const auto z = nearest_zero(e, f.s0);
  if (!z) {
    f.found = false;
    f.distance_arcsec = std::numeric_limits<double>::infinity();
    f.direction_pa_deg = std::numeric_limits<double>::quiet_NaN();
    return f;
  }
  f.found = true;
  f.s_zero = *z;
  f.distance_arcsec = std::abs(*z - f.s0);
  // Moving the centre by (s_zero - s0) n: along +n is the leading direction.
  const Angle lead = e.tail_pa() + 180.0 * degrees;
  f.direction_pa_deg = (*z >= f.s0 ? lead : e.tail_pa()).wrap360().deg();
  return f;
}

double beam_fwhm_along(const Beam& b, double pa_deg) {
  if (!std::isfinite(pa_deg)) return b.fwhm_arcsec();
  const double d = Angle::from_degrees(pa_deg - b.bpa_deg).rad();
  const double c = std::cos(d), s = std::sin(d);
  return 1.0 / std::sqrt(c * c / (b.bmaj_arcsec * b.bmaj_arcsec) +
                         s * s / (b.bmin_arcsec * b.bmin_arcsec));
}

FlipSummary flip_distance(const split::SplitProblem& pr, const FlipOptions& opt) {
  FlipSummary out;
  const Angle nominal = opt.tail_pa_deg * degrees;
  {
    const ProjectionEngine e(pr.pixels, nominal, {0.0, false});
    out.nominal_sign = sign_of(e.asymmetry(e.s_of(opt.centre)));
    out.nominal = flip_at_angle(e, opt.centre, out.nominal_sign);
  }
  std::vector<double> angles{opt.tail_pa_deg};
  if (opt.tail_pa_err_deg > 0.0) {
    check_positive("flip_angle_step_deg", opt.angle_step_deg, "degrees");
    const int m = std::max(1, static_cast<int>(std::ceil(opt.tail_pa_err_deg / opt.angle_step_deg)));
    angles.clear();
    for (int k = -m; k <= m; ++k) angles.push_back(opt.tail_pa_deg + k * opt.tail_pa_err_deg / m);
  }
  out.per_angle.resize(angles.size());
  const long long na = static_cast<long long>(angles.size());
  // One engine per thread, rebuilt in place for every angle (no allocation
  // after a thread's first angle; the same sums as a fresh engine).
#pragma omp parallel
  {
    ProjectionEngine e;
    split::EngineScratch scratch;
#pragma omp for schedule(dynamic, 1)
    for (long long k = 0; k < na; ++k) {
      e.rebuild(pr.pixels, angles[k] * degrees, {0.0, false}, &scratch);
      AngleFlip& f = out.per_angle[k];
      f = flip_at_angle(e, opt.centre, out.nominal_sign);
      for (const SkyOffset& q : opt.probes) f.probe_signs.push_back(sign_of(e.asymmetry(e.s_of(q))));
    }
  }
  out.angles_deg = angles;
  out.centre = opt.centre;
  out.nominal_tail_pa_deg = opt.tail_pa_deg;
  out.probes = opt.probes;
  out.worst = out.nominal;
  for (const auto& f : out.per_angle)
    if (f.distance_arcsec < out.worst.distance_arcsec) out.worst = f;
  if (pr.beam && pr.beam->bmaj_arcsec > 0.0) {
    out.nominal_beams = out.nominal.distance_arcsec / beam_fwhm_along(*pr.beam, out.nominal.direction_pa_deg);
    out.worst_beams = out.worst.distance_arcsec / beam_fwhm_along(*pr.beam, out.worst.direction_pa_deg);
  } else {
    out.nominal_beams = out.worst_beams = std::numeric_limits<double>::quiet_NaN();
  }
  return out;
}

namespace {
nlohmann::json num(double v) { return std::isfinite(v) ? nlohmann::json(v) : nlohmann::json(); }
}  // namespace

nlohmann::json to_json(const AngleFlip& f) {
  return {{"tail_pa_deg", f.tail_pa_deg},
          {"asymmetry_at_centre", num(f.asymmetry_at_centre)},
          {"found", f.found},
          {"already_reversed", f.already_reversed},
          {"distance_arcsec", num(f.distance_arcsec)},
          {"direction_pa_deg", num(f.direction_pa_deg)},
          {"s0_arcsec", f.s0},
          {"s_zero_arcsec", num(f.s_zero)}};
}

nlohmann::json to_json(const FlipSummary& f) {
  nlohmann::json per = nlohmann::json::array();
  for (const auto& a : f.per_angle) per.push_back(to_json(a));
  return {{"nominal", to_json(f.nominal)},
          {"nominal_beams", num(f.nominal_beams)},
          {"over_angle_range", to_json(f.worst)},
          {"over_angle_range_beams", num(f.worst_beams)},
          {"per_angle", per}};
}

}  // namespace fulcrum::robustness
