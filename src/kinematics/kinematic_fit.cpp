// The dynamical centre from a velocity map (kinematic_fit.hpp): samples,
// first guesses, global and ring-by-ring tilted-ring fits, the harmonic
// centre, refusals, JSON and model maps.
// Units: arcsec (east, north offsets), degrees, km/s; FITS pixels 1-based in
// the JSON, 0-based inside.
#include "fulcrum/core/settings_check.hpp"
#include "fulcrum/core/work_limit.hpp"
#include "fulcrum/kinematics/kinematic_fit.hpp"

#include <Eigen/Dense>
#include <algorithm>
#include <cmath>
#include <limits>
#include <numbers>
#include <sstream>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/log.hpp"
#include "fulcrum/core/number_text.hpp"
#include "fulcrum/core/settings_check.hpp"
#include "fulcrum/kinematics/fit_health.hpp"
#include "fulcrum/kinematics/tilted_ring_model.hpp"
#include "fulcrum/sky/angle.hpp"
#include "fulcrum/sky/pixel_offsets.hpp"

namespace fulcrum::kinematics {

namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

// A kinematic centre at offset `o` of the fit's frame, with its FITS pixel
// on the velocity map when the WCS gives one.
Centre make_centre(CentreMethod method, SkyOffset o, const Eigen::Matrix2d& cov, const OffsetFrame& frame,
                   const CelestialWcs& wcs) {
  Centre c = measured_centre(method, frame.to_world(o), cov, "velocity map");
  if (wcs.valid()) {
    try {
      const PixelCoord p = wcs.world_to_pixel(c.position);
      c.pixel_fits = PixelCoord{fits_pixel(p.x), fits_pixel(p.y)};
    } catch (const InputError&) {
    }
  }
  return c;
}

nlohmann::json num_or_null(double v) { return std::isfinite(v) ? nlohmann::json(v) : nlohmann::json(); }

nlohmann::json centre_json(const Centre& c, const OffsetFrame& frame) {
  nlohmann::json j;
  j["ra_deg"] = c.position.ra_deg;
  j["dec_deg"] = c.position.dec_deg;
  j["x_pix"] = c.pixel_fits ? num_or_null(c.pixel_fits->x) : nlohmann::json();
  j["y_pix"] = c.pixel_fits ? num_or_null(c.pixel_fits->y) : nlohmann::json();
  const SkyOffset o = frame.to_offset(c.position);
  j["east_arcsec"] = o.east;
  j["north_arcsec"] = o.north;
  j["cov_arcsec2"] = {{num_or_null(c.covariance(0, 0)), num_or_null(c.covariance(0, 1))},
                      {num_or_null(c.covariance(1, 0)), num_or_null(c.covariance(1, 1))}};
  j["err_east_arcsec"] = num_or_null(std::sqrt(c.covariance(0, 0)));
  j["err_north_arcsec"] = num_or_null(std::sqrt(c.covariance(1, 1)));
  // The 1-sigma error ellipse: semi-axes and the PA of the major axis.
  Eigen::SelfAdjointEigenSolver<Eigen::Matrix2d> es(c.covariance);
  if (es.info() == Eigen::Success && c.covariance.allFinite()) {
    const Eigen::Vector2d major = es.eigenvectors().col(1);
    j["error_ellipse"] = {
        {"major_arcsec", std::sqrt(std::max(0.0, es.eigenvalues()(1)))},
        {"minor_arcsec", std::sqrt(std::max(0.0, es.eigenvalues()(0)))},
        {"pa_deg", wrap_pa_deg(std::fmod(std::atan2(major(0), major(1)) * 180.0 / std::numbers::pi + 360.0, 180.0))}};
  }
  return j;
}

// Replace the tilted-ring centre's covariance and the PA, inclination and
// vsys errors by the residual-based ones plus the method spread
// (centre_error_terms.hpp, docs/uncertainties.md).
void apply_centre_error_terms(KinematicFit& fit, const VelocitySamples& fitted, const GlobalFitOptions& go,
                              const SmearingGrid* smearing, double expected_residual_fraction) {
  GeometryCovarianceOptions co;
  co.expected_residual_fraction = expected_residual_fraction;
  co.smearing = smearing;
  co.smearing_refits = fit.beam_smearing.refits;
  co.weight_power = go.weight_power;
  co.fix_centre = go.fix_centre;
  co.fix_pa = go.fix_pa;
  co.fix_inc = go.fix_inc;
  co.fix_vsys = go.fix_vsys;
  co.radial = go.fit_radial;
  std::optional<MethodCentre> harmonic;
  if (fit.harmonic_centre)
    harmonic = MethodCentre{"harmonic", fit.frame.to_offset(fit.harmonic_centre->position),
                            fit.harmonic_centre->covariance, 0.0};
  std::vector<RingFit> rings;
  for (const auto& r : fit.rings)
    if (r.free) rings.push_back(*r.free);
  fit.centre_errors = centre_error_terms(fitted, fit.global, co, harmonic, rings);
  const CentreErrorTerms& t = fit.centre_errors;
  if (!t.applied) {
    fit.notes.push_back("centre errors: " + t.reason);
    return;
  }
  if (fit.ring_centre) {
    fit.ring_centre->covariance = t.total;
    if (fit.ambiguity.ambiguous)  // a second solution widens the centre (ambiguity term)
      fit.ring_centre->covariance = add_ambiguity_spread(t.total, fit.global.geometry.centre,
                                                         fit.ambiguity.second.centre);
  }
  if (!go.fix_pa) fit.pa_err_deg = std::sqrt(t.geometry(2, 2));
  if (!go.fix_inc) fit.inc_err_deg = std::sqrt(t.geometry(3, 3));
  if (!go.fix_vsys) fit.vsys_err_kms = std::sqrt(t.geometry(4, 4));
}

nlohmann::json footprint_json(const FootprintSummary& f) {
  return {{"cleaned", f.enabled},
          {"pixels_with_bad_error", f.pixels_bad_error},
          {"pixels_in", f.pixels_in},
          {"velocity_outliers", f.velocity_outliers},
          {"outlier_threshold_kms", f.outlier_threshold_kms},
          {"isolated_pixels", f.isolated_pixels},
          {"small_islands", f.small_islands},
          {"small_island_pixels", f.small_island_pixels},
          {"min_island_pixels", f.min_island_pixels},
          {"islands_kept", f.islands_kept},
          {"pixels_kept", f.pixels_kept}};
}

nlohmann::json geometry_json(const DiscGeometry& g) {
  return {{"centre_east_arcsec", g.centre.east}, {"centre_north_arcsec", g.centre.north},
          {"pa_deg", g.pa_deg}, {"inc_deg", g.inc_deg}, {"vsys_kms", g.vsys_kms}};
}

nlohmann::json starts_json(const MultiStartSummary& m) {
  nlohmann::json j = {{"scouts", m.starts}, {"scouts_converged", m.converged},
                      {"best_start", geometry_json(m.best_start)},
                      {"best_misfit", m.best_misfit}};
  j["second_start"] = m.second_start ? geometry_json(*m.second_start) : nlohmann::json();
  if (m.second_start) j["second_misfit"] = m.second_misfit;
  return j;
}

nlohmann::json ambiguity_json(const SolutionAmbiguity& a) {
  nlohmann::json j = {{"ambiguous", a.ambiguous}, {"second_solution_fitted", a.checked},
                      {"threshold_delta_chi2", a.threshold}};
  if (a.checked) {
    j["delta_chi2"] = num_or_null(a.delta_chi2);
    j["second_solution"] = geometry_json(a.second);
    j["centre_separation_arcsec"] = a.centre_separation_arcsec;
  }
  if (a.ambiguous) j["note"] = a.note;
  return j;
}

void refuse(KinematicFit& fit, const std::string& why) {
  fit.status = "refused";
  fit.reason = "cannot constrain a centre: " + why;
  fit.centre.reset();
}

}  // namespace

