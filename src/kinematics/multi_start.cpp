// Several starts for the global tilted-ring fit (multi_start.hpp).
// Units: arcsec, degrees, km/s.
#include "fulcrum/kinematics/multi_start.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "fulcrum/kinematics/tilted_ring_model.hpp"
#include "fulcrum/sky/angle.hpp"

namespace fulcrum::kinematics {

namespace {

// Every k-th sample, at most `limit` of them (raster order: an even spread).
VelocitySamples thinned(const VelocitySamples& s, int limit) {
  const std::size_t step = std::max<std::size_t>(1, (s.size() + limit - 1) / std::max(1, limit));
  if (step == 1) return s;
  VelocitySamples t;
  t.has_errors = s.has_errors;
  t.pixel_area_arcsec2 = s.pixel_area_arcsec2 * static_cast<double>(step);
  t.beam = s.beam;
  for (std::size_t i = 0; i < s.size(); i += step) {
    t.east.push_back(s.east[i]);
    t.north.push_back(s.north[i]);
    t.velocity.push_back(s.velocity[i]);
    t.sigma.push_back(s.sigma[i]);
    t.x.push_back(s.x[i]);
    t.y.push_back(s.y[i]);
  }
  return t;
}

// Median of |v - model| / sigma over every sample (the common set).
double median_misfit(const GlobalFitSummary& fit, const VelocitySamples& s) {
  std::vector<double> r(s.size());
  for (std::size_t i = 0; i < s.size(); ++i)
    r[i] = std::abs(s.velocity[i] - global_model_velocity(fit, s.east[i], s.north[i])) / s.sigma[i];
  if (r.empty()) return std::numeric_limits<double>::infinity();
  const auto mid = r.begin() + static_cast<std::ptrdiff_t>(r.size() / 2);
  std::nth_element(r.begin(), mid, r.end());
  return *mid;
}

SkyOffset median_position(const VelocitySamples& s) {
  auto med = [](std::vector<double> v) {
    const auto mid = v.begin() + static_cast<std::ptrdiff_t>(v.size() / 2);
    std::nth_element(v.begin(), mid, v.end());
    return *mid;
  };
  return {med(s.east), med(s.north)};
}

std::vector<DiscGeometry> start_grid(const VelocitySamples& s, const FirstGuess& g,
                                     const GlobalFitOptions& fit, const MultiStartOptions& o) {
  std::vector<SkyOffset> centres{g.centre};
  if (!o.centre_given && !fit.fix_centre && s.size() > 0) {
    const SkyOffset m = median_position(s);
    if (std::hypot(m.east - g.centre.east, m.north - g.centre.north) > 0.25 * fit.ring_width_arcsec)
      centres.push_back(m);
  }
  // PA + 180 deg with the speeds' signs swapped is the same model (and the
  // node speeds are guessed from the data, so they swap with it): a start
  // whose flip is already in the grid would repeat that scout's fit (not so
  // when the speeds are given: then the flip starts them counter-rotating).
  std::vector<double> pas{g.pa_deg};
  if (!o.pa_given && !fit.fix_pa)
    for (int k = 1; k < std::max(1, o.pa_starts); ++k) {
      const double pa = wrap_pa_deg(g.pa_deg + 360.0 * k / o.pa_starts);
      const bool flip_present = std::any_of(pas.begin(), pas.end(), [pa](double q) {
        return std::abs(std::abs(angle_diff_deg(pa, q)) - 180.0) < 1e-6;
      });
      if (!flip_present || !fit.start_vrot.empty()) pas.push_back(pa);
    }
  std::vector<DiscGeometry> starts;
  for (const auto& c : centres)
    for (double pa : pas) starts.push_back(DiscGeometry{c, pa, g.inc_deg, g.vsys_kms});
  return starts;
}

}  // namespace

bool distinct_solutions(const DiscGeometry& a, const DiscGeometry& b, const MultiStartOptions& o,
                        double beam_fwhm_arcsec) {
  const double d = std::hypot(a.centre.east - b.centre.east, a.centre.north - b.centre.north);
  return d > o.distinct_centre_beams * beam_fwhm_arcsec ||
         std::abs(angle_diff_deg(a.pa_deg, b.pa_deg)) > o.distinct_pa_deg ||
         std::abs(a.inc_deg - b.inc_deg) > o.distinct_inc_deg;
}

MultiStartSummary scout_starts(const VelocitySamples& s, const FirstGuess& g,
                               const GlobalFitOptions& fit, const MultiStartOptions& o,
                               double beam_fwhm_arcsec) {
  MultiStartSummary m;
  const DiscGeometry first{g.centre, g.pa_deg, g.inc_deg, g.vsys_kms};
  m.best_start = first;
  if (!o.enabled) return m;
  const double scale = beam_fwhm_arcsec > 0 ? beam_fwhm_arcsec : fit.ring_width_arcsec;
  const VelocitySamples t = thinned(s, o.scout_samples);
  GlobalFitOptions so = fit;
  so.max_passes = std::max(1, o.scout_passes);
  so.record_problem = false;
  so.compute_covariance = false;  // a scout's errors are never read
  so.max_iterations = 50;
  for (const DiscGeometry& start : start_grid(s, g, fit, o)) {
    const GlobalFitSummary r = fit_global_rings(t, start, so);
    ScoutResult sr;
    sr.start = start;
    sr.solution = r.geometry;
    // PA and PA + 180 with the rotation's sign swapped are the same model:
    // keep the one whose rotation is positive (PA of the receding half).
    double mean_v = 0.0;
    for (const auto& node : r.nodes) mean_v += node.vrot_kms * node.n_pixels;
    if (mean_v < 0) sr.solution.pa_deg = wrap_pa_deg(sr.solution.pa_deg + 180.0);
    sr.n_used = r.n_used;
    // A scout that ran out of passes still says where it is heading.
    sr.converged = r.n_used > 0 && std::isfinite(r.chi2);
    sr.misfit = sr.converged ? median_misfit(r, t) : std::numeric_limits<double>::infinity();
    m.scouts.push_back(sr);
  }
  m.starts = static_cast<int>(m.scouts.size());
  std::vector<const ScoutResult*> ok;
  for (const auto& r : m.scouts)
    if (r.converged) ok.push_back(&r);
  m.converged = static_cast<int>(ok.size());
  if (ok.empty()) return m;
  std::stable_sort(ok.begin(), ok.end(), [](const ScoutResult* a, const ScoutResult* b) {
    return a->misfit < b->misfit;
  });
  m.best_start = ok.front()->solution;
  m.best_misfit = ok.front()->misfit;
  const double limit = (1.0 + o.second_fit_margin) * m.best_misfit;
  for (const ScoutResult* r : ok)
    if (r->misfit <= limit && distinct_solutions(r->solution, ok.front()->solution, o, scale)) {
      m.second_start = r->solution;
      m.second_misfit = r->misfit;
      break;
    }
  return m;
}

}  // namespace fulcrum::kinematics
