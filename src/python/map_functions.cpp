// kinematics, photometry, split and scan for the Python module: each mirrors
// its subcommand (src/cli/<name>.cpp) with maps in memory or as paths and
// the result returned instead of written. Settings are checked by the
// library's checks (core/settings_check.hpp, pipeline/input_settings.hpp,
// kinematics/kinematic_settings.hpp).
#include <pybind11/stl.h>

#include "bindings.hpp"
#include "convert.hpp"
#include "fulcrum/core/work_limit.hpp"
#include "fulcrum/core/error.hpp"
#include "fulcrum/core/settings_check.hpp"
#include "fulcrum/kinematics/kinematic_fit.hpp"
#include "fulcrum/kinematics/kinematic_settings.hpp"
#include "fulcrum/photometry/photometric_centres.hpp"
#include "fulcrum/pipeline/input_settings.hpp"
#include "fulcrum/report/ring_table.hpp"
#include "fulcrum/robustness/scan.hpp"
#include "fulcrum/split/centre_on_map.hpp"
#include "fulcrum/split/half_split.hpp"
#include "kinematic_keywords.hpp"

namespace fulcrum::python {

namespace {

// A sky position (RA, Dec) in degrees from a pair of numbers.
WorldCoord centre_argument(const py::handle& centre) {
  if (!py::isinstance<py::sequence>(centre) || py::isinstance<py::str>(centre) || py::len(centre) != 2)
    throw SettingError("centre", std::string(py::repr(centre)), "a pair (RA, Dec) in degrees");
  auto pair = py::reinterpret_borrow<py::sequence>(centre);
  const double ra = check_finite_in_range("centre RA", number_argument(pair[0], "centre RA"), -360.0, 360.0, "deg");
  const double dec = check_finite_in_range("centre Dec", number_argument(pair[1], "centre Dec"), -90.0, 90.0, "deg");
  return {ra, dec};
}

// The analysis aperture as `fulcrum split` and `scan` take it: none when no
// radius is given (every finite pixel).
std::optional<split::ApertureSpec> aperture_argument(const py::handle& radius, double pa_deg, double axis_ratio) {
  if (radius.is_none()) return std::nullopt;
  return split::ApertureSpec{number_argument(radius, "aperture_radius_arcsec"), pa_deg, axis_ratio, std::nullopt};
}

py::dict kinematics(const py::object& velocity, const py::object& velocity_error, const py::object& intensity,
                    const std::string& method, const py::object& progress, const py::kwargs& settings) {
  kinematics::KinematicOptions options;
  options.method = kinematics::parse_method(method);
  const kinematics::KinematicSettings given = kinematic_settings_from(settings);
  kinematics::apply_kinematic_settings(given, options, quoted_setting);
  const Image vel = map_from_python(velocity, "velocity");
  const std::optional<Image> err = optional_map(velocity_error, "velocity_error");
  if (err && (err->nx != vel.nx || err->ny != vel.ny))
    throw InputError(err->path, "the error map is " + std::to_string(err->nx) + "x" + std::to_string(err->ny) +
                                    " pixels but the velocity map is " + std::to_string(vel.nx) + "x" +
                                    std::to_string(vel.ny));
  const std::optional<Image> inten = optional_map(intensity, "intensity");
  struct Out {
    kinematics::KinematicFit fit;
    std::optional<Image> model, residual;
  };
  Out out = run_released(progress, [&] {
    Out o;
    o.fit = kinematics::fit_kinematics(vel, err ? &*err : nullptr, options, inten ? &*inten : nullptr);
    if (o.fit.status == "ok") {
      o.model = kinematics::model_velocity_map(o.fit, vel);
      o.residual = kinematics::residual_velocity_map(o.fit, vel, *o.model);
    }
    return o;
  });
  if (out.fit.status != "ok") throw InputError(vel.path, out.fit.reason);
  py::dict result = to_python(kinematics::to_json(out.fit));
  result["ring_table"] = table_to_python(report::ring_table(out.fit));
  result["model"] = image_array(std::move(*out.model));
  result["residual"] = image_array(std::move(*out.residual));
  return result;
}

py::dict photometry(const py::object& image, const py::object& mask, const py::object& psf_fwhm_arcsec,
                    const py::object& bootstrap, const py::object& seed, const py::object& isophote_level,
                    const py::object& progress) {
  photometry::PhotometryOptions o;
  o.bootstrap.draws =
      static_cast<int>(check_count_limit("bootstrap", integer_argument(bootstrap, "bootstrap"), 3, 1e6, "the centre bootstrap", "draws"));
  o.bootstrap.seed = pipeline::setting::seed(integer_argument(seed, "seed"));
  if (!psf_fwhm_arcsec.is_none())
    o.psf_fwhm_arcsec = pipeline::setting::psf_fwhm_arcsec(number_argument(psf_fwhm_arcsec, "psf_fwhm_arcsec"));
  if (!isophote_level.is_none())
    o.isophote.level = check_positive("isophote_level", number_argument(isophote_level, "isophote_level"));
  const Image optical = map_from_python(image, "image");
  const std::optional<Image> masked = optional_map(mask, "mask");
  const photometry::PhotometrySummary s = run_released(
      progress, [&] { return photometry::measure_photometric_centres(optical, masked ? &*masked : nullptr, o); });
  return to_python(photometry::to_json(s));
}

// The split's settings, as `fulcrum split` and `scan` check them.
split::SplitOptions split_options(const py::handle& centre, const py::handle& tail_pa_deg, const py::handle& radius,
                                  double aperture_pa_deg, double aperture_axis_ratio) {
  split::SplitOptions so;
  so.centre = centre_argument(centre);
  so.tail_pa_deg = pipeline::setting::tail_pa_deg(number_argument(tail_pa_deg, "tail_pa_deg"));
  so.aperture = aperture_argument(radius, aperture_pa_deg, aperture_axis_ratio);
  return so;
}

py::dict split_map(const py::object& intensity, const py::object& centre, const py::object& tail_pa_deg,
                   const py::object& intensity_error, const py::object& rms, const py::object& aperture_radius_arcsec,
                   double aperture_pa_deg, double aperture_axis_ratio) {
  split::SplitOptions so = split_options(centre, tail_pa_deg, aperture_radius_arcsec, aperture_pa_deg, aperture_axis_ratio);
  if (!rms.is_none()) {
    if (!intensity_error.is_none())
      throw InputError("", "give either intensity_error (a map) or rms (one number), not both");
    so.rms = pipeline::setting::rms(number_argument(rms, "rms"));
  }
  const Image map = map_from_python(intensity, "intensity");
  if (!split::centre_on_map(map, so.centre))
    throw InputError("", "the centre " + std::string(py::repr(centre)) + " is outside the map " + map.path);
  const std::optional<Image> err = optional_map(intensity_error, "intensity_error");
  so.error_map = err ? &*err : nullptr;
  const split::SplitSummary s = run_released(py::none(), [&] { return split::split_halves(map, so); });
  py::dict result = to_python(split::to_json(s));
  result["intensity"] = map.path;
  return result;
}

py::dict scan_map(const py::object& intensity, const py::object& centre, const py::object& tail_pa_deg,
                  double half_width_arcsec, double step_arcsec, double angle_half_width_deg, double angle_step_deg,
                  const py::object& aperture_radius_arcsec, double aperture_pa_deg, double aperture_axis_ratio,
                  const py::object& progress) {
  const split::SplitOptions so =
      split_options(centre, tail_pa_deg, aperture_radius_arcsec, aperture_pa_deg, aperture_axis_ratio);
  const Image map = map_from_python(intensity, "intensity");
  robustness::ScanOptions o;
  o.tail_pa_deg = so.tail_pa_deg;
  o.half_width_arcsec = half_width_arcsec;
  o.step_arcsec = step_arcsec;
  o.angle_half_width_deg = angle_half_width_deg;
  o.angle_step_deg = angle_step_deg;
  robustness::ScanSummary s = run_released(progress, [&] {
    const split::SplitProblem problem = split::prepare_split(map, so);
    return robustness::scan(problem, o);
  });
  py::dict result = to_python(robustness::to_json(s));
  result["intensity"] = map.path;
  result["east_arcsec"] = owned_array(std::vector<double>(s.east), {static_cast<py::ssize_t>(s.east.size())});
  result["north_arcsec"] = owned_array(std::vector<double>(s.north), {static_cast<py::ssize_t>(s.north.size())});
  result["tail_pa_deg"] = owned_array(std::vector<double>(s.angles), {static_cast<py::ssize_t>(s.angles.size())});
  result["asymmetry"] = owned_array(std::move(s.asymmetry), {s.n_angle, s.n_north, s.n_east});
  return result;
}

}  // namespace

void bind_map_functions(py::module_& m) {
  m.def("kinematics", &kinematics, py::arg("velocity"), py::kw_only(), py::arg("velocity_error") = py::none(),
        py::arg("intensity") = py::none(), py::arg("method") = "both", py::arg("progress") = py::none(),
        R"(The dynamical centre, PA, inclination and systemic velocity of a disc from its velocity map
(tilted-ring and harmonic fits), as `fulcrum kinematics`.

velocity: the velocity map (km/s or m/s), a FITS path or (array, header).
velocity_error: its 1-sigma error map on the same grid, or None.
intensity: a line-intensity (moment-0) map weighting the beam-smearing correction, or None.
method: "rings", "harmonic" or "both".
Further keyword arguments are the kinematic settings of a sample manifest's `kinematics`
table (pa, pa_err, inc, inc_err, vsys, vsys_err, centre_ra, centre_dec, centre_err, fix,
max_radius, noise_correlation, pa_starts; smearing_correction, footprint_cleaning,
scatter_term as True/False).

Returns a dict: the JSON block of docs/kinematics.md (centre with ra_deg, dec_deg, x_pix,
y_pix [FITS, 1-based] and cov_arcsec2 [(east, north) arcsec^2]; pa_deg [receding half, north
through east], inc_deg, vsys_kms, ...), plus ring_table (astropy Table), model and residual
(velocity maps in km/s, arrays of shape (ny, nx)). A fit the data cannot support raises
InputError with the reason.)");
  m.def("photometry", &photometry, py::arg("image"), py::kw_only(), py::arg("mask") = py::none(),
        py::arg("psf_fwhm_arcsec") = py::none(), py::arg("bootstrap") = 100, py::arg("seed") = 1,
        py::arg("isophote_level") = py::none(), py::arg("progress") = py::none(),
        R"(Photometric centres of a galaxy on an optical image (peak, centroid, Sersic profile fit,
isophote, symmetry), each with its covariance, as `fulcrum photometry`.

image: the optical image, a FITS path or (array, header) with a celestial WCS.
mask: a mask on the image's grid (non-zero or NaN: left out), or None.
psf_fwhm_arcsec: the PSF FWHM in arcsec; default from the header or the image's stars.
bootstrap: noise realisations for the uncertainties (3 .. 1e6); seed: their seed.
isophote_level: isophote level above the sky in image units; default at two half-light radii.

Returns a dict (the JSON of `fulcrum photometry`): centres with ra_deg, dec_deg and
cov_arcsec2 on (east, north) in arcsec^2, the PSF, the spread of the estimates.)");
  m.def("split", &split_map, py::arg("intensity"), py::kw_only(), py::arg("centre"), py::arg("tail_pa_deg"),
        py::arg("intensity_error") = py::none(), py::arg("rms") = py::none(),
        py::arg("aperture_radius_arcsec") = py::none(), py::arg("aperture_pa_deg") = 0.0,
        py::arg("aperture_axis_ratio") = 1.0,
        R"(Leading and trailing line flux about one centre, split perpendicular to the tail PA with exact
pixel fractions, as `fulcrum split`. A = (L - T)/(L + T), positive = leading-side excess.

intensity: the integrated-intensity map, a FITS path or (array, header).
centre: (RA, Dec) in degrees. tail_pa_deg: the tail direction, north through east.
intensity_error: a 1-sigma error map on the same grid, or rms: one 1-sigma for every pixel.
aperture_radius_arcsec, aperture_pa_deg, aperture_axis_ratio: an elliptical analysis aperture
about the centre (default: every finite pixel).

Returns a dict: leading_flux, trailing_flux and their errors (flux_unit), asymmetry,
asymmetry_err, ratio, n_pixels, ...)");
  m.def("scan", &scan_map, py::arg("intensity"), py::kw_only(), py::arg("centre"), py::arg("tail_pa_deg"),
        py::arg("half_width_arcsec"), py::arg("step_arcsec"), py::arg("angle_half_width_deg") = 0.0,
        py::arg("angle_step_deg") = 1.0, py::arg("aperture_radius_arcsec") = py::none(),
        py::arg("aperture_pa_deg") = 0.0, py::arg("aperture_axis_ratio") = 1.0, py::arg("progress") = py::none(),
        R"(The asymmetry A over a grid of centre offsets x split angles, as `fulcrum scan`.

The grid: east_k = (k - (n-1)/2) step_arcsec about the centre, the same for north, up to
half_width_arcsec; tail PAs tail_pa_deg + (m - (na-1)/2) angle_step_deg up to angle_half_width_deg.

Returns a dict: asymmetry, an array of shape (n_angle, n_north, n_east) (A at east offset
east_arcsec[k], north offset north_arcsec[j], tail PA tail_pa_deg[m]: asymmetry[m, j, k]);
the axes east_arcsec, north_arcsec (arcsec about the centre) and tail_pa_deg; the summary of
`fulcrum scan --json` (fraction positive, the zero line per angle).)");
}

}  // namespace fulcrum::python