Method parse_method(const std::string& name) {
  if (name == "rings") return Method::rings;
  if (name == "harmonic") return Method::harmonic;
  if (name == "both") return Method::both;
  throw InputError("", "method must be rings, harmonic or both (got '" + name + "')");
}

std::string method_name(Method m) {
  switch (m) {
    case Method::rings: return "rings";
    case Method::harmonic: return "harmonic";
    case Method::both: return "both";
  }
  return "both";
}

namespace {

// Samples of the velocity map about `reference`, cleaned (footprint.hpp) and,
// with a centre guess and a maximum radius, cut to that radius on the sky
// (the disc inside a deprojected radius lies inside the same sky radius).
VelocitySamples prepared_samples(const Image& velocity, const Image* error, WorldCoord reference,
                                 const KinematicOptions& opt, FootprintSummary* footprint) {
  VelocitySamples s = samples_from_image(velocity, error, reference);
  if (opt.centre_guess && opt.max_radius_arcsec) {
    const SkyOffset c = OffsetFrame(reference).to_offset(*opt.centre_guess);
    VelocitySamples inside = s;
    inside.east.clear(); inside.north.clear(); inside.velocity.clear();
    inside.sigma.clear(); inside.x.clear(); inside.y.clear();
    for (std::size_t i = 0; i < s.size(); ++i) {
      if (std::hypot(s.east[i] - c.east, s.north[i] - c.north) > *opt.max_radius_arcsec) continue;
      inside.east.push_back(s.east[i]);
      inside.north.push_back(s.north[i]);
      inside.velocity.push_back(s.velocity[i]);
      inside.sigma.push_back(s.sigma[i]);
      inside.x.push_back(s.x[i]);
      inside.y.push_back(s.y[i]);
    }
    s = std::move(inside);
  }
  FootprintSummary f = clean_footprint(s, opt.footprint);
  if (footprint) *footprint = std::move(f);
  return s;
}

std::optional<SmearingGrid> smearing_grid_for(const Image& velocity, const Image* intensity,
                                              const VelocitySamples& s, WorldCoord reference,
                                              const KinematicOptions& opt,
                                              std::vector<std::string>& notes) {
  std::optional<Beam> beam = velocity.beam;
  if (!beam && intensity && intensity->beam) {
    beam = intensity->beam;
    notes.push_back("the velocity map has no beam: the intensity map's beam is used "
                    "for the beam-smearing correction");
  }
  if (!opt.correct_beam_smearing || !beam || !(beam->bmaj_arcsec > 0) ||
      !(beam->bmin_arcsec > 0) || s.size() == 0)
    return std::nullopt;
  SmearingGrid grid = make_smearing_grid(velocity, s, reference, *beam, intensity);
  if (!grid.note.empty()) notes.push_back(grid.note);
  return grid;
}

// The pixel counts of what reading and cleaning removed, as notes.
void footprint_notes(KinematicFit& fit, int dropped_bad_error) {
  const FootprintSummary& f = fit.footprint;
  if (dropped_bad_error > 0)
    fit.notes.push_back(std::to_string(dropped_bad_error) +
                        " velocity pixels left out: their error is missing, infinite or not "
                        "positive");
  if (f.enabled && f.pixels_in > f.pixels_kept)
    fit.notes.push_back("footprint cleaned: " + std::to_string(f.velocity_outliers) +
                        " velocity outliers, " + std::to_string(f.isolated_pixels) +
                        " isolated pixels and " + std::to_string(f.small_island_pixels) +
                        " pixels in " + std::to_string(f.small_islands) +
                        " islands smaller than " + std::to_string(f.min_island_pixels) +
                        " pixels removed; " + std::to_string(f.pixels_kept) + " of " +
                        std::to_string(f.pixels_in) + " kept");
}

// Whether two maps share one sky grid: same size, and the same sky position
// (within 1e-3 pixel) at three corners.
bool same_sky_grid(const Image& a, const Image& b) {
  if (a.nx != b.nx || a.ny != b.ny) return false;
  try {
    const double scale =
        separation_arcsec(a.wcs.pixel_to_world({0, 0}), a.wcs.pixel_to_world({1, 0}));
    for (const PixelCoord p : {PixelCoord{0, 0}, PixelCoord{a.nx - 1.0, 0}, PixelCoord{0, a.ny - 1.0}})
      if (separation_arcsec(a.wcs.pixel_to_world(p), b.wcs.pixel_to_world(p)) > 1e-3 * scale)
        return false;
  } catch (const InputError&) {
    return false;
  }
  return true;
}

// How two grids differ, in words: their sizes, or how far apart on the sky
// the same pixel indices lie (at the corners and the centre).
std::string grid_difference(const Image& a, const Image& b) {
  if (a.nx != b.nx || a.ny != b.ny)
    return std::to_string(a.nx) + " x " + std::to_string(a.ny) + " against " + std::to_string(b.nx) + " x " +
           std::to_string(b.ny) + " pixels";
  try {
    const double scale = separation_arcsec(a.wcs.pixel_to_world({0, 0}), a.wcs.pixel_to_world({1, 0}));
    double most = 0.0;
    for (const PixelCoord p : {PixelCoord{0, 0}, PixelCoord{a.nx - 1.0, 0}, PixelCoord{0, a.ny - 1.0},
                               PixelCoord{a.nx - 1.0, a.ny - 1.0}, PixelCoord{0.5 * (a.nx - 1), 0.5 * (a.ny - 1)}})
      most = std::max(most, separation_arcsec(a.wcs.pixel_to_world(p), b.wcs.pixel_to_world(p)));
    return "the same pixel lies up to " + significant_text(most, 3) + " arcsec (" +
           significant_text(most / scale, 3) + " pixels) apart in the two";
  } catch (const InputError&) {
    return "a pixel of one has no sky position in the other";
  }
}

}  // namespace

