// The figures stage: every figure of one galaxy from the typed summary and
// the loaded maps (see include/fulcrum/pipeline/galaxy_stages.hpp).
#include <algorithm>
#include <cmath>
#include <numbers>

#include "fulcrum/core/number_text.hpp"
#include "fulcrum/core/error.hpp"
#include "fulcrum/pipeline/galaxy_stages.hpp"
#include "fulcrum/pipeline/sky_grid.hpp"
#include "fulcrum/report/galaxy_figures.hpp"
#include "fulcrum/sky/offset_frame.hpp"
#include "fulcrum/sky/pixel_offsets.hpp"

namespace fulcrum::pipeline {

namespace {

std::vector<report::CentreMark> centre_marks(const GalaxySummary& s) {
  std::vector<report::CentreMark> marks;
  const Centre* adopted = s.adopted_centre();
  if (!adopted) return marks;
  const OffsetFrame frame(adopted->position);
  for (std::size_t i = 0; i < s.centres.size(); ++i) {
    const Centre& c = s.centres[i];
    if (!c.ok()) continue;
    const SkyOffset o = frame.to_offset(c.position);
    marks.push_back({c.id(), o.east, o.north, c.covariance(0, 0), c.covariance(0, 1), c.covariance(1, 1), true,
                     i == *s.adopted});
  }
  return marks;
}

report::AsymmetryPlaneFigure plane_figure(const GalaxySummary& s, const robustness::AnalysisSummary& a,
                                          const std::vector<report::CentreMark>& marks, double sigma) {
  report::AsymmetryPlaneFigure af;
  af.galaxy = s.input.name;
  af.tail_pa_deg = a.tail_pa_deg;
  af.centres = marks;
  af.error_ellipse_sigma = sigma;
  if (a.flip.nominal.found) {
    af.flip_distance = a.flip.nominal.distance_arcsec;
    af.flip_direction_pa_deg = a.flip.nominal.direction_pa_deg;
  }
  const robustness::ScanSummary& scan = a.figures->plane;
  auto& g = af.asymmetry;
  g.nx = scan.n_east;
  g.ny = scan.n_north;
  const double se = scan.n_east > 1 ? scan.east[1] - scan.east[0] : 1.0;
  const double sn = scan.n_north > 1 ? scan.north[1] - scan.north[0] : 1.0;
  g.xmin = std::min(scan.east.front(), scan.east.back()) - std::abs(se) / 2;
  g.xmax = std::max(scan.east.front(), scan.east.back()) + std::abs(se) / 2;
  g.ymin = std::min(scan.north.front(), scan.north.back()) - std::abs(sn) / 2;
  g.ymax = std::max(scan.north.front(), scan.north.back()) + std::abs(sn) / 2;
  g.v.resize(static_cast<std::size_t>(g.nx) * g.ny);
  for (int j = 0; j < g.ny; ++j)
    for (int i = 0; i < g.nx; ++i) {
      const int ie = se > 0 ? i : g.nx - 1 - i, in_ = sn > 0 ? j : g.ny - 1 - j;
      g.v[static_cast<std::size_t>(i) + static_cast<std::size_t>(g.nx) * j] = scan.at(ie, in_, 0);
    }
  return af;
}

report::FlipAngleFigure flip_figure(const GalaxySummary& s, const robustness::AnalysisSummary& a) {
  report::FlipAngleFigure ff;
  ff.galaxy = s.input.name;
  ff.nominal_deg = a.tail_pa_deg;
  ff.err_deg = a.tail_pa_err_deg;
  ff.farthest_plausible = a.verdict.plausible.farthest_plausible_arcsec;
  if (s.beam) ff.beam_fwhm = s.beam->fwhm_arcsec();
  for (const auto& f : a.figures->wide_flip.per_angle) {
    ff.angle_deg.push_back(a.tail_pa_deg + angle_diff_deg(f.tail_pa_deg, a.tail_pa_deg));
    ff.flip_distance.push_back(f.found ? f.distance_arcsec : NAN);
  }
  return ff;
}

report::BootstrapFigure bootstrap_figure(const GalaxySummary& s, const robustness::AnalysisSummary& a) {
  report::BootstrapFigure bf;
  bf.galaxy = s.input.name;
  bf.asymmetry = a.split.asymmetry;
  const auto& b = a.bootstrap;
  bf.ci68_lo = b.lo68, bf.ci68_hi = b.hi68;
  bf.ci95_lo = b.lo95, bf.ci95_hi = b.hi95;
  bf.p_leading = b.p_positive;
  report::histogram(b.draws, 60, 0, 0, bf.bin_edges, bf.counts);
  return bf;
}

// The sky grid size: the map's extent about c0, at most `cap` (0: no cap).
int grid_size(const Image& map, WorldCoord c0, double half, int most) {
  PixelOffsets po(map, c0);
  return std::clamp(static_cast<int>(2 * half / po.pixel_scale_arcsec()), 40, most);
}

FigureFile intensity_figure(const GalaxyMaps& maps, const GalaxySummary& s, const AnalysisOptions& opt,
                            WorldCoord c0, double cap, const std::vector<report::CentreMark>& marks) {
  const Image& intensity = *maps.intensity;
  const double half = finite_extent_arcsec(intensity, c0, cap);
  report::IntensityFigure f;
  f.galaxy = s.input.name;
  f.map = sky_grid(intensity, c0, half, grid_size(intensity, c0, half, opt.figure_grid));
  f.unit = intensity.unit;
  f.centres = marks;
  f.tail_pa_deg = s.robustness ? std::optional<double>(s.robustness->tail_pa_deg) : s.input.tail_pa_deg;
  f.tail_pa_err_deg = s.robustness ? s.robustness->tail_pa_err_deg : s.input.tail_pa_err_deg;
  f.error_ellipse_sigma = opt.error_ellipse_sigma;
  if (s.beam) f.beam = report::BeamShape{s.beam->bmaj_arcsec, s.beam->bmin_arcsec, s.beam->bpa_deg};
  if (s.aperture) {
    f.aperture_radius = s.aperture->spec.radius_arcsec;
    f.aperture_pa_deg = s.aperture->spec.pa_deg;
    f.aperture_q = s.aperture->spec.axis_ratio;
  }
  const std::string caption =
      "Line intensity about the adopted centre (east left, north up), every centre estimate with its " +
      fixed_text(opt.error_ellipse_sigma, 0) +
      "\u03c3 error ellipse, the split line perpendicular to the tail and the tail direction.";
  return {"intensity", caption, report::intensity_figure(f)};
}

double median_finite(const std::vector<double>& data) {
  std::vector<double> f;
  for (double v : data)
    if (std::isfinite(v)) f.push_back(v);
  if (f.empty()) return 0.0;
  std::nth_element(f.begin(), f.begin() + f.size() / 2, f.end());
  return f[f.size() / 2];
}

// The pixels the footprint cleaning left out, as offsets from `c0`.
std::vector<report::RejectedPixel> rejected_pixels(const Image& velocity, const KinematicsResult* k,
                                                   WorldCoord c0) {
  std::vector<report::RejectedPixel> out;
  if (!k) return out;
  const kinematics::FootprintSummary& f = k->fit.footprint;
  const OffsetFrame frame(c0);
  for (std::size_t i = 0; i < f.rejected_x.size(); ++i) {
    const SkyOffset o = frame.to_offset(
        velocity.wcs.pixel_to_world({static_cast<double>(f.rejected_x[i]), static_cast<double>(f.rejected_y[i])}));
    out.push_back({o.east, o.north, f.rejected_why[i] == 'o'});
  }
  return out;
}

FigureFile velocity_figure(const GalaxyMaps& maps, const GalaxySummary& s, const AnalysisOptions& opt,
                           WorldCoord c0, double cap, const std::vector<report::CentreMark>& marks) {
  const Image& velocity = *maps.velocity;
  const KinematicsResult* k = s.kinematics ? &*s.kinematics : nullptr;
  report::VelocityFigure vf;
  vf.galaxy = s.input.name;
  const double half = finite_extent_arcsec(velocity, c0, cap);
  const int n = grid_size(velocity, c0, half, opt.figure_grid);
  vf.velocity = sky_grid(velocity, c0, half, n);
  const bool model = k && k->model;
  if (model) vf.model = sky_grid(*k->model, c0, half, n);
  if (k && k->residual) vf.residual = sky_grid(*k->residual, c0, half, n);
  vf.vsys = k && k->ok() ? k->fit.vsys_kms : median_finite(velocity.data);
  vf.centres = marks;
  vf.rejected = rejected_pixels(velocity, k, c0);
  std::string caption =
      model ? "Observed velocity field, the tilted-ring model and the residual (observed \u2212 model)."
            : "Observed velocity field about its median (no kinematic model in this run).";
  if (!vf.rejected.empty())
    caption += " Crosses on the observed panel mark the " + std::to_string(vf.rejected.size()) +
               " pixels the footprint cleaning left out (black: velocity outliers; grey: isolated "
               "pixels and islands smaller than a beam).";
  return {"velocity", caption, report::velocity_figure(vf)};
}

FigureFile rotation_curve(const GalaxySummary& s) {
  report::RotationCurveFigure rc;
  rc.galaxy = s.input.name;
  for (const auto& r : s.kinematics->rings) {
    rc.radius_arcsec.push_back(r.radius_arcsec);
    rc.vrot_kms.push_back(r.vrot_kms);
    rc.vrot_err_kms.push_back(r.vrot_err_kms);
  }
  if (s.input.distance_mpc) rc.kpc_per_arcsec = *s.input.distance_mpc * std::numbers::pi / 648000.0 * 1000.0;
  return {"rotation-curve", "Rotation velocity of each ring of the global tilted-ring fit.",
          report::rotation_curve_figure(rc)};
}

}  // namespace

std::vector<FigureFile> galaxy_figures(const GalaxyMaps& maps, const GalaxySummary& s, const AnalysisOptions& opt,
                                       std::vector<std::string>& notes) {
  std::vector<FigureFile> out;
  if (!opt.figures || !maps.intensity) return out;
  try {
    const Image& intensity = *maps.intensity;
    const Centre* adopted = s.adopted_centre();
    const WorldCoord c0 = adopted ? adopted->position
                                  : intensity.wcs.pixel_to_world({0.5 * (intensity.nx - 1), 0.5 * (intensity.ny - 1)});
    const double cap = s.aperture ? 1.6 * s.aperture->spec.radius_arcsec : 0.0;
    const auto marks = centre_marks(s);
    out.push_back(intensity_figure(maps, s, opt, c0, cap, marks));
    const robustness::AnalysisSummary* a = s.robustness ? &*s.robustness : nullptr;
    if (a && a->figures) {
      out.push_back({"asymmetry-plane",
                     "A = (L \u2212 T)/(L + T) if the centre were moved to each offset (nominal split angle); "
                     "the black line is A = 0; markers show the centre estimates.",
                     report::asymmetry_plane_figure(plane_figure(s, *a, marks, opt.error_ellipse_sigma))});
      out.push_back({"flip-distance",
                     "The smallest centre shift that reverses the sign of A, for each split angle, against the "
                     "distance of the farthest plausible centre.",
                     report::flip_angle_figure(flip_figure(s, *a))});
      out.push_back({"bootstrap", "Bootstrap distribution of A over centre, split-angle and map-noise draws.",
                     report::bootstrap_figure(bootstrap_figure(s, *a))});
    }
    if (maps.velocity) out.push_back(velocity_figure(maps, s, opt, c0, cap, marks));
    if (s.kinematics && !s.kinematics->rings.empty()) out.push_back(rotation_curve(s));
  } catch (const InputError& e) {
    notes.push_back(std::string("figures incomplete: ") + e.what());
  }
  return out;
}

}  // namespace fulcrum::pipeline
