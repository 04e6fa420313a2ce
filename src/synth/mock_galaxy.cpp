// Mock galaxies: the model (see mock_galaxy.hpp and docs/synth.md for every
// formula), rendered on the sky through the WCS and convolved with the beam.
//
// Units: arcsec for sky offsets (east, north), degrees for angles, km/s for
// velocities, Jy km/s for line flux, Jy/beam km/s for line maps, Jy/beam for
// cube channels, "adu" counts for the optical image.
//
// How a line map is made, and why its total is exact
// ---------------------------------------------------
// 1. The intrinsic (unconvolved) surface brightness is integrated over each
//    pixel of a *padded* work grid: the map grid extended by a margin of
//    ceil(5 sigma_beam) + 2 pixels on every side, with the same WCS. The
//    integral uses ss x ss sub-samples per pixel placed through the local
//    Jacobian J = d(east, north)/d(x, y).
// 2. The disc and the tail are normalised separately to their fluxes
//    F_disc = (1 - tail_flux_fraction) F and F_tail = tail_flux_fraction F.
//    When a component lies entirely inside the padded grid (no sub-sample on
//    the outermost ring of pixels is non-zero), its rendered sum is scaled to
//    exactly F_c; otherwise it is scaled by the analytic integral (below), so
//    that the part outside the padded grid is truly missing.
//      disc: int exp(-R/h) dA_sky = cos(i) 2 pi h^2 [1 - (1 + x) e^-x],
//            x = R_trunc / h  (the lopsided term integrates to zero over the
//            projected disc, being odd under point reflection about the
//            centre while exp(-R/h) is even);
//      tail: int 4 (t/L)(1 - t/L) dt * int_{|w|<4s} exp(-w^2/2s^2) dw
//            = (2L/3) * s sqrt(2 pi) erf(4/sqrt 2).
// 3. The per-pixel flux (Jy km/s) becomes brightness (Jy/beam km/s) through
//    beam_area / pixel_area, is convolved with the beam (unit-sum kernel, so
//    flux is conserved) and cropped to the map grid. Every map pixel then
//    receives all the flux the kernel sends it from the padded grid, which
//    holds everything within the kernel's reach. The flux that ends up in the
//    map, sum(map) * pixel_area / beam_area, is recorded in the truth file as
//    `flux_in_map_jykms`; it equals the stated total when the galaxy (plus a
//    few beams) fits in the map.
#include "fulcrum/synth/mock_galaxy.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <numbers>
#include <string>
#include <vector>

#include <Eigen/Eigenvalues>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/random.hpp"
#include "fulcrum/core/number_text.hpp"
#include "fulcrum/io/header_card.hpp"
#include "fulcrum/imaging/gaussian_smooth.hpp"
#include "fulcrum/photometry/sersic_profile.hpp"
#include "fulcrum/sky/angle.hpp"
#include "fulcrum/sky/ellipse.hpp"
#include "fulcrum/sky/offset_frame.hpp"
#include "fulcrum/sky/pixel_offsets.hpp"

namespace fulcrum::synth {

namespace {

constexpr double kPi = std::numbers::pi;
constexpr double kLightKms = 299792.458;  // speed of light, km/s (exact, SI definition)

// Random sub-streams of one galaxy's seed (Random::stream, core/random.hpp).
enum Stream : std::uint64_t {
  kLineNoise = 1,
  kVelocityNoise = 2,
  kHoles = 3,
  kOptical = 4,
  kCubeNoise = 5,
};

// Position angle in [0, 360) without the round trip through radians (so
// that 60 stays 60 in the truth file).
double wrap_deg(double x) {
  double r = std::fmod(x, 360.0);
  if (r < 0.0) r += 360.0;
  return r >= 360.0 ? 0.0 : r;
}

void require(bool ok, const std::string& what) {
  if (!ok) throw InputError("", "mock parameter out of range: " + what);
}


// A padded work grid and its sky geometry.
struct WorkGrid {
  int nx = 0, ny = 0;  // padded size
  int margin = 0;
  int inner_nx = 0, inner_ny = 0;
  CelestialWcs wcs;
  PixelOffsets off;
  Eigen::Matrix2d jac;
  double pixel_area = 0.0;  // arcsec^2