KinematicFit fit_kinematics(const Image& velocity, const Image* velocity_error,
                            const KinematicOptions& options, const Image* intensity) {
  if (!velocity.wcs.valid())
    throw InputError(velocity.path, "the velocity map has no celestial WCS");
  if (intensity && !intensity->wcs.valid())
    throw InputError(intensity->path, "the intensity map has no celestial WCS");
  std::vector<std::string> notes;
  std::string why;
  velocity_unit_factor(velocity, &why);
  if (!why.empty()) notes.push_back(why);
  if (velocity_error) {
    std::string why_err;
    velocity_unit_factor(*velocity_error, &why_err);
    if (!why_err.empty()) notes.push_back(why_err);
  }
  // Reference: the given centre guess, else the first-guess centre of the
  // cleaned footprint found about the grid centre.
  WorldCoord reference;
  if (options.centre_guess) {
    reference = *options.centre_guess;
  } else {
    const WorldCoord grid_centre =
        velocity.wcs.pixel_to_world({0.5 * (velocity.nx - 1), 0.5 * (velocity.ny - 1)});
    VelocitySamples s0 = prepared_samples(velocity, velocity_error, grid_centre, options, nullptr);
    if (s0.size() == 0) {
      KinematicFit fit;
      fit.method = options.method;
      fit.source = velocity.path;
      fit.reference = grid_centre;
      fit.frame = OffsetFrame(grid_centre);
      fit.notes = notes;
      refuse(fit, "the velocity map has no usable pixels (none finite with a usable error, or "
                  "none left after the footprint cleaning)");
      return fit;
    }
    reference = OffsetFrame(grid_centre).to_world(first_guess(s0).centre);
  }
  FootprintSummary footprint;
  const VelocitySamples s =
      prepared_samples(velocity, velocity_error, reference, options, &footprint);
  std::vector<std::string> smearing_notes;  // notes, not warnings
  if (intensity && !same_sky_grid(velocity, *intensity)) {
    // No resampling is needed: every step works on sky positions, and the
    // intensity is read at the velocity pixels' positions through its WCS.
    // (Warned with the other notes at the end.)
    notes.push_back("the velocity map " + velocity.path + " and the intensity map " + intensity->path +
                    " do not share a sky grid (" + grid_difference(velocity, *intensity) +
                    "): the intensity (nearest pixel) is read at the velocity pixels' sky positions (no "
                    "resampling); check that this is intended");
  }
  const std::optional<SmearingGrid> grid =
      smearing_grid_for(velocity, intensity, s, reference, options, smearing_notes);
  KinematicFit fit =
      fit_kinematics_samples(s, OffsetFrame(reference), velocity.wcs, options, grid ? &*grid : nullptr);
  if (options.correct_beam_smearing && !grid) {
    fit.beam_smearing.reason = s.size() == 0 ? "no finite velocity pixels"
                                             : "no beam known (neither map has BMAJ/BMIN)";
  }
  fit.source = velocity.path;
  fit.footprint = std::move(footprint);
  fit.diagnostics.pixels_input = fit.footprint.pixels_in;
  footprint_notes(fit, s.dropped_bad_error);
  fit.notes.insert(fit.notes.begin(), smearing_notes.begin(), smearing_notes.end());
  fit.notes.insert(fit.notes.begin(), notes.begin(), notes.end());
  // Unit conversions change every number: a warning, not a note.
  for (const auto& n : notes) warn(n);
  return fit;
}

