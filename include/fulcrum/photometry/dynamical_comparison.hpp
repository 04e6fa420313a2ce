// How far each photometric centre sits from the dynamical centre, and how
// significant that is.
//
// For a photometric centre P (covariance C_P) and the dynamical centre K
// (covariance C_K), both 2x2 in arcsec^2 on (east, north):
//   offset d = (east, north) of P seen from K (tangent-plane offsets about K,
//              sky/offset_frame.hpp), |d| in arcsec and its position angle
//              (north through east, from K towards P, on the sphere);
//   in beams: |d| / FWHM of the line map's beam along the direction of d
//              (the diameter of the half-maximum ellipse in that direction);
//   in kpc:  |d| * D * pi / 648000 * 1000 for a distance D in Mpc (small
//              angles; D is the angular-diameter distance);
//   Mahalanobis distance  m = sqrt(d^T (C_P + C_K)^-1 d)  (the two errors
//              independent), and the matching probability p = exp(-m^2 / 2),
//              the chance that two estimates of one point differ by at least
//              this much: the chi-square survival function with 2 degrees of
//              freedom.
// The spread of the photometric estimators about their mean is reported
// beside, together with the offset of that mean from K.
#pragma once

#include <Eigen/Dense>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <vector>

#include "fulcrum/io/beam.hpp"
#include "fulcrum/photometry/photometric_centres.hpp"

namespace fulcrum::photometry {

struct ComparisonOptions {
  std::optional<Beam> beam;            // of the line map
  std::optional<double> distance_mpc;
};

struct CentreOffset {
  std::string id;
  bool ok = false;               // false when the photometric centre failed
  double east_arcsec = 0.0, north_arcsec = 0.0;
  double offset_arcsec = 0.0;
  double pa_deg = 0.0;
  std::optional<double> offset_beams;
  std::optional<double> beam_fwhm_along_arcsec;
  std::optional<double> offset_kpc;
  double mahalanobis = 0.0;
  double probability = 1.0;
};

struct ComparisonSummary {
  Centre dynamical;                   // the kinematic centre compared with
  ComparisonOptions options;
  std::vector<CentreOffset> offsets;  // in the order of the photometric centres
  CentreSpread spread;                // of the photometric centres
  std::optional<CentreOffset> mean_offset;  // of the photometric mean (spread as its covariance)
};

// FWHM (arcsec) of `beam` along the sky direction of position angle `pa_deg`.
double beam_fwhm_along(const Beam& beam, double pa_deg);

// The offset of centre `p` (any method; id() names the row) from the
// dynamical centre `k`; both are centres of sky/centre.hpp.
CentreOffset offset_from_dynamical(const Centre& p, const Centre& k, const ComparisonOptions& options);

ComparisonSummary compare_with_dynamical(const PhotometrySummary& photometry, const Centre& dynamical,
                                         const ComparisonOptions& options = {});

nlohmann::json to_json(const CentreOffset& o);
nlohmann::json to_json(const ComparisonSummary& s);

}  // namespace fulcrum::photometry