  std::size_t size() const { return static_cast<std::size_t>(nx) * ny; }
  std::vector<double> crop(const std::vector<double>& v) const {
    std::vector<double> out(static_cast<std::size_t>(inner_nx) * inner_ny);
    for (int y = 0; y < inner_ny; ++y)
      for (int x = 0; x < inner_nx; ++x)
        out[static_cast<std::size_t>(x) + static_cast<std::size_t>(inner_nx) * y] =
            v[static_cast<std::size_t>(x + margin) + static_cast<std::size_t>(nx) * (y + margin)];
    return out;
  }
  bool on_outer_ring(int x, int y) const { return x == 0 || y == 0 || x == nx - 1 || y == ny - 1; }
};

double largest_sigma_pixels(const Eigen::Matrix2d& cov) {
  Eigen::SelfAdjointEigenSolver<Eigen::Matrix2d> es(cov);
  return std::sqrt(std::max(es.eigenvalues()(0), es.eigenvalues()(1)));
}

WorkGrid make_work_grid(const GridSpec& spec, WorldCoord centre, int margin) {
  WorkGrid g;
  g.margin = margin;
  g.inner_nx = spec.nx;
  g.inner_ny = spec.ny;
  g.nx = spec.nx + 2 * margin;
  g.ny = spec.ny + 2 * margin;
  g.wcs = mock_grid_wcs(spec, centre, margin);
  g.off = PixelOffsets(g.nx, g.ny, g.wcs, centre);
  g.jac = g.off.jacobian();
  g.pixel_area = g.off.pixel_area_arcsec2();
  return g;
}

// Margin (pixels) that holds the reach of a Gaussian kernel with FWHMs `k`.
int margin_for(const Beam& k, const GridSpec& spec, WorldCoord centre) {
  WorkGrid probe = make_work_grid(spec, centre, 0);
  Eigen::Matrix2d cov = pixel_covariance(k, probe.jac);
  return static_cast<int>(std::ceil(5.0 * largest_sigma_pixels(cov))) + 2;
}

SmoothOptions plain_convolution() {
  SmoothOptions o;
  o.normalise_missing = false;
  o.fill_missing = false;
  return o;
}

// Sum of squared kernel weights, measured by convolving a unit impulse: the
// variance of convolved unit-variance white noise.
double kernel_sum_squares(const Eigen::Matrix2d& cov) {
  int r = static_cast<int>(std::ceil(6.0 * largest_sigma_pixels(cov))) + 2;
  int n = 2 * r + 1;
  std::vector<double> delta(static_cast<std::size_t>(n) * n, 0.0);
  delta[static_cast<std::size_t>(r) + static_cast<std::size_t>(n) * r] = 1.0;
  auto k = convolve_gaussian(delta, n, n, cov, plain_convolution());
  double s = 0.0;
  for (double v : k) s += v * v;
  return s;
}

// Beam-correlated Gaussian noise of unit variance on the inner grid.
std::vector<double> correlated_noise(const WorkGrid& g, const Eigen::Matrix2d& cov, Random& rng) {
  std::vector<double> white(g.size());
  for (double& v : white) v = rng.normal();
  auto smooth = convolve_gaussian(white, g.nx, g.ny, cov, plain_convolution());
  const double scale = 1.0 / std::sqrt(kernel_sum_squares(cov));
  auto out = g.crop(smooth);
  for (double& v : out) v *= scale;
  return out;
}

// Radius (arcsec) inside which an exponential disc of scale length h keeps
// (1 - f) of the flux it has inside r_disc: M(x) = 1 - (1 + x) e^-x.
double stripped_radius(double h, double r_disc, double f) {
  auto mass = [](double x) { return 1.0 - (1.0 + x) * std::exp(-x); };
  const double xd = r_disc / h;
  const double target = (1.0 - f) * mass(xd);
  double lo = 0.0, hi = xd;
  for (int i = 0; i < 200; ++i) {
    double mid = 0.5 * (lo + hi);
    if (mass(mid) < target) lo = mid; else hi = mid;
  }
  return 0.5 * (lo + hi) * h;
}

Image make_image(int nx, int ny, const CelestialWcs& wcs, std::vector<double> data,
                 std::optional<Beam> beam, const std::string& unit) {
  Image im;
  im.nx = nx;
  im.ny = ny;
  im.wcs = wcs;
  im.data = std::move(data);
  im.beam = beam;
  im.unit = unit;
  return im;
}

// The intrinsic line model evaluated at a sky offset p (arcsec from the
// kinematic centre): disc and tail brightness in arbitrary units.
struct LineModel {
  Angle pa, inc;
  double h = 1.0, r_trunc = 1.0, excess = 0.0;
  SkyOffset u_lead, u_tail, u_perp;
  double tail_len = 1.0, tail_sigma = 1.0;
  bool has_tail = false;