namespace {

void start_fit(KinematicFit& fit, const VelocitySamples& s, const OffsetFrame& frame,
               const KinematicOptions& opt, const SmearingGrid* smearing) {
  fit.method = opt.method;
  BeamSmearingSummary& bs = fit.beam_smearing;
  bs.requested = opt.correct_beam_smearing;
  if (!opt.correct_beam_smearing) bs.reason = "turned off";
  else if (!smearing) bs.reason = "no beam known";
  if (smearing) {
    bs.weighting = smearing->weighting;
    bs.beam_fwhm_arcsec = smearing->beam.fwhm_arcsec();
  }
  fit.frame = frame;
  fit.reference = frame.reference();
  auto& d = fit.diagnostics;
  d.pixels_input = static_cast<int>(s.size());
  d.has_error_map = s.has_errors;
  d.pixel_scale_arcsec = std::sqrt(s.pixel_area_arcsec2);
  d.pixels_per_beam = pixels_per_beam(s.beam, s.pixel_area_arcsec2);
  d.correlation_factor = correlation_factor(s.beam, s.pixel_area_arcsec2, opt.noise_correlation);
  if (!s.beam) fit.notes.push_back("no beam in the header: pixels treated as independent");
}

FirstGuess guess_with_overrides(const VelocitySamples& s, const OffsetFrame& frame,
                                const KinematicOptions& opt) {
  FirstGuess g = first_guess(s);
  if (opt.centre_guess) g.centre = frame.to_offset(*opt.centre_guess);
  if (opt.pa_guess_deg) g.pa_deg = wrap_pa_deg(*opt.pa_guess_deg);
  if (opt.inc_guess_deg) g.inc_deg = *opt.inc_guess_deg;
  if (opt.vsys_guess_kms) g.vsys_kms = *opt.vsys_guess_kms;
  if (opt.centre_guess || opt.pa_guess_deg || opt.inc_guess_deg)
    g.max_radius_arcsec = radius_quantile(s, g.centre, g.pa_deg, g.inc_deg, 0.98);
  if (opt.max_radius_arcsec) g.max_radius_arcsec = *opt.max_radius_arcsec;
  return g;
}

// Refusals before any fit, on the cleaned footprint. The velocity-gradient
// test stands in for the rotation test only when the user gave no geometry:
// with a PA, inclination or centre given, the fit runs and the rotation is
// tested on its rings (post_fit_problem).
std::string pre_fit_refusal(const FirstGuess& g, const KinematicOptions& opt, double eta) {
  const bool user_geometry = opt.pa_guess_deg || opt.inc_guess_deg || opt.centre_guess;
  const double snr = g.gradient_snr / std::sqrt(eta);
  if (!user_geometry && snr < opt.min_rotation_snr)
    return "no measurable rotation (the velocity gradient across the footprint is " +
           fixed_text(snr, 1) + " sigma, at least " + fixed_text(opt.min_rotation_snr, 1) + " needed)";
  if (!opt.inc_guess_deg && g.axis_ratio > std::cos(opt.min_inc_deg * std::numbers::pi / 180.0))
    return "the disc is nearly face-on (footprint axis ratio " + fixed_text(g.axis_ratio, 3) +
           ", rounder than a disc inclined by " + fixed_text(opt.min_inc_deg, 1) +
           " deg; give " + setting_ref("inc") + " to override)";
  if (opt.inc_guess_deg && *opt.inc_guess_deg < opt.min_inc_deg)
    return "the disc is nearly face-on (inclination guess " + fixed_text(*opt.inc_guess_deg, 1) +
           " deg, below " + fixed_text(opt.min_inc_deg, 1) + " deg)";
  return "";
}

// The most rings a fit may have: a map 10000 rings across is far beyond any
// velocity field; `max_radius` / ring width above it is refused before any
// ring is made (a radius of 1e9 arcsec once took 3.8 GB).
constexpr double kMaxRings = 10000;

double ring_width_for(const VelocitySamples& s, const KinematicOptions& opt, KinematicFit& fit) {
  double width = 0;
  if (opt.ring_width_arcsec) {
    width = *opt.ring_width_arcsec;
  } else if (s.beam && s.beam->fwhm_arcsec() > 0) {
    width = opt.ring_width_beams * s.beam->fwhm_arcsec();
  } else {
    width = 2.0 * fit.diagnostics.pixel_scale_arcsec;
    fit.notes.push_back("no beam in the header: rings are 2 pixels wide");
  }
  return std::max(width, fit.diagnostics.pixel_scale_arcsec);
}

GlobalFitOptions global_options(const KinematicOptions& opt, const VelocitySamples& s,
                                const FirstGuess& g, double width, double eta) {
  const double max_radius = g.max_radius_arcsec;
  GlobalFitOptions go;
  go.prior.mean = DiscGeometry{g.centre, g.pa_deg, g.inc_deg, g.vsys_kms};
  go.prior.centre_err_arcsec = opt.centre_guess ? opt.prior.centre_err_arcsec : std::nullopt;
  go.prior.pa_err_deg = opt.pa_guess_deg ? opt.prior.pa_err_deg : std::nullopt;
  go.prior.inc_err_deg = opt.inc_guess_deg ? opt.prior.inc_err_deg : std::nullopt;
  go.prior.vsys_err_kms = opt.vsys_guess_kms ? opt.prior.vsys_err_kms : std::nullopt;
  go.ring_width_arcsec = width;
  go.max_radius_arcsec = max_radius;
  go.min_radius_arcsec = s.beam ? opt.inner_exclusion_beams * s.beam->fwhm_arcsec() : 0.0;
  go.weight_power = opt.weight_power;
  go.wedge_deg = opt.wedge_deg;
  go.fit_radial = opt.fit_radial;
  go.fix_centre = opt.fix_centre;
  go.fix_pa = opt.fix_pa;
  go.fix_inc = opt.fix_inc;
  go.fix_vsys = opt.fix_vsys;
  go.loss = opt.loss;
  go.loss_scale = opt.loss_scale;
  go.correlation_factor = eta;
  go.record_problem = opt.record_problem;
  return go;
}

// Adopt a global fit: diagnostics, geometry and the node table.
void adopt_global(KinematicFit& fit, GlobalFitSummary gl_in) {
  fit.global = std::move(gl_in);
  const GlobalFitSummary& gl = fit.global;
  auto& d = fit.diagnostics;
  d.pixels_used = gl.n_used;
  d.parameters = gl.n_parameters;
  d.chi2 = gl.chi2;
  d.reduced_chi2 = gl.scaling.reduced_chi2;
  d.residual_rms_kms = gl.residual_rms_kms;
  d.converged = gl.converged;
  d.termination = gl.message;
  d.passes = gl.passes;
  d.iterations = gl.iterations;
  d.rings_used = 0;
  for (const auto& n : gl.nodes) d.rings_used += n.n_pixels > 0 ? 1 : 0;
  fit.pa_deg = gl.geometry.pa_deg;
  fit.inc_deg = gl.geometry.inc_deg;
  fit.vsys_kms = gl.geometry.vsys_kms;
  fit.pa_err_deg = std::sqrt(gl.covariance(2, 2));
  fit.inc_err_deg = std::sqrt(gl.covariance(3, 3));
  fit.vsys_err_kms = std::sqrt(gl.covariance(4, 4));
  fit.rings.clear();
  for (const auto& n : gl.nodes) fit.rings.push_back(RingRow{n, std::nullopt, std::nullopt});
}

// Scouts from several starts, then full fits of the best start and of the
// best distinct one; the better full fit is adopted and the other judged by
// solution_ambiguity.hpp.
void fit_best_solution(KinematicFit& fit, const VelocitySamples& s, const FirstGuess& g,
                       const GlobalFitOptions& go, const KinematicOptions& opt) {
  MultiStartOptions mo = opt.starts;
  mo.pa_given = mo.pa_given || opt.pa_guess_deg.has_value();
  mo.centre_given = mo.centre_given || opt.centre_guess.has_value();
  const double beam = s.beam ? s.beam->fwhm_arcsec() : 0.0;
  fit.starts = scout_starts(s, g, go, mo, beam);
  GlobalFitSummary best = fit_global_rings(s, fit.starts.best_start, go);
  SolutionAmbiguity& amb = fit.ambiguity;
  amb.threshold = opt.ambiguity_delta_chi2;
  if (fit.starts.second_start && best.converged) {
    GlobalFitSummary other = fit_global_rings(s, *fit.starts.second_start, go);
    const double eta = fit.diagnostics.correlation_factor;
    if (other.converged &&
        distinct_solutions(best.geometry, other.geometry, mo, beam > 0 ? beam : go.ring_width_arcsec)) {
      double c1 = common_chi2(best, s), c2 = common_chi2(other, s);
      if (c2 < c1) {  // the second start fits the full map better
        std::swap(best, other);
        std::swap(c1, c2);
      }
      const double delta =
          scaled_delta_chi2(c1, c2, static_cast<int>(s.size()), best.n_parameters, eta);
      amb.checked = true;
      amb.delta_chi2 = delta;
      amb.second = other.geometry;
      amb.centre_separation_arcsec = std::hypot(other.geometry.centre.east - best.geometry.centre.east,
                                                other.geometry.centre.north - best.geometry.centre.north);
      amb.ambiguous = delta < amb.threshold;
      if (amb.ambiguous)
        amb.note = "kinematic solution ambiguous: a second solution (PA " + fixed_text(other.geometry.pa_deg, 1) +
                   " deg, inclination " + fixed_text(other.geometry.inc_deg, 1) + " deg, centre " +
                   fixed_text(amb.centre_separation_arcsec, 2) + " arcsec away) fits almost as well "
                   "(scaled chi2 difference " + fixed_text(delta, 2) + " < " + fixed_text(amb.threshold, 1) +
                   "); the centre covariance includes the separation";
    }
  }
  adopt_global(fit, std::move(best));
}

// The velocity scatter beyond the error map (velocity_scatter.hpp): measured
// on the adopted fit's residuals, added to every pixel's error, and the
// global fit repeated from the adopted solution with those errors. Returns
// the samples every later step uses (the inflated ones when the refit was
// adopted).
VelocitySamples refit_with_scatter(KinematicFit& fit, const VelocitySamples& s,
                                   const GlobalFitOptions& go, const KinematicOptions& opt) {
  if (!opt.scatter_term) {
    fit.scatter.reason = "turned off";
    return s;
  }
  fit.scatter = measure_velocity_scatter(s, fit.global, go.weight_power);
  if (!(fit.scatter.scatter_kms > 0)) return s;
  VelocitySamples sw = with_scatter(s, fit.scatter.scatter_kms);
  GlobalFitOptions ro = go;
  ro.hold_inc_first_pass = false;
  for (const auto& node : fit.global.nodes) {
    ro.start_vrot.push_back(node.vrot_kms);
    ro.start_vrad.push_back(node.vrad_kms);
  }
  GlobalFitSummary next = fit_global_rings(sw, fit.global.geometry, ro);
  if (!next.converged || !next.covariance_ok) {
    fit.notes.push_back("velocity scatter of " + fixed_text(fit.scatter.scatter_kms, 2) +
                        " km/s beyond the error map not used: the refit with it " +
                        (next.converged ? "has a singular covariance" : "did not converge") +
                        " (" + next.message + ")");
    fit.scatter.scatter_kms = 0.0;
    fit.scatter.reason = "the refit with the scatter failed";
    return s;
  }
  fit.notes.push_back("velocity scatter beyond the error map: " + fixed_text(fit.scatter.scatter_kms, 2) +
                      " km/s (reduced chi2 " + fixed_text(fit.scatter.reduced_chi2_before, 2) +
                      " with the stated errors, median error " +
                      fixed_text(fit.scatter.median_sigma_kms, 2) +
                      " km/s), added to every pixel's error in quadrature");
  adopt_global(fit, std::move(next));
  return sw;
}

// Why a converged fit cannot be used, with the status it gets; empty when
// it can.
std::pair<std::string, std::string> post_fit_problem(const KinematicFit& fit,
                                                     const GlobalFitOptions& go,
                                                     const KinematicOptions& opt) {
  const GlobalFitSummary& gl = fit.global;
  const auto& d = fit.diagnostics;
  if (d.pixels_used < opt.min_pixels ||
      d.pixels_used < opt.min_pixels_per_parameter * std::max(1, d.parameters))
    return {"refused", "too few pixels in the rings (" + std::to_string(d.pixels_used) + " for " +
                           std::to_string(d.parameters) + " parameters)"};
  if (!gl.converged) return {"failed", "the tilted-ring fit did not converge: " + gl.message};
  if (gl.geometry.inc_deg < opt.min_inc_deg)
    return {"refused", "the disc is nearly face-on (fitted inclination " +
                           fixed_text(gl.geometry.inc_deg, 1) + " deg, below " + fixed_text(opt.min_inc_deg, 1) +
                           " deg)"};
  if (auto p = covariance_problem(gl, go); !p.empty())
    return {"failed", "the tilted-ring fit is degenerate: " + p};
  if (auto p = limit_problem(gl, go, fit.guess.centre); !p.empty())
    return {"failed", "the tilted-ring fit is degenerate: " + p};
  double best_snr = 0;
  for (const auto& n : gl.nodes)
    if (n.n_pixels > 0 && n.vrot_err_kms > 0 && std::isfinite(n.vrot_err_kms))
      best_snr = std::max(best_snr, std::abs(n.vrot_kms) / n.vrot_err_kms);
  if (best_snr < opt.min_rotation_snr)
    return {"refused", "no measurable rotation (largest ring rotation is " + fixed_text(best_snr, 1) +
                           " sigma, at least " + fixed_text(opt.min_rotation_snr, 1) + " needed)"};
  return {"", ""};
}

// Largest move of a geometry parameter between two fits, in units of the
// newer fit's 1-sigma errors.
double geometry_change_sigma(const GlobalFitSummary& next, const GlobalFitSummary& current) {
  const double moved[5] = {next.geometry.centre.east - current.geometry.centre.east,
                           next.geometry.centre.north - current.geometry.centre.north,
                           angle_diff_deg(next.geometry.pa_deg, current.geometry.pa_deg),
                           next.geometry.inc_deg - current.geometry.inc_deg,
                           next.geometry.vsys_kms - current.geometry.vsys_kms};
  double change = 0.0;
  for (int q = 0; q < 5; ++q) {
    const double sd = std::sqrt(next.covariance(q, q));
    if (sd > 0 && std::isfinite(sd)) change = std::max(change, std::abs(moved[q]) / sd);
  }
  return change;
}

// Beam-smearing correction (beam_smearing.hpp): refit to v_obs - Delta,
// Delta = what the beam does to the current model, until the geometry
// settles. The adopted covariance is the formal one of the last refit, scaled as
// every global fit is (covariance_scaling.hpp). Returns the corrected
// samples when the correction was applied.
std::optional<VelocitySamples> correct_smearing(KinematicFit& fit, const VelocitySamples& s,
                                                const GlobalFitOptions& go,
                                                const KinematicOptions& opt,
                                                const SmearingGrid& smearing) {
  BeamSmearingSummary& bs = fit.beam_smearing;
  // Each refit starts from the current geometry and node speeds. Without a
  // robust loss it is a single pass; a robust loss keeps its passes.
  GlobalFitOptions ro = go;
  ro.hold_inc_first_pass = false;
  if (opt.loss == RobustLoss::none) ro.max_passes = 1;
  VelocitySamples corrected = s;
  GlobalFitSummary current = fit.global;
  std::vector<double> delta;
  const int refits = std::max(1, opt.smearing_max_refits);
  for (int it = 0; it < refits; ++it) {
    delta = smearing_correction(smearing, current);
    for (std::size_t i = 0; i < s.size(); ++i) corrected.velocity[i] = s.velocity[i] - delta[i];
    ro.start_vrot.clear();
    ro.start_vrad.clear();
    for (const auto& node : current.nodes) {
      ro.start_vrot.push_back(node.vrot_kms);
      ro.start_vrad.push_back(node.vrad_kms);
    }
    GlobalFitSummary next = fit_global_rings(corrected, current.geometry, ro);
    ++bs.refits;
    // A refit that ran out of iterations is carried on by the next one, which
    // starts where it stopped; only the refit that ends the correction must
    // have converged. (Dropping the whole correction there made the outcome
    // hang on whether a slow, ill-conditioned refit happened to finish
    // within the cap: round-off could decide it.)
    if (next.stopped_at_iteration_limit && it + 1 < refits) {
      current = std::move(next);
      continue;
    }
    if (!next.converged || !next.covariance_ok) {
      bs.reason = "the refit with the correction " +
                  std::string(next.converged ? "has a singular covariance" : "did not converge") +
                  " (" + next.message + "): the uncorrected fit is kept";
      fit.notes.push_back("beam-smearing correction not applied: " + bs.reason);
      return std::nullopt;
    }
    bs.last_change_sigma = geometry_change_sigma(next, current);
    current = std::move(next);
    if (bs.last_change_sigma < opt.smearing_tolerance_sigma) {
      bs.converged = true;
      break;
    }
  }
  adopt_global(fit, std::move(current));
  bs.applied = true;
  double ss = 0.0;
  for (double x : delta) {
    bs.max_abs_correction_kms = std::max(bs.max_abs_correction_kms, std::abs(x));
    ss += x * x;
  }
  bs.rms_correction_kms = delta.empty() ? 0.0 : std::sqrt(ss / static_cast<double>(delta.size()));
  bs.x = s.x;
  bs.y = s.y;
  bs.correction = std::move(delta);
  if (!bs.converged)
    fit.notes.push_back("beam-smearing correction: the geometry still moved by " +
                        fixed_text(bs.last_change_sigma, 2) + " sigma in the last of " +
                        std::to_string(bs.refits) + " refits");
  return corrected;
}

// Ring-by-ring fits and the harmonic centre, then the adopted centre (with
// the ambiguity spread when the solution is ambiguous).
void finish_centres(KinematicFit& fit, const VelocitySamples& s, const VelocitySamples& fitted,
                    const CelestialWcs& wcs, const KinematicOptions& opt, double width,
                    double max_radius) {
  const GlobalFitSummary& gl = fit.global;
  Eigen::Matrix2d ring_cov = gl.centre_covariance();
  if (fit.ambiguity.ambiguous)
    ring_cov = add_ambiguity_spread(ring_cov, gl.geometry.centre, fit.ambiguity.second.centre);
  fit.ring_centre = make_centre(CentreMethod::kinematic_rings, gl.geometry.centre, ring_cov, fit.frame, wcs);
  if (opt.ring_by_ring) {
    RingFitOptions ro;
    ro.free_vsys = opt.ring_free_vsys;
    ro.fit_radial = opt.fit_radial;
    ro.weight_power = opt.weight_power;
    ro.wedge_deg = opt.wedge_deg;
    ro.correlation_factor = fit.diagnostics.correlation_factor;
    auto rf = fit_rings_individually(fitted, gl, width, ro);
    for (std::size_t k = 0; k < rf.size() && k < fit.rings.size(); ++k) fit.rings[k].free = rf[k];
  }
  if (opt.method != Method::rings) {
    HarmonicCentreOptions ho;
    ho.ring_width_arcsec = width;
    ho.max_radius_arcsec = max_radius;
    ho.min_radius_arcsec =
        s.beam ? opt.harmonic_min_radius_beams * s.beam->fwhm_arcsec() : 2.0 * width;
    ho.expansion.correlation_factor = fit.diagnostics.correlation_factor;
    HarmonicCentreSummary hc = fit_harmonic_centre(s, gl.geometry, ho);
    if (hc.ok) {
      fit.harmonic_status = "ok";
      Eigen::Matrix2d hcov = hc.covariance;
      if (fit.ambiguity.ambiguous)
        hcov = add_ambiguity_spread(hcov, gl.geometry.centre, fit.ambiguity.second.centre);
      fit.harmonic_centre = make_centre(CentreMethod::kinematic_harmonic, hc.centre, hcov, fit.frame, wcs);
    } else {
      fit.harmonic_status = hc.reason;
    }
    for (std::size_t k = 0; k < hc.rings.size() && k < fit.rings.size(); ++k)
      fit.rings[k].harmonic = hc.rings[k];
  } else {
    fit.harmonic_status = "not run";
  }
}

}  // namespace

