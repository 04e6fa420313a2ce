// Offsets of the photometric centres from the dynamical centre and their
// significance (see dynamical_comparison.hpp).
#include "fulcrum/photometry/dynamical_comparison.hpp"

#include <Eigen/Dense>
#include <cmath>
#include <numbers>

#include "fulcrum/sky/offset_frame.hpp"
#include "fulcrum/sky/physical_scale.hpp"

namespace fulcrum::photometry {

double beam_fwhm_along(const Beam& b, double pa_deg) {
  // Half-maximum contour: ellipse with semi-axes bmaj/2 (at BPA) and bmin/2;
  // its radius in a direction at angle alpha from the major axis is
  // 1 / sqrt(cos^2 alpha / (bmaj/2)^2 + sin^2 alpha / (bmin/2)^2).
  const double al = (pa_deg - b.bpa_deg) * std::numbers::pi / 180.0;
  const double ca = std::cos(al), sa = std::sin(al);
  const double hm = 0.5 * b.bmaj_arcsec, hn = 0.5 * b.bmin_arcsec;
  return 2.0 / std::sqrt(ca * ca / (hm * hm) + sa * sa / (hn * hn));
}

CentreOffset offset_from_dynamical(const Centre& p, const Centre& k, const ComparisonOptions& o) {
  CentreOffset r;
  r.id = p.id();
  r.ok = true;
  const WorldCoord position = p.position;
  const OffsetFrame frame(k.position);
  const SkyOffset d = frame.to_offset(position);
  r.east_arcsec = d.east;
  r.north_arcsec = d.north;
  r.offset_arcsec = separation_arcsec(k.position, position);
  r.pa_deg = r.offset_arcsec > 0 ? position_angle_deg(k.position, position) : 0.0;
  if (o.beam && o.beam->bmaj_arcsec > 0 && o.beam->bmin_arcsec > 0) {
    r.beam_fwhm_along_arcsec = beam_fwhm_along(*o.beam, r.pa_deg);
    r.offset_beams = r.offset_arcsec / *r.beam_fwhm_along_arcsec;
  }
  if (o.distance_mpc && *o.distance_mpc > 0)
    r.offset_kpc = r.offset_arcsec * kpc_per_arcsec(*o.distance_mpc);
  const Eigen::Matrix2d c = p.covariance + k.covariance;
  const Eigen::Vector2d v(d.east, d.north);
  if (std::abs(c.determinant()) > 0) {
    const double m2 = v.dot(c.ldlt().solve(v));
    r.mahalanobis = std::sqrt(std::max(m2, 0.0));
  } else {
    r.mahalanobis = v.norm() > 0 ? std::numeric_limits<double>::infinity() : 0.0;
  }
  r.probability = std::exp(-0.5 * r.mahalanobis * r.mahalanobis);
  return r;
}

ComparisonSummary compare_with_dynamical(const PhotometrySummary& ph, const Centre& k,
                                         const ComparisonOptions& o) {
  ComparisonSummary s;
  s.dynamical = k;
  s.options = o;
  for (const auto& c : ph.centres) {
    if (!c.ok()) {
      CentreOffset r;
      r.id = c.id();
      r.ok = false;
      s.offsets.push_back(r);
      continue;
    }
    s.offsets.push_back(offset_from_dynamical(c.centre, k, o));
  }
  s.spread = centre_spread(ph.centres);
  if (s.spread.count > 0) {
    // The mean of the photometric centres, with their scatter as its
    // (systematic) covariance.
    Centre mean = measured_centre(CentreMethod::external, s.spread.mean, s.spread.scatter_cov_arcsec2,
                                  "mean of the photometric centres");
    mean.label = "photometric-mean";
    s.mean_offset = offset_from_dynamical(mean, k, o);
  }
  return s;
}

nlohmann::json to_json(const CentreOffset& r) {
  nlohmann::json j;
  if (!r.ok) return nullptr;
  j["east_arcsec"] = r.east_arcsec;
  j["north_arcsec"] = r.north_arcsec;
  j["offset_arcsec"] = r.offset_arcsec;
  j["pa_deg"] = r.pa_deg;
  j["offset_beams"] = r.offset_beams ? nlohmann::json(*r.offset_beams) : nlohmann::json(nullptr);
  if (r.beam_fwhm_along_arcsec) j["beam_fwhm_along_offset_arcsec"] = *r.beam_fwhm_along_arcsec;
  j["offset_kpc"] = r.offset_kpc ? nlohmann::json(*r.offset_kpc) : nlohmann::json(nullptr);
  j["mahalanobis"] = std::isfinite(r.mahalanobis) ? nlohmann::json(r.mahalanobis) : nlohmann::json("inf");
  j["match_probability"] = r.probability;
  return j;
}

nlohmann::json to_json(const ComparisonSummary& s) {
  nlohmann::json j;
  j["dynamical_centre"] = {{"ra_deg", s.dynamical.position.ra_deg},
                           {"dec_deg", s.dynamical.position.dec_deg},
                           {"cov_arcsec2",
                            {{s.dynamical.covariance(0, 0), s.dynamical.covariance(0, 1)},
                             {s.dynamical.covariance(1, 0), s.dynamical.covariance(1, 1)}}}};
  if (s.options.beam)
    j["beam"] = {{"bmaj_arcsec", s.options.beam->bmaj_arcsec},
                 {"bmin_arcsec", s.options.beam->bmin_arcsec},
                 {"bpa_deg", s.options.beam->bpa_deg}};
  if (s.options.distance_mpc) j["distance_mpc"] = *s.options.distance_mpc;
  j["offsets"] = nlohmann::json::object();
  for (const auto& r : s.offsets) j["offsets"][r.id] = to_json(r);
  if (s.mean_offset) {
    j["photometric_mean_offset"] = to_json(*s.mean_offset);
    j["photometric_spread_rms_arcsec"] = s.spread.rms_arcsec;
  }
  return j;
}

}  // namespace fulcrum::photometry