  double disc(SkyOffset p) const {
    DiscPoint d = disc_coordinates(p, {0.0, 0.0}, pa, inc);
    if (d.radius_arcsec > r_trunc) return 0.0;
    double r = p.norm();
    double c = r > 0.0 ? (p.east * u_lead.east + p.north * u_lead.north) / r : 0.0;
    return std::exp(-d.radius_arcsec / h) * (1.0 + excess * c);
  }
  double tail(SkyOffset p) const {
    if (!has_tail) return 0.0;
    double t = p.east * u_tail.east + p.north * u_tail.north;
    double w = p.east * u_perp.east + p.north * u_perp.north;
    if (t < 0.0 || t > tail_len || std::abs(w) > 4.0 * tail_sigma) return 0.0;
    double s = t / tail_len;
    return 4.0 * s * (1.0 - s) * std::exp(-0.5 * w * w / (tail_sigma * tail_sigma));
  }
  double disc_integral() const {
    double x = r_trunc / h;
    return inc.cos() * 2.0 * kPi * h * h * (1.0 - (1.0 + x) * std::exp(-x));
  }
  double tail_integral() const {
    return (2.0 * tail_len / 3.0) * tail_sigma * std::sqrt(2.0 * kPi) * std::erf(4.0 / std::sqrt(2.0));
  }
};

double rotation_speed(const MockGalaxy& g, double r_arcsec) {
  return g.vflat_kms * (2.0 / kPi) * std::atan(r_arcsec / g.r_turn_arcsec);
}

// Tilted-ring line-of-sight velocity (Begeman 1989): v = vsys + vrot(R) sin(i) cos(theta).
double model_velocity(const MockGalaxy& g, SkyOffset p) {
  DiscPoint d = disc_coordinates(p, {0.0, 0.0}, g.pa_deg * degrees, g.inc_deg * degrees);
  return g.vsys_kms + rotation_speed(g, d.radius_arcsec) * Angle::from_degrees(g.inc_deg).sin() * d.cos_theta;
}

nlohmann::json pixel_json(const CelestialWcs& wcs, WorldCoord w) {
  PixelCoord p = wcs.world_to_pixel(w);
  return {{"x", fits_pixel(p.x)}, {"y", fits_pixel(p.y)}};
}

}  // namespace

CelestialWcs mock_grid_wcs(const GridSpec& grid, WorldCoord centre, int margin) {
  const double s = grid.pixel_arcsec / 3600.0;
  const double r = Angle::from_degrees(grid.rotation_deg).rad();
  // Sky directions (east, north) of the +x and +y pixel axes. +y points to
  // PA = rotation; +x to PA = rotation - 90 deg (east to the left when the
  // +y axis is north) or, flipped, PA = rotation + 90 deg.
  const double ye = std::sin(r), yn = std::cos(r);
  const double xe = grid.flip ? std::cos(r) : -std::cos(r);
  const double xn = grid.flip ? -std::sin(r) : std::sin(r);
  // CD rows: intermediate world coordinates along RA (east) and Dec (north).
  const double cd[2][2] = {{xe * s, ye * s}, {xn * s, yn * s}};
  OffsetFrame frame(centre);
  WorldCoord crval = frame.to_world({grid.centre_east_arcsec, grid.centre_north_arcsec});
  PixelCoord crpix{0.5 * (grid.nx - 1) + margin, 0.5 * (grid.ny - 1) + margin};
  return CelestialWcs::from_cd(grid.projection, crpix, crval, cd);
}

void validate_mock(const MockGalaxy& g) {
  auto grid_ok = [](const GridSpec& s, const std::string& where) {
    require(s.nx >= 8 && s.nx <= 8192 && s.ny >= 8 && s.ny <= 8192,
            where + ".nx/ny must be 8-8192 (got " + std::to_string(s.nx) + " x " + std::to_string(s.ny) + ")");
    require(s.pixel_arcsec > 0.0 && s.pixel_arcsec <= 600.0,
            where + ".pixel_arcsec must be in (0, 600] (got " + significant_text(s.pixel_arcsec, 10) + ")");
    require(std::isfinite(s.rotation_deg), where + ".rotation_deg must be finite");
    require(s.projection.size() == 3, where + ".projection must be a three-letter WCS code such as SIN or TAN");
    require(std::isfinite(s.centre_east_arcsec) && std::isfinite(s.centre_north_arcsec),
            where + ".centre offsets must be finite");
  };
  require(!g.name.empty(), "name must not be empty");
  require(g.ra_deg >= 0.0 && g.ra_deg < 360.0, "ra_deg must be in [0, 360) (got " + significant_text(g.ra_deg, 10) + ")");
  require(g.dec_deg > -89.0 && g.dec_deg < 89.0, "dec_deg must be in (-89, 89) (got " + significant_text(g.dec_deg, 10) + ")");
  require(std::isfinite(g.pa_deg), "pa_deg must be finite");
  require(g.inc_deg >= 0.0 && g.inc_deg <= 85.0, "inc_deg must be in [0, 85] (got " + significant_text(g.inc_deg, 10) + ")");
  require(std::isfinite(g.vsys_kms) && std::abs(g.vsys_kms) < 0.5 * kLightKms, "vsys_kms must be below c/2 in size");
  require(g.vflat_kms >= 0.0 && g.vflat_kms < 2000.0, "vflat_kms must be in [0, 2000)");
  require(g.r_turn_arcsec > 0.0, "r_turn_arcsec must be > 0");
  require(g.total_flux_jykms > 0.0, "total_flux_jykms must be > 0");
  require(g.scale_length_arcsec > 0.0, "scale_length_arcsec must be > 0");
  require(g.disc_radius_arcsec > 0.0, "disc_radius_arcsec must be > 0");
  require(std::abs(g.leading_excess) <= 1.0, "leading_excess must be in [-1, 1] (got " + significant_text(g.leading_excess, 10) + ")");
  require(std::isfinite(g.tail_pa_deg), "tail_pa_deg must be finite");
  require(g.tail_pa_err_deg >= 0.0, "tail_pa_err_deg must be >= 0");
  require(g.tail_flux_fraction >= 0.0 && g.tail_flux_fraction < 1.0, "tail_flux_fraction must be in [0, 1)");
  require(g.tail_flux_fraction == 0.0 || (g.tail_length_arcsec > 0.0 && g.tail_width_arcsec > 0.0),
          "tail_length_arcsec and tail_width_arcsec must be > 0 when there is a tail");
  require(g.stripped_fraction >= 0.0 && g.stripped_fraction < 1.0, "stripped_fraction must be in [0, 1)");
  grid_ok(g.grid, "grid");
  require(g.bmaj_arcsec > 0.0 && g.bmin_arcsec > 0.0 && g.bmin_arcsec <= g.bmaj_arcsec,
          "the beam needs 0 < bmin_arcsec <= bmaj_arcsec");
  require(g.bmaj_arcsec >= 0.5 * g.grid.pixel_arcsec, "bmaj_arcsec must be at least half a pixel");
  require(std::isfinite(g.bpa_deg), "bpa_deg must be finite");
  require(g.intensity_rms >= 0.0, "intensity_rms must be >= 0");
  require(g.velocity_noise_kms >= 0.0 && g.velocity_noise_floor_kms >= 0.0, "velocity noise must be >= 0");
  require(g.mask_snr >= 0.0, "mask_snr must be >= 0");
  require(g.hole_fraction >= 0.0 && g.hole_fraction <= 0.9, "hole_fraction must be in [0, 0.9]");
  require(g.distance_mpc > 0.0, "distance_mpc must be > 0");
  if (g.optical.enabled) {
    const auto& o = g.optical;
    grid_ok(o.grid, "optical.grid");
    require(o.sersic_n >= 0.2 && o.sersic_n <= 20.0, "optical.sersic_n must be in [0.2, 20]");
    require(o.re_arcsec > 0.0, "optical.re_arcsec must be > 0");
    require(o.q < 0.0 || (o.q > 0.0 && o.q <= 1.0), "optical.q must be in (0, 1] (or < 0: follow the disc)");
    require(o.total_counts > 0.0, "optical.total_counts must be > 0");
    require(o.noise_rms >= 0.0, "optical.noise_rms must be >= 0");
    require(o.psf_fwhm_arcsec >= 0.5 * o.grid.pixel_arcsec, "optical.psf_fwhm_arcsec must be at least half a pixel");
    require(o.n_stars >= 0 && o.n_stars <= 200, "optical.n_stars must be in [0, 200]");
    require(o.star_counts >= 0.0, "optical.star_counts must be >= 0");
  }
  if (g.delivered.enabled) {
    const auto& d = g.delivered;
    require(std::isfinite(d.blank_value), "delivered.blank_value must be a finite number");
    require(d.field_radius_fraction > 0.0 && d.field_radius_fraction <= 1.5,
            "delivered.field_radius_fraction must be in (0, 1.5]");
    require(d.failed_fit_fraction >= 0.0 && d.failed_fit_fraction <= 0.5,
            "delivered.failed_fit_fraction must be in [0, 0.5]");
    require(d.failed_fit_pixels_outside >= 0 && d.scattered_pixels >= 0 && d.history_cards >= 0 &&
                d.history_cards <= 10000,
            "delivered pixel counts must be >= 0 and history_cards at most 10000");
    require(d.scattered_velocity_range_kms >= 0.0, "delivered.scattered_velocity_range_kms must be >= 0");
  }
  if (g.cube.enabled) {
    const auto& c = g.cube;
    require(c.n_channels >= 4 && c.n_channels <= 4096, "cube.n_channels must be 4-4096");
    require(c.channel_width_kms > 0.0, "cube.channel_width_kms must be > 0");
    require(c.dispersion_kms > 0.0, "cube.dispersion_kms must be > 0");
    require(c.noise_rms >= 0.0, "cube.noise_rms must be >= 0");
    require(c.spectral_type == "VRAD" || c.spectral_type == "VOPT" || c.spectral_type == "FREQ",
            "cube.spectral_type must be VRAD, VOPT or FREQ (got '" + c.spectral_type + "')");
    require(c.rest_frequency_hz > 0.0, "cube.rest_frequency_hz must be > 0");
  }
}

namespace {

// The line grid of one mock: the map's WCS and a padded work grid around it.
struct LineGrid {
  WorldCoord centre;
  Beam beam;
  double beam_area = 0.0;  // arcsec^2
  WorkGrid wg;             // padded work grid
  Eigen::Matrix2d beam_cov;  // beam covariance in work-grid pixels
  CelestialWcs map_wcs;
  int nx = 0, ny = 0;
  std::size_t npix = 0;