KinematicFit fit_kinematics_samples(const VelocitySamples& s, const OffsetFrame& frame,
                                    const CelestialWcs& wcs, const KinematicOptions& opt,
                                    const SmearingGrid* smearing) {
  KinematicFit fit;
  start_fit(fit, s, frame, opt, smearing);
  auto& d = fit.diagnostics;
  if (d.pixels_input < opt.min_pixels) {
    refuse(fit, "too few pixels (" + std::to_string(d.pixels_input) +
                    " usable velocity pixels, at least " + std::to_string(opt.min_pixels) +
                    " needed)");
    return fit;
  }
  const FirstGuess g = guess_with_overrides(s, frame, opt);
  fit.guess = g;
  if (auto why = pre_fit_refusal(g, opt, d.correlation_factor); !why.empty()) {
    refuse(fit, why);
    return fit;
  }
  const double width = ring_width_for(s, opt, fit);
  if (opt.max_radius_arcsec)  // before any ring is made (core/work_limit.hpp)
    check_work_limit("max_radius", setting_value_text(*opt.max_radius_arcsec), "the tilted-ring model",
                     *opt.max_radius_arcsec / width, kMaxRings, "rings",
                     "outer radius " + setting_value_text(*opt.max_radius_arcsec) + " arcsec / ring width " +
                         significant_text(width, 4) + " arcsec");
  if (!(g.max_radius_arcsec >= 2 * width)) {
    refuse(fit, "the footprint is too small for two rings (outer radius " +
                    fixed_text(g.max_radius_arcsec, 2) + " arcsec, ring width " + fixed_text(width, 2) +
                    " arcsec)");
    return fit;
  }
  d.ring_width_arcsec = width;
  d.max_radius_arcsec = g.max_radius_arcsec;
  const GlobalFitOptions go = global_options(opt, s, g, width, d.correlation_factor);
  fit_best_solution(fit, s, g, go, opt);
  double mean_v = 0;
  for (const auto& n : fit.global.nodes) mean_v += n.vrot_kms * n.n_pixels;
  if (auto [status, why] = post_fit_problem(fit, go, opt); !status.empty()) {
    if (status == "refused") refuse(fit, why);
    else { fit.status = status; fit.reason = why; }
    return fit;
  }
  if (mean_v < 0)
    fit.notes.push_back("the fitted rotation is negative: the receding side is at PA + 180 deg");
  if (fit.ambiguity.ambiguous) fit.notes.push_back(fit.ambiguity.note);

  fit.beam_smearing.uncorrected = fit.global.geometry;
  std::optional<VelocitySamples> corrected;
  if (smearing && smearing->usable() && opt.correct_beam_smearing)
    corrected = correct_smearing(fit, s, go, opt, *smearing);
  if (fit.beam_smearing.applied) {
    if (auto p = smearing_problem(fit.global, fit.beam_smearing.max_abs_correction_kms,
                                  opt.max_smearing_fraction); !p.empty()) {
      fit.status = "failed";
      fit.reason = "the tilted-ring fit is degenerate: " + p;
      return fit;
    }
    if (auto p = covariance_problem(fit.global, go); !p.empty()) {
      fit.status = "failed";
      fit.reason = "the tilted-ring fit with the beam-smearing correction is degenerate: " + p;
      return fit;
    }
  }
  // The scatter beyond the error map, measured on the residuals of the
  // (smearing-corrected) fit; with it every later step uses inflated errors.
  const VelocitySamples fitted = refit_with_scatter(fit, corrected ? *corrected : s, go, opt);
  if (auto [status, why] = post_fit_problem(fit, go, opt); !status.empty()) {
    if (status == "refused") refuse(fit, why);
    else { fit.status = status; fit.reason = why; }
    return fit;
  }
  const VelocitySamples observed = with_scatter(s, fit.scatter.scatter_kms);
  finish_centres(fit, observed, fitted, wcs, opt, width, g.max_radius_arcsec);
  if (opt.residual_covariance)
    apply_centre_error_terms(fit, fitted, go, corrected ? smearing : nullptr, opt.expected_residual_fraction);
  if (opt.method == Method::harmonic) {
    if (!fit.harmonic_centre) {
      refuse(fit, "the harmonic centre failed: " + fit.harmonic_status);
      return fit;
    }
    fit.centre = fit.harmonic_centre;
  } else {
    fit.centre = fit.ring_centre;
  }
  fit.status = "ok";
  return fit;
}

