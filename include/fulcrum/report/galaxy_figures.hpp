// The per-galaxy figures, drawn from plain numbers (no analysis here).
//
// Sky panels show (east, north) offsets in arcsec from the adopted centre
// with east to the left and north up, whatever the orientation of the input
// pixel grid (the caller resamples maps onto an offset grid, see
// pipeline/sky_grid.hpp). Position angles are north through east.
// Signed quantities use the Moreland (2009) cool-warm map, intensities the
// Green (2011) cubehelix map (report/colour_map.hpp).
//
// Each function returns the figure as a Canvas (report/canvas.hpp), which
// report/figure_files.hpp writes as SVG, PDF and PNG. Overlays (split line,
// labels, N/E arrows, markers) carry a contrasting halo so that they show on
// blank (light grey) and dark colour-map pixels alike; every map panel has a
// colour bar with its unit.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "fulcrum/report/canvas.hpp"
#include "fulcrum/report/value_grid.hpp"

namespace fulcrum::report {

struct CentreMark {
  std::string id;             // "kinematic-rings", "photometric-peak", ...
  double east = 0, north = 0;  // arcsec from the adopted centre
  double cov_ee = 0, cov_en = 0, cov_nn = 0;  // arcsec^2
  bool ok = true;
  bool adopted = false;
};

// Marker shape and colour for a centre id (kinematic estimates: filled
// shapes in dark colours; photometric ones: open shapes), stable per id.
std::string centre_colour(const std::string& id);
std::string centre_shape(const std::string& id);

struct BeamShape {
  double bmaj = 0, bmin = 0, bpa_deg = 0;  // arcsec, deg
};

struct IntensityFigure {
  std::string galaxy;
  Grid map;                     // offsets (east on x, grid.x increases east), line intensity
  std::string unit;
  std::vector<CentreMark> centres;
  std::optional<double> tail_pa_deg;
  std::optional<double> tail_pa_err_deg;
  std::optional<BeamShape> beam;
  std::optional<double> aperture_radius, aperture_pa_deg, aperture_q;  // analysis aperture
  double error_ellipse_sigma = 2.0;  // ellipses drawn at this many sigma
};
Canvas intensity_figure(const IntensityFigure& f);

struct AsymmetryPlaneFigure {
  std::string galaxy;
  Grid asymmetry;               // A over centre offsets (east, north) from the adopted centre
  std::vector<CentreMark> centres;
  double tail_pa_deg = 0;
  std::optional<double> flip_distance, flip_direction_pa_deg;
  double error_ellipse_sigma = 2.0;
};
Canvas asymmetry_plane_figure(const AsymmetryPlaneFigure& f);

struct FlipAngleFigure {
  std::string galaxy;
  std::vector<double> angle_deg;         // split (tail) angle
  std::vector<double> flip_distance;     // arcsec, NaN where A has no zero in range
  double nominal_deg = 0, err_deg = 0;
  std::optional<double> farthest_plausible;
  std::optional<double> beam_fwhm;
};
Canvas flip_angle_figure(const FlipAngleFigure& f);

struct BootstrapFigure {
  std::string galaxy;
  std::vector<double> bin_edges;   // histogram of A over the draws
  std::vector<double> counts;
  double asymmetry = 0;            // at the adopted centre
  std::optional<double> ci68_lo, ci68_hi, ci95_lo, ci95_hi, p_leading;
};
Canvas bootstrap_figure(const BootstrapFigure& f);

// A velocity pixel the footprint cleaning left out (kinematics/footprint.hpp),
// at (east, north) arcsec from the adopted centre; `outlier`: a velocity
// outlier against its neighbours, else an isolated pixel or a pixel of an
// island smaller than a beam.
struct RejectedPixel {
  double east = 0, north = 0;
  bool outlier = false;
};

struct VelocityFigure {
  std::string galaxy;
  Grid velocity;                   // km/s
  std::optional<Grid> model, residual;
  double vsys = 0;
  std::vector<CentreMark> centres;
  std::vector<RejectedPixel> rejected;  // crossed out on the observed panel
};
Canvas velocity_figure(const VelocityFigure& f);

struct RotationCurveFigure {
  std::string galaxy;
  std::vector<double> radius_arcsec, vrot_kms, vrot_err_kms;
  std::optional<double> kpc_per_arcsec;
};
Canvas rotation_curve_figure(const RotationCurveFigure& f);

// Histogram helper: `bins` equal bins over [lo, hi] (auto range from the
// 0.1 and 99.9 percentiles when lo >= hi).
void histogram(const std::vector<double>& values, int bins, double lo, double hi,
               std::vector<double>& edges, std::vector<double>& counts);

}  // namespace fulcrum::report