  std::size_t index(int x, int y) const { return static_cast<std::size_t>(x) + static_cast<std::size_t>(nx) * y; }
  std::size_t work_index(int x, int y) const {
    return static_cast<std::size_t>(x) + static_cast<std::size_t>(wg.nx) * y;
  }
};

LineGrid make_line_grid(const MockGalaxy& g) {
  LineGrid lg;
  lg.centre = {g.ra_deg, g.dec_deg};
  lg.beam = Beam{g.bmaj_arcsec, g.bmin_arcsec, g.bpa_deg};
  lg.beam_area = lg.beam.solid_angle_arcsec2();
  lg.wg = make_work_grid(g.grid, lg.centre, margin_for(lg.beam, g.grid, lg.centre));
  lg.beam_cov = pixel_covariance(lg.beam, lg.wg.jac);
  lg.map_wcs = mock_grid_wcs(g.grid, lg.centre, 0);
  lg.nx = g.grid.nx;
  lg.ny = g.grid.ny;
  lg.npix = static_cast<std::size_t>(lg.nx) * lg.ny;
  return lg;
}

LineModel line_model_for(const MockGalaxy& g) {
  LineModel lm;
  lm.pa = g.pa_deg * degrees;
  lm.inc = g.inc_deg * degrees;
  lm.h = g.scale_length_arcsec;
  lm.r_trunc = g.stripped_fraction > 0.0
                   ? stripped_radius(g.scale_length_arcsec, g.disc_radius_arcsec, g.stripped_fraction)
                   : g.disc_radius_arcsec;
  lm.excess = g.leading_excess;
  lm.u_lead = direction_of(wrap_deg(g.tail_pa_deg + 180.0) * degrees);
  lm.u_tail = direction_of(g.tail_pa_deg * degrees);
  lm.u_perp = direction_of((g.tail_pa_deg + 90.0) * degrees);
  lm.tail_len = g.tail_length_arcsec;
  lm.tail_sigma = g.tail_width_arcsec;
  lm.has_tail = g.tail_flux_fraction > 0.0;
  return lm;
}

// The disc and the tail integrated over each work-grid pixel (steps 1-2 of
// the note at the top), before scaling to their fluxes.
struct RenderedLine {
  int ss = 5;               // sub-samples per pixel side
  double sub_area = 0.0;    // arcsec^2 of one sub-sample
  std::vector<double> disc_sum, tail_sum;  // per pixel: sum of the model * sub_area
  bool disc_on_edge = false, tail_on_edge = false;
  double disc_lead = 0.0, disc_trail = 0.0, tail_lead = 0.0, tail_trail = 0.0;  // sub-sample sums
  double rendered_disc = 0.0, rendered_tail = 0.0;
};

RenderedLine render_line_model(const LineModel& lm, const WorkGrid& wg) {
  RenderedLine r;
  // Sub-samples per pixel side: enough to resolve the smallest model scale.
  const double pix = std::sqrt(wg.pixel_area);
  double smallest = std::min(lm.h, lm.r_trunc);
  if (lm.has_tail) smallest = std::min(smallest, lm.tail_sigma);
  const int ss = std::clamp(static_cast<int>(std::ceil(6.0 * pix / smallest)), 5, 15);
  r.ss = ss;
  r.sub_area = wg.pixel_area / (ss * ss);
  r.disc_sum.assign(wg.size(), 0.0);
  r.tail_sum.assign(wg.size(), 0.0);
  for (int y = 0; y < wg.ny; ++y) {
    for (int x = 0; x < wg.nx; ++x) {
      const SkyOffset c = wg.off.at(x, y);
      double ds = 0.0, ts = 0.0;
      for (int j = 0; j < ss; ++j) {
        const double dy = (j + 0.5) / ss - 0.5;
        for (int i = 0; i < ss; ++i) {
          const double dx = (i + 0.5) / ss - 0.5;
          SkyOffset p{c.east + wg.jac(0, 0) * dx + wg.jac(0, 1) * dy,
                      c.north + wg.jac(1, 0) * dx + wg.jac(1, 1) * dy};
          const double d = lm.disc(p), t = lm.tail(p);
          ds += d;
          ts += t;
          const bool leading = p.east * lm.u_lead.east + p.north * lm.u_lead.north > 0.0;
          (leading ? r.disc_lead : r.disc_trail) += d;
          (leading ? r.tail_lead : r.tail_trail) += t;
        }
      }
      const std::size_t k = static_cast<std::size_t>(x) + static_cast<std::size_t>(wg.nx) * y;
      r.disc_sum[k] = ds * r.sub_area;
      r.tail_sum[k] = ts * r.sub_area;
      if (wg.on_outer_ring(x, y)) {
        r.disc_on_edge = r.disc_on_edge || ds > 0.0;
        r.tail_on_edge = r.tail_on_edge || ts > 0.0;
      }
    }
  }
  for (std::size_t k = 0; k < wg.size(); ++k) {
    r.rendered_disc += r.disc_sum[k];
    r.rendered_tail += r.tail_sum[k];
  }
  return r;
}

// Fluxes of the two components and the factors that scale the rendered
// model to them (step 2 of the note at the top).
struct LineFluxes {
  double f_disc = 0.0, f_tail = 0.0;  // Jy km/s
  double a_disc = 1.0, a_tail = 1.0;  // analytic integrals of the unscaled model
  double k_disc = 0.0, k_tail = 0.0;  // scale factors
};

LineFluxes line_fluxes(const MockGalaxy& g, const LineModel& lm, const RenderedLine& r) {
  LineFluxes f;
  f.f_disc = (1.0 - g.tail_flux_fraction) * g.total_flux_jykms;
  f.f_tail = g.tail_flux_fraction * g.total_flux_jykms;
  f.a_disc = lm.disc_integral();
  f.a_tail = lm.has_tail ? lm.tail_integral() : 1.0;
  if (r.rendered_disc <= 0.0)
    throw InputError("", "mock parameter out of range: the gas disc covers no pixel of the map "
                         "(is the galaxy on the grid?)");
  f.k_disc = r.disc_on_edge ? f.f_disc / f.a_disc : f.f_disc / r.rendered_disc;
  f.k_tail = !lm.has_tail                                    ? 0.0
             : (r.tail_on_edge || r.rendered_tail <= 0.0) ? f.f_tail / f.a_tail
                                                           : f.f_tail / r.rendered_tail;
  return f;
}

// The velocity field of the mock: model, error, noisy kept values.
struct VelocityField {
  std::vector<double> model, error, value;  // km/s; value NaN where not kept
  std::size_t kept_before_holes = 0, blanked = 0;
};

VelocityField make_velocity_field(const MockGalaxy& g, const LineGrid& lg, const PixelOffsets& map_off,
                                  const std::vector<double>& model, const std::vector<double>& noisy,
                                  double peak) {
  VelocityField vf;
  vf.model.resize(lg.npix);
  vf.error.resize(lg.npix);
  vf.value.resize(lg.npix);
  Random rng = Random::stream(g.seed, kVelocityNoise);
  std::vector<double> n(lg.npix, 0.0);
  if (g.velocity_noise_kms > 0.0 || g.velocity_noise_floor_kms > 0.0) n = correlated_noise(lg.wg, lg.beam_cov, rng);
  for (int y = 0; y < lg.ny; ++y) {
    for (int x = 0; x < lg.nx; ++x) {
      const std::size_t k = lg.index(x, y);
      vf.model[k] = model_velocity(g, map_off.at(x, y));
      double snr = g.intensity_rms > 0.0 ? model[k] / g.intensity_rms : INFINITY;
      double e = g.velocity_noise_floor_kms;
      if (snr > 0.0 && g.mask_snr > 0.0) e = std::max(e, g.velocity_noise_kms * g.mask_snr / snr);
      else if (snr <= 0.0) e = std::max(e, g.velocity_noise_kms * 10.0);
      vf.error[k] = e;
      bool kept = g.intensity_rms > 0.0 ? (noisy[k] >= g.mask_snr * g.intensity_rms && model[k] >= g.intensity_rms)
                                        : model[k] >= 1e-3 * peak;
      vf.value[k] = kept ? vf.model[k] + e * n[k] : NAN;
    }
  }
  for (double v : vf.value) vf.kept_before_holes += std::isfinite(v) ? 1 : 0;
  return vf;
}

// Blanks round holes in the kept velocities until hole_fraction of them are
// gone; returns how many were blanked.
std::size_t punch_holes(const MockGalaxy& g, const LineGrid& lg, const PixelOffsets& map_off,
                        std::size_t kept, std::vector<double>& vel) {
  std::size_t blanked = 0;
  if (g.hole_fraction <= 0.0 || kept == 0) return 0;
  Random rng = Random::stream(g.seed, kHoles);
  const double radius = g.hole_radius_arcsec > 0.0 ? g.hole_radius_arcsec : lg.beam.fwhm_arcsec();
  const std::size_t target = static_cast<std::size_t>(std::ceil(g.hole_fraction * kept));
  const int nx = lg.nx, ny = lg.ny;
  for (int attempt = 0; attempt < 100000 && blanked < target; ++attempt) {
    const int cx = static_cast<int>(rng.uniform() * nx), cy = static_cast<int>(rng.uniform() * ny);
    if (!std::isfinite(vel[lg.index(cx, cy)])) continue;
    const SkyOffset c0 = map_off.at(cx, cy);
    const int reach = static_cast<int>(std::ceil(radius / g.grid.pixel_arcsec)) + 1;
    for (int y = std::max(0, cy - reach); y <= std::min(ny - 1, cy + reach); ++y)
      for (int x = std::max(0, cx - reach); x <= std::min(nx - 1, cx + reach); ++x) {
        const std::size_t k = lg.index(x, y);
        if (std::isfinite(vel[k]) && (map_off.at(x, y) - c0).norm() <= radius) {
          vel[k] = NAN;
          ++blanked;
        }
      }
  }
  return blanked;
}

// Intensity-weighted, beam-smeared model velocity: conv(I v) / conv(I),
// what a noise-free first moment of the cube sees (up to channelisation).
std::vector<double> beam_smeared_velocity(const MockGalaxy& g, const LineGrid& lg,
                                          const std::vector<double>& intrinsic, const std::vector<double>& model,
                                          double peak) {
  const WorkGrid& wg = lg.wg;
  std::vector<double> iv(wg.size());
  for (int y = 0; y < wg.ny; ++y)
    for (int x = 0; x < wg.nx; ++x) iv[lg.work_index(x, y)] = intrinsic[lg.work_index(x, y)] * model_velocity(g, wg.off.at(x, y));
  auto num = wg.crop(convolve_gaussian(iv, wg.nx, wg.ny, lg.beam_cov, plain_convolution()));
  std::vector<double> vb(lg.npix);
  for (std::size_t k = 0; k < lg.npix; ++k) vb[k] = model[k] > 1e-12 * peak ? num[k] / model[k] : NAN;
  return vb;
}

// The truth of the line map and the velocity field (truth.json "truth").
nlohmann::json line_truth(const MockGalaxy& g, const LineGrid& lg, const PixelOffsets& map_off, const LineModel& lm,
                          const RenderedLine& r, const LineFluxes& f, const std::vector<double>& model,
                          const VelocityField& vf, double peak) {
  double map_sum = 0.0, model_lead = 0.0, model_trail = 0.0;
  for (int y = 0; y < lg.ny; ++y)
    for (int x = 0; x < lg.nx; ++x) {
      const double v = model[lg.index(x, y)];
      map_sum += v;
      const SkyOffset p = map_off.at(x, y);
      (p.east * lm.u_lead.east + p.north * lm.u_lead.north > 0.0 ? model_lead : model_trail) += v;
    }
  const double map_pixel_area = map_off.pixel_area_arcsec2();
  const double flux_in_map = map_sum * map_pixel_area / lg.beam_area;
  const double in_lead = (f.k_disc * r.disc_lead + f.k_tail * r.tail_lead) * r.sub_area;
  const double in_trail = (f.k_disc * r.disc_trail + f.k_tail * r.tail_trail) * r.sub_area;

  nlohmann::json d;
  d["centre"] = {{"ra_deg", g.ra_deg}, {"dec_deg", g.dec_deg},
                 {"fits_pixel_line_grid", pixel_json(lg.map_wcs, lg.centre)}};
  d["kinematic_pa_deg"] = wrap_deg(g.pa_deg);
  d["receding_direction_pa_deg"] = wrap_deg(g.pa_deg);
  d["tail_pa_deg"] = wrap_deg(g.tail_pa_deg);
  d["leading_pa_deg"] = wrap_deg(g.tail_pa_deg + 180.0);
  d["trailing_pa_deg"] = wrap_deg(g.tail_pa_deg);
  d["beam_area_arcsec2"] = lg.beam_area;
  d["line_pixel_area_arcsec2"] = map_pixel_area;
  d["pixels_per_beam"] = lg.beam_area / map_pixel_area;
  d["disc_truncation_radius_arcsec"] = lm.r_trunc;
  d["disc_flux_jykms"] = f.f_disc;
  d["tail_flux_jykms"] = f.f_tail;
  d["total_flux_jykms"] = g.total_flux_jykms;
  d["flux_in_map_jykms"] = flux_in_map;
  d["flux_in_map_note"] =
      "sum(noise-free map) * pixel_area / beam_area; below total_flux_jykms only when the map edge "
      "cuts the galaxy";
  d["render_ratio_disc"] = r.rendered_disc / f.a_disc;
  d["render_ratio_tail"] = lm.has_tail ? r.rendered_tail / f.a_tail : 1.0;
  d["disc_contained_in_work_grid"] = !r.disc_on_edge;
  d["tail_contained_in_work_grid"] = !r.tail_on_edge;
  d["intrinsic_leading_flux_jykms"] = in_lead;
  d["intrinsic_trailing_flux_jykms"] = in_trail;
  d["intrinsic_asymmetry"] = (in_lead + in_trail) > 0 ? (in_lead - in_trail) / (in_lead + in_trail) : 0.0;
  d["intrinsic_asymmetry_note"] =
      "(L - T)/(L + T) of the unconvolved model about the kinematic centre, split perpendicular to the "
      "tail, sub-sampled " + std::to_string(r.ss) + "x" + std::to_string(r.ss) +
      " per pixel, including gas off the map";
  d["model_map_asymmetry_pixel_centres"] =
      (model_lead + model_trail) > 0 ? (model_lead - model_trail) / (model_lead + model_trail) : 0.0;
  d["velocity_pixels_kept"] = vf.kept_before_holes - vf.blanked;
  d["velocity_pixels_blanked_by_holes"] = vf.blanked;
  d["line_peak_snr"] = g.intensity_rms > 0.0 ? peak / g.intensity_rms : 0.0;
  d["line_peak_jy_beam_kms"] = peak;
  d["flux_unit"] = "Jy km/s";
  d["line_map_unit"] = "Jy/beam.km/s";
  d["noise_note"] = "line and velocity noise are white Gaussian noise convolved with the beam and rescaled to "
                    "the stated rms per pixel";

  // Photometric centre (whether or not an optical image is made).
  const double off_arcsec = std::hypot(g.optical.offset_east_arcsec, g.optical.offset_north_arcsec);
  const WorldCoord phot = OffsetFrame(lg.centre).to_world({g.optical.offset_east_arcsec, g.optical.offset_north_arcsec});
  d["photometric_centre"] = {{"ra_deg", phot.ra_deg}, {"dec_deg", phot.dec_deg},
                             {"offset_east_arcsec", g.optical.offset_east_arcsec},
                             {"offset_north_arcsec", g.optical.offset_north_arcsec},
                             {"offset_arcsec", off_arcsec},
                             {"offset_beams", off_arcsec / lg.beam.fwhm_arcsec()},
                             {"fits_pixel_line_grid", pixel_json(lg.map_wcs, phot)}};
  // Offset along the leading direction (positive: the photometric centre lies towards the leading side).
  d["photometric_offset_towards_leading_arcsec"] =
      g.optical.offset_east_arcsec * lm.u_lead.east + g.optical.offset_north_arcsec * lm.u_lead.north;
  return d;
}

// Point-source stars deposited bilinearly (which keeps their centroid) on a
// padded optical work grid, away from the galaxy; their truth is appended to
// `stars`.
std::vector<double> deposit_stars(const OpticalSpec& o, WorldCoord centre, SkyOffset galaxy_centre, int margin,
                                  const WorkGrid& og, Random& rng, nlohmann::json& stars) {
  std::vector<double> starmap(og.size(), 0.0);
  const OffsetFrame oframe(centre);
  const CelestialWcs opt_wcs = mock_grid_wcs(o.grid, centre, 0);
  for (int sidx = 0; sidx < o.n_stars; ++sidx) {
    for (int attempt = 0; attempt < 1000; ++attempt) {
      const double sx = rng.uniform(5.0, o.grid.nx - 6.0), sy = rng.uniform(5.0, o.grid.ny - 6.0);
      const double counts = o.star_counts * std::exp2(rng.uniform(-1.0, 1.0));
      const WorldCoord sw = opt_wcs.pixel_to_world({sx, sy});
      if ((oframe.to_offset(sw) - galaxy_centre).norm() < 2.5 * o.re_arcsec) continue;
      const double px = sx + margin, py = sy + margin;
      const int ix = static_cast<int>(std::floor(px)), iy = static_cast<int>(std::floor(py));
      const double fx = px - ix, fy = py - iy;
      auto add = [&](int xx, int yy, double w) {
        starmap[static_cast<std::size_t>(xx) + static_cast<std::size_t>(og.nx) * yy] += counts * w;
      };
      add(ix, iy, (1 - fx) * (1 - fy));
      add(ix + 1, iy, fx * (1 - fy));
      add(ix, iy + 1, (1 - fx) * fy);
      add(ix + 1, iy + 1, fx * fy);
      stars.push_back({{"ra_deg", sw.ra_deg}, {"dec_deg", sw.dec_deg}, {"fits_x", fits_pixel(sx)},
                       {"fits_y", fits_pixel(sy)}, {"counts", counts}});
      break;
    }
  }
  return starmap;
}

// The optical image: a Sersic galaxy at the photometric centre plus stars,
// blurred by a Gaussian PSF, on a flat sky with white noise. Adds its truth
// to `d`.
void add_optical_image(const MockGalaxy& g, WorldCoord centre, MockProducts& out, nlohmann::json& d) {
  const auto& o = g.optical;
  const Beam psf{o.psf_fwhm_arcsec, o.psf_fwhm_arcsec, 0.0};
  const int om = margin_for(psf, o.grid, centre);
  WorkGrid og = make_work_grid(o.grid, centre, om);
  const Eigen::Matrix2d psf_cov = pixel_covariance(psf, og.jac);
  const double q = o.q < 0.0 ? std::max(0.05, Angle::from_degrees(g.inc_deg).cos()) : o.q;
  const double opa = o.pa_deg < 0.0 ? g.pa_deg : o.pa_deg;
  const double bn = photometry::sersic_bn(o.sersic_n);
  const double ie = o.total_counts / photometry::sersic_total_flux(1.0, o.re_arcsec, o.sersic_n, q);
  const SkyOffset pc{o.offset_east_arcsec, o.offset_north_arcsec};
  const SkyOffset ua = direction_of(opa * degrees), ub = direction_of((opa + 90.0) * degrees);
  auto radius = [&](SkyOffset p) {
    SkyOffset dd = p - pc;
    double a = dd.east * ua.east + dd.north * ua.north;
    double b = dd.east * ub.east + dd.north * ub.north;
    return std::sqrt(a * a + (b / q) * (b / q));
  };
  const double opix = std::sqrt(og.pixel_area);
  std::vector<double> gal(og.size(), 0.0);
  for (int y = 0; y < og.ny; ++y)
    for (int x = 0; x < og.nx; ++x) {
      const SkyOffset c = og.off.at(x, y);
      // Finer sampling near the (cuspy) centre.
      const int s = (c - pc).norm() < 3.0 * opix + 0.5 * o.re_arcsec / std::max(1.0, o.sersic_n) ? 25 : 5;
      double acc = 0.0;
      for (int j = 0; j < s; ++j)
        for (int i = 0; i < s; ++i) {
          const double dx = (i + 0.5) / s - 0.5, dy = (j + 0.5) / s - 0.5;
          SkyOffset p{c.east + og.jac(0, 0) * dx + og.jac(0, 1) * dy, c.north + og.jac(1, 0) * dx + og.jac(1, 1) * dy};
          acc += ie * photometry::sersic_relative_intensity(radius(p) / o.re_arcsec, o.sersic_n, bn);
        }
      gal[static_cast<std::size_t>(x) + static_cast<std::size_t>(og.nx) * y] = acc * og.pixel_area / (s * s);
    }
  Random rng = Random::stream(g.seed, kOptical);
  nlohmann::json stars = nlohmann::json::array();
  const std::vector<double> starmap = deposit_stars(o, centre, pc, om, og, rng, stars);
  std::vector<double> all(og.size());
  for (std::size_t k = 0; k < og.size(); ++k) all[k] = gal[k] + starmap[k];
  auto blurred = og.crop(convolve_gaussian(all, og.nx, og.ny, psf_cov, plain_convolution()));
  auto gal_only = og.crop(convolve_gaussian(gal, og.nx, og.ny, psf_cov, plain_convolution()));
  double counts_in_image = 0.0;
  for (double v : gal_only) counts_in_image += v;
  std::vector<double> omodel(blurred.size()), onoisy(blurred.size());
  for (std::size_t k = 0; k < blurred.size(); ++k) {
    omodel[k] = blurred[k] + o.sky_level;
    onoisy[k] = omodel[k] + o.noise_rms * rng.normal();
  }
  const CelestialWcs opt_wcs = mock_grid_wcs(o.grid, centre, 0);
  out.optical = make_image(o.grid.nx, o.grid.ny, opt_wcs, onoisy, psf, "adu");
  out.optical_model = make_image(o.grid.nx, o.grid.ny, opt_wcs, omodel, psf, "adu");
  const WorldCoord phot = OffsetFrame(centre).to_world(pc);
  d["photometric_centre"]["fits_pixel_optical_grid"] = pixel_json(opt_wcs, phot);
  d["centre"]["fits_pixel_optical_grid"] = pixel_json(opt_wcs, centre);
  d["optical"] = {{"sersic_bn", bn},
                  {"sersic_ie_adu_per_arcsec2", ie},
                  {"axis_ratio", q},
                  {"pa_deg", wrap_deg(opa)},
                  {"galaxy_counts_in_image", counts_in_image},
                  {"pixel_area_arcsec2", og.pixel_area},
                  {"stars", stars},
                  {"noise_note", "white Gaussian noise of noise_rms per pixel (no photon noise)"}};
}

// FITS cards of the cube's spectral axis (axis 3): channel 1 is the first
// plane; values in m/s, or in Hz for a frequency axis.
std::string spectral_axis_cards(const CubeSpec& c, const std::vector<double>& vchan) {
  std::string cards;
  const double v0 = vchan[0], step = vchan.size() > 1 ? vchan[1] - vchan[0] : c.channel_width_kms;
  if (c.spectral_type == "FREQ") {
    // Radio convention: nu = nu0 (1 - v/c), linear in v.
    cards += header_card("CTYPE3", "FREQ", true);
    cards += header_card("CUNIT3", "Hz", true);
    cards += header_card("CRPIX3", header_number(1.0), false);
    cards += header_card("CRVAL3", header_number(c.rest_frequency_hz * (1.0 - v0 / kLightKms)), false);
    cards += header_card("CDELT3", header_number(-c.rest_frequency_hz * step / kLightKms), false);
  } else {
    cards += header_card("CTYPE3", c.spectral_type, true);
    cards += header_card("CUNIT3", "m/s", true);
    cards += header_card("CRPIX3", header_number(1.0), false);
    cards += header_card("CRVAL3", header_number(v0 * 1000.0), false);
    cards += header_card("CDELT3", header_number(step * 1000.0), false);
  }
  cards += header_card("RESTFRQ", header_number(c.rest_frequency_hz), false, "rest frequency, Hz");
  cards += header_card("SPECSYS", "BARYCENT", true);
  return cards;
}

// The spectral-line cube: the intrinsic line map spread over channels by a
// Gaussian line at the model velocity, convolved with the beam, plus
// beam-correlated noise. Adds its truth to `d`.
void add_cube(const MockGalaxy& g, const LineGrid& lg, const std::vector<double>& intrinsic, MockProducts& out,
              nlohmann::json& d) {
  const auto& c = g.cube;
  const WorkGrid& wg = lg.wg;
  const int nz = c.n_channels;
  const double dv = c.channel_width_kms;
  // Channel k (in velocity order) is centred on vsys + (k - (nz-1)/2) dv.
  std::vector<double> vchan(nz);
  for (int k = 0; k < nz; ++k) {
    const int kk = c.reverse_channels ? nz - 1 - k : k;
    vchan[k] = g.vsys_kms + (kk - 0.5 * (nz - 1)) * dv;
  }
  std::vector<double> vpad(wg.size());
  for (int y = 0; y < wg.ny; ++y)
    for (int x = 0; x < wg.nx; ++x) vpad[lg.work_index(x, y)] = model_velocity(g, wg.off.at(x, y));
  Cube cube;
  cube.nx = lg.nx;
  cube.ny = lg.ny;
  cube.nz = nz;
  cube.wcs = lg.map_wcs;
  cube.beam = lg.beam;
  cube.unit = "Jy/beam";
  cube.data.assign(lg.npix * nz, 0.0);
  Random rng = Random::stream(g.seed, kCubeNoise);
  const double sig = c.dispersion_kms;
  const double sumsq = kernel_sum_squares(lg.beam_cov);
  std::vector<double> plane(wg.size());
  for (int k = 0; k < nz; ++k) {
    // Gaussian line integrated over the channel (so that sum_k S_k dv equals
    // the line map exactly when the band holds the line), in Jy/beam.
    const double lo = vchan[k] - 0.5 * dv, hi = vchan[k] + 0.5 * dv;
    for (std::size_t p = 0; p < wg.size(); ++p) {
      const double frac = 0.5 * (std::erf((hi - vpad[p]) / (std::sqrt(2.0) * sig)) -
                                 std::erf((lo - vpad[p]) / (std::sqrt(2.0) * sig)));
      plane[p] = intrinsic[p] * frac / dv;
    }
    auto conv = wg.crop(convolve_gaussian(plane, wg.nx, wg.ny, lg.beam_cov, plain_convolution()));
    std::vector<double> noise;
    if (c.noise_rms > 0.0) {
      std::vector<double> white(wg.size());
      for (double& v : white) v = rng.normal();
      noise = wg.crop(convolve_gaussian(white, wg.nx, wg.ny, lg.beam_cov, plain_convolution()));
    }
    for (std::size_t p = 0; p < lg.npix; ++p)
      cube.data[p + lg.npix * k] = conv[p] + (noise.empty() ? 0.0 : c.noise_rms * noise[p] / std::sqrt(sumsq));
  }
  const std::string cards = spectral_axis_cards(c, vchan);
  // The in-memory cube carries the header a file would: celestial cards
  // (without WCSAXES = 2) and the spectral axis.
  std::string celestial = lg.map_wcs.header_cards();
  for (std::size_t pos = 0; pos + 80 <= celestial.size(); pos += 80)
    if (celestial.compare(pos, 7, "WCSAXES") != 0 && celestial.compare(pos, 8, "END     ") != 0)
      cube.header += celestial.substr(pos, 80);
  cube.header += cards;
  cube.spectral_axis = 3;
  out.cube = std::move(cube);
  out.cube_spectral_cards = cards;
  d["cube"] = {{"channel_velocities_kms", vchan},
               {"velocity_convention", c.spectral_type == "VOPT" ? "optical" : "radio"},
               {"spectral_type", c.spectral_type},
               {"unit", "Jy/beam"},
               {"note", "every velocity of this mock (vsys, the velocity field) is in the convention of the "
                        "cube's spectral axis; each channel holds the Gaussian line integrated over the "
                        "channel width, so sum(channels) * width equals the noise-free line map"}};
}

}  // namespace

MockProducts make_mock(const MockGalaxy& g) {
  validate_mock(g);
  MockProducts out;
  const LineGrid lg = make_line_grid(g);
  const WorkGrid& wg = lg.wg;
  const std::string line_unit = "Jy/beam.km/s";

  // ---- the intrinsic line model, rendered, scaled to its flux, convolved
  const LineModel lm = line_model_for(g);
  const RenderedLine rendered = render_line_model(lm, wg);
  const LineFluxes fluxes = line_fluxes(g, lm, rendered);
  // Per-pixel flux (Jy km/s) -> brightness (Jy/beam km/s).
  const double to_brightness = lg.beam_area / wg.pixel_area;
  std::vector<double> intrinsic(wg.size());
  for (std::size_t k = 0; k < wg.size(); ++k)
    intrinsic[k] = (fluxes.k_disc * rendered.disc_sum[k] + fluxes.k_tail * rendered.tail_sum[k]) * to_brightness;
  const std::vector<double> model =
      wg.crop(convolve_gaussian(intrinsic, wg.nx, wg.ny, lg.beam_cov, plain_convolution()));

  // ---- noise on the line map
  std::vector<double> noisy = model;
  if (g.intensity_rms > 0.0) {
    Random rng = Random::stream(g.seed, kLineNoise);
    auto n = correlated_noise(wg, lg.beam_cov, rng);
    for (std::size_t k = 0; k < lg.npix; ++k) noisy[k] += g.intensity_rms * n[k];
  }

  // ---- velocity field: model, error, noise, mask, holes
  const PixelOffsets map_off(lg.nx, lg.ny, lg.map_wcs, lg.centre);
  double peak = 0.0;
  for (double v : model) peak = std::max(peak, v);
  VelocityField vf = make_velocity_field(g, lg, map_off, model, noisy, peak);
  vf.blanked = punch_holes(g, lg, map_off, vf.kept_before_holes, vf.value);
  for (std::size_t k = 0; k < lg.npix; ++k)
    if (!std::isfinite(vf.value[k])) vf.error[k] = NAN;

  const auto image = [&](const std::vector<double>& v, const std::string& unit) {
    return make_image(lg.nx, lg.ny, lg.map_wcs, v, lg.beam, unit);
  };
  out.velocity_model_beam = image(beam_smeared_velocity(g, lg, intrinsic, model, peak), "km/s");
  out.velocity = image(vf.value, "km/s");
  out.velocity_error = image(vf.error, "km/s");
  out.velocity_model = image(vf.model, "km/s");
  out.intensity = image(noisy, line_unit);
  out.intensity_error = image(std::vector<double>(lg.npix, g.intensity_rms), line_unit);
  out.intensity_model = image(model, line_unit);

  // ---- truth, optical image and cube
  nlohmann::json truth;
  truth["parameters"] = mock_to_json(g);
  nlohmann::json d = line_truth(g, lg, map_off, lm, rendered, fluxes, model, vf, peak);
  if (g.optical.enabled) add_optical_image(g, lg.centre, out, d);
  if (g.cube.enabled) add_cube(g, lg, intrinsic, out, d);
  d["description"] = g.description;
  d["expected_verdict"] = g.expected_verdict;
  truth["truth"] = d;
  truth["generator"] = {{"program", "fulcrum synth"}, {"seed", g.seed},
                        {"random", "mt19937_64 with SplitMix64 sub-streams and Box-Muller normals"}};
  if (g.delivered.enabled) {
    out.delivered = make_delivered(out.velocity, out.velocity_error, out.intensity, out.intensity_error, g.vsys_kms,
                                   g.delivered, g.seed);
    truth["delivered"] = out.delivered->summary;
  }
  out.truth = std::move(truth);
  return out;
}

}  // namespace fulcrum::synth