nlohmann::json to_json(const KinematicFit& fit) {
  nlohmann::json j;
  j["method"] = method_name(fit.method);
  j["status"] = fit.status;
  j["reason"] = fit.reason;
  j["source"] = fit.source;
  j["reference"] = {{"ra_deg", fit.reference.ra_deg}, {"dec_deg", fit.reference.dec_deg}};
  j["centre"] = fit.centre ? centre_json(*fit.centre, fit.frame) : nlohmann::json();
  if (fit.centre) j["centre"]["from"] = fit.method == Method::harmonic ? "harmonic" : "rings";
  const bool ok = fit.status == "ok";
  j["pa_deg"] = ok ? nlohmann::json(fit.pa_deg) : nlohmann::json();
  j["pa_err_deg"] = ok ? num_or_null(fit.pa_err_deg) : nlohmann::json();
  j["inc_deg"] = ok ? nlohmann::json(fit.inc_deg) : nlohmann::json();
  j["inc_err_deg"] = ok ? num_or_null(fit.inc_err_deg) : nlohmann::json();
  j["vsys_kms"] = ok ? nlohmann::json(fit.vsys_kms) : nlohmann::json();
  j["vsys_err_kms"] = ok ? num_or_null(fit.vsys_err_kms) : nlohmann::json();
  if (fit.method != Method::rings) {
    j["harmonic_centre"] =
        fit.harmonic_centre ? centre_json(*fit.harmonic_centre, fit.frame) : nlohmann::json();
    j["harmonic_status"] = fit.harmonic_status;
  }
  if (fit.method == Method::harmonic && fit.ring_centre) j["ring_centre"] = centre_json(*fit.ring_centre, fit.frame);
  if (ok && fit.ring_centre) j["centre_error_terms"] = to_json(fit.centre_errors);
  nlohmann::json rings = nlohmann::json::array();
  for (const auto& r : fit.rings) {
    nlohmann::json jr;
    jr["radius_arcsec"] = r.node.radius_arcsec;
    jr["n_pixels"] = r.node.n_pixels;
    jr["vrot_kms"] = r.node.vrot_kms;
    jr["vrot_err_kms"] = num_or_null(r.node.vrot_err_kms);
    if (fit.global.problem.radial || r.node.vrad_kms != 0.0) {
      jr["vrad_kms"] = r.node.vrad_kms;
      jr["vrad_err_kms"] = num_or_null(r.node.vrad_err_kms);
    }
    if (r.free) {
      const RingFit& f = *r.free;
      nlohmann::json jf;
      jf["ok"] = f.ok;
      if (!f.ok) jf["reason"] = f.reason;
      jf["n_pixels"] = f.n_pixels;
      if (f.ok) {
        const WorldCoord w = fit.frame.to_world(f.geometry.centre);
        jf["centre_east_arcsec"] = f.geometry.centre.east;
        jf["centre_north_arcsec"] = f.geometry.centre.north;
        jf["centre_east_err_arcsec"] = f.centre_east_err;
        jf["centre_north_err_arcsec"] = f.centre_north_err;
        jf["centre_ra_deg"] = w.ra_deg;
        jf["centre_dec_deg"] = w.dec_deg;
        jf["pa_deg"] = f.geometry.pa_deg;
        jf["pa_err_deg"] = f.pa_err_deg;
        jf["inc_deg"] = f.geometry.inc_deg;
        jf["inc_err_deg"] = f.inc_err_deg;
        jf["vsys_kms"] = f.geometry.vsys_kms;
        jf["vrot_kms"] = f.vrot_kms;
        jf["vrot_err_kms"] = f.vrot_err_kms;
        jf["reduced_chi2"] = f.reduced_chi2;
      }
      jr["ring_fit"] = jf;
    }
    if (r.harmonic) {
      const HarmonicRing& h = *r.harmonic;
      nlohmann::json jh;
      jh["ok"] = h.ok;
      if (!h.ok) jh["reason"] = h.reason;
      jh["n_pixels"] = h.n_pixels;
      if (h.ok) {
        static const char* names[7] = {"c0", "c1", "s1", "c2", "s2", "c3", "s3"};
        for (int i = 0; i < 7; ++i) {
          jh[std::string(names[i]) + "_kms"] = h.coeff[i];
          jh[std::string(names[i]) + "_err_kms"] = h.err(i);
        }
      }
      jr["harmonics"] = jh;
    }
    rings.push_back(jr);
  }
  j["rings"] = rings;
  const auto& d = fit.diagnostics;
  j["diagnostics"] = {{"pixels_input", d.pixels_input},
                      {"pixels_used", d.pixels_used},
                      {"rings_used", d.rings_used},
                      {"parameters", d.parameters},
                      {"chi2", d.chi2},
                      {"reduced_chi2", num_or_null(d.reduced_chi2)},
                      {"residual_rms_kms", d.residual_rms_kms},
                      {"converged", d.converged},
                      {"termination", d.termination},
                      {"passes", d.passes},
                      {"iterations", d.iterations},
                      {"pixel_scale_arcsec", d.pixel_scale_arcsec},
                      {"pixels_per_beam", d.pixels_per_beam},
                      {"covariance_correlation_factor", d.correlation_factor},
                      {"ring_width_arcsec", d.ring_width_arcsec},
                      {"max_radius_arcsec", d.max_radius_arcsec},
                      {"error_map", d.has_error_map}};
  {
    const BeamSmearingSummary& b = fit.beam_smearing;
    nlohmann::json jb = {{"requested", b.requested}, {"applied", b.applied}};
    if (!b.applied) jb["reason"] = b.reason;
    if (!b.weighting.empty()) jb["weighting"] = b.weighting;
    if (b.beam_fwhm_arcsec > 0) jb["beam_fwhm_arcsec"] = b.beam_fwhm_arcsec;
    if (b.refits > 0) {
      jb["refits"] = b.refits;
      jb["converged"] = b.converged;
      jb["last_change_sigma"] = b.last_change_sigma;
    }
    if (b.applied) {
      jb["max_abs_correction_kms"] = b.max_abs_correction_kms;
      jb["rms_correction_kms"] = b.rms_correction_kms;
      jb["uncorrected"] = {{"centre_east_arcsec", b.uncorrected.centre.east},
                           {"centre_north_arcsec", b.uncorrected.centre.north},
                           {"pa_deg", b.uncorrected.pa_deg},
                           {"inc_deg", b.uncorrected.inc_deg},
                           {"vsys_kms", b.uncorrected.vsys_kms}};
    }
    j["beam_smearing"] = jb;
  }
  j["footprint"] = footprint_json(fit.footprint);
  j["starts"] = starts_json(fit.starts);
  j["ambiguity"] = ambiguity_json(fit.ambiguity);
  j["velocity_scatter"] = {{"estimated", fit.scatter.estimated},
                           {"scatter_kms", fit.scatter.scatter_kms},
                           {"reduced_chi2_stated_errors", fit.scatter.reduced_chi2_before},
                           {"median_stated_error_kms", fit.scatter.median_sigma_kms},
                           {"pixels", fit.scatter.pixels}};
  if (!fit.scatter.reason.empty()) j["velocity_scatter"]["reason"] = fit.scatter.reason;
  const WorldCoord gw = fit.frame.to_world(fit.guess.centre);
  j["first_guess"] = {{"ra_deg", gw.ra_deg},
                      {"dec_deg", gw.dec_deg},
                      {"east_arcsec", fit.guess.centre.east},
                      {"north_arcsec", fit.guess.centre.north},
                      {"pa_deg", fit.guess.pa_deg},
                      {"inc_deg", fit.guess.inc_deg},
                      {"vsys_kms", fit.guess.vsys_kms},
                      {"max_radius_arcsec", fit.guess.max_radius_arcsec}};
  j["units"] = {{"angles", "deg, PA north through east of the receding half"},
                {"offsets", "arcsec (east, north) from reference"},
                {"velocities", "km/s"},
                {"pixels", "FITS, first pixel centre = 1"}};
  j["notes"] = fit.notes;
  return j;
}

Image model_velocity_map(const KinematicFit& fit, const Image& velocity) {
  Image m = velocity.like(kNaN);
  m.unit = "km/s";
  if (fit.global.nodes.empty()) return m;
  PixelOffsets offsets(velocity, fit.reference);
  const auto& g = fit.global.geometry;
  const Angle pa = g.pa_deg * degrees, inc = g.inc_deg * degrees;
  const double rmax = fit.global.nodes.back().radius_arcsec + 0.5 * fit.diagnostics.ring_width_arcsec;
  for (int y = 0; y < velocity.ny; ++y)
    for (int x = 0; x < velocity.nx; ++x) {
      const SkyOffset o = offsets.at(x, y);
      double X, Y;
      disc_plane(o.east, o.north, g.centre.east, g.centre.north, pa.cos(), pa.sin(), inc.cos(), &X,
                 &Y);
      if (std::hypot(X, Y) > rmax) continue;
      m.at(x, y) = global_model_velocity(fit.global, o.east, o.north);
    }
  return m;
}

Image smeared_model_velocity_map(const KinematicFit& fit, const Image& model) {
  Image m = model;
  const BeamSmearingSummary& b = fit.beam_smearing;
  if (b.applied)
    for (std::size_t i = 0; i < b.correction.size(); ++i)
      if (m.contains(b.x[i], b.y[i])) m.at(b.x[i], b.y[i]) += b.correction[i];
  return m;
}

Image residual_velocity_map(const KinematicFit& fit, const Image& velocity, const Image& model) {
  Image r = velocity.like(kNaN);
  r.unit = "km/s";
  std::string why;
  const double f = velocity_unit_factor(velocity, &why);
  // Observed minus the model as the beam sees it (model + Delta where the
  // beam-smearing correction was applied).
  const Image seen = smeared_model_velocity_map(fit, model);
  for (std::size_t i = 0; i < velocity.size(); ++i)
    r.data[i] = velocity.data[i] * f - seen.data[i];  // NaN propagates
  return r;
}

}  // namespace fulcrum::kinematics
