// Running every photometric centre estimator and putting the results on the
// sky (see photometric_centres.hpp).
#include "fulcrum/photometry/photometric_centres.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/settings_check.hpp"
#include "fulcrum/imaging/gaussian_smooth.hpp"
#include "fulcrum/sky/offset_frame.hpp"

namespace fulcrum::photometry {

const PhotometricMeasurement* PhotometrySummary::find(const std::string& id) const {
  for (const auto& c : centres)
    if (c.id() == id) return &c;
  return nullptr;
}

namespace {

constexpr const char* kOpticalImage = "optical image";

PhotometricMeasurement on_sky(CentreMethod method, const PixelEstimate& e, const Image& image,
                              const PreparedImage& p, const char* covariance_label = "fit-covariance") {
  PhotometricMeasurement c;
  c.details = e.details;
  if (!e.ok) {
    c.centre = failed_centre(method, e.reason, kOpticalImage);
    return c;
  }
  Eigen::Matrix2d cov = Eigen::Matrix2d::Zero();
  if (e.cov_pixels) {
    cov = p.jacobian * (*e.cov_pixels) * p.jacobian.transpose();
    c.uncertainty_method = covariance_label;
  }
  c.centre = measured_centre(method, image.wcs.pixel_to_world(e.centre), cov, kOpticalImage);
  c.centre.pixel_fits = PixelCoord{fits_pixel(e.centre.x), fits_pixel(e.centre.y)};
  return c;
}

void attach_bootstrap(PhotometricMeasurement& c, const PreparedImage& p, const Estimator& est,
                      const PhotometryOptions& o, const std::optional<PixelBox>& window = std::nullopt) {
  if (!c.ok()) return;
  const BootstrapSummary b = bootstrap_centre(p, est, p.background.rms, c.id(), o.bootstrap, window);
  c.uncertainty_method = "noise-bootstrap";
  c.bootstrap_draws = b.succeeded;
  if (!b.ok) {
    c.centre = failed_centre(c.centre.method, "the noise bootstrap failed: " + b.reason, kOpticalImage);
    return;
  }
  c.centre.covariance = p.jacobian * b.cov_pixels * p.jacobian.transpose();
}

// The windows of the bootstrap's draws (bootstrap.hpp): every pixel an
// estimator can read for a draw near its point estimate, plus a margin of
// kDrawMargin pixels for the draw's own shift (many times its scatter) and
// the bilinear interpolation's neighbour.
constexpr int kDrawMargin = 6;

// Where the symmetry centre's bootstrap draws stop their simplex search
// (pixels; the point estimate's tolerance is SymmetryOptions'): see
// measure_photometric_centres.
constexpr double kSymmetryDrawTolerancePixels = 1e-3;

// Pixel half-extents of a circle of radius r arcsec on the sky.
Eigen::Vector2d circle_extent(const PreparedImage& p, double r_arcsec) {
  const Eigen::Matrix2d ji = p.jacobian.inverse();
  return {r_arcsec * ji.row(0).norm(), r_arcsec * ji.row(1).norm()};
}

// The symmetry centre's apertures (about the start, then about the first
// round's result, near c) and the reflections of their pixels.
PixelBox aperture_box(const PreparedImage& p, PixelCoord c, double r_arcsec, PixelCoord start) {
  const Eigen::Vector2d h = circle_extent(p, r_arcsec);
  const double sx = std::abs(start.x - c.x), sy = std::abs(start.y - c.y);
  return grown(p, box_around(p, c, h(0) + 2.0 * sx, h(1) + 2.0 * sy), kDrawMargin);
}

// The isophote's ellipse and the two beside it that measure the gradient
// (semi-major axis a + max(0.1 a, one pixel)), with room for the
// iteration's steps.
PixelBox ellipse_box(const PreparedImage& p, const IsophoteEllipse& el) {
  const double a = 1.3 * el.semi_major_arcsec + 2.0 * p.pixel_scale_arcsec;
  const Eigen::Vector2d h = circle_extent(p, a);
  return grown(p, box_around(p, el.centre, h(0), h(1)), kDrawMargin);
}

// The peak of a draw searches the galaxy's segment of the smoothed image
// and grows its cap above cap_fraction times the brightest value. Smoothing
// is linear: a draw's smoothed image is s0 (the smoothed data) plus the
// smoothed noise, whose rms is sigma_s = rms * sqrt(sum of the kernel's
// squared weights). Allowing m = 10 sigma_s (a chance below 1e-20 per
// pixel of more), a draw's brightest value is at least smax0 - m, its cap
// level at least cap (smax0 - m), so every pixel it can pick or add to its
// cap has s0 > L = cap smax0 - (1 + cap) m. The box of those pixels, grown
// by twice the kernel's half-width (the smoothing of every pixel within
// one half-width of the box reads the same pixels as on the whole image)
// and a margin, is all a draw needs. When L <= 0 (a faint galaxy) the
// galaxy's segment takes the place of the level set.
PixelBox peak_box(const PreparedImage& p, double cap_fraction) {
  const PixelKernel k =
      gaussian_kernel(pixel_covariance(Beam{p.psf_fwhm_arcsec, p.psf_fwhm_arcsec, 0.0}, p.jacobian));
  double w2 = 0.0;
  for (double w : k.weight) w2 += w * w;
  const double m = 10.0 * p.background.rms * std::sqrt(w2);
  const std::vector<double> s0 = smooth_to_fwhm(p.data, p.nx, p.ny, p.jacobian, p.psf_fwhm_arcsec);
  double smax = -std::numeric_limits<double>::infinity();
  for (std::size_t i = 0; i < s0.size(); ++i)
    if (p.galaxy[i] && std::isfinite(s0[i]) && std::isfinite(p.data[i])) smax = std::max(smax, s0[i]);
  const double level = cap_fraction * smax - (1.0 + cap_fraction) * m;
  const bool by_level = std::isfinite(level) && level > 0.0;
  PixelBox b{p.nx, p.ny, -1, -1};
  for (int y = 0; y < p.ny; ++y)
    for (int x = 0; x < p.nx; ++x) {
      const std::size_t i = static_cast<std::size_t>(x) + static_cast<std::size_t>(p.nx) * y;
      if (by_level ? !(s0[i] > level) : !p.galaxy[i]) continue;
      b.x0 = std::min(b.x0, x);
      b.x1 = std::max(b.x1, x);
      b.y0 = std::min(b.y0, y);
      b.y1 = std::max(b.y1, y);
    }
  if (b.empty()) return {0, 0, p.nx - 1, p.ny - 1};
  return grown(p, b, 2 * std::max(k.hx, k.hy) + kDrawMargin);
}

// Every estimator failed with `why`: the image was fine but not measurable.
PhotometrySummary refused_summary(const Image& optical, const PsfSize& psf, const std::string& why,
                                  const PhotometryOptions& o) {
  PhotometrySummary s;
  s.image = optical.path;
  s.psf = psf;
  s.reason = why;
  const std::pair<CentreMethod, bool> methods[] = {{CentreMethod::photometric_peak, o.peak_enabled},
                                                   {CentreMethod::photometric_centroid, o.centroid_enabled},
                                                   {CentreMethod::photometric_profile, o.profile_enabled},
                                                   {CentreMethod::photometric_isophote, o.isophote_enabled},
                                                   {CentreMethod::photometric_symmetry, o.symmetry_enabled}};
  for (const auto& [method, on] : methods)
    if (on) {
      PhotometricMeasurement c;
      c.centre = failed_centre(method, why, kOpticalImage);
      s.centres.push_back(c);
    }
  return s;
}

// An image or mask fulcrum cannot use at all: prepare_image throws the
// InputError that names the problem (checked before any PSF search).
[[noreturn]] void throw_unusable(const Image& optical, const Image* mask, const PhotometryOptions& o) {
  PreparationOptions po = o.preparation;
  po.psf_fwhm_arcsec = 1.0;
  prepare_image(optical, mask, po);
  throw InputError(optical.path.empty() ? std::string("optical image") : optical.path,
                   "the optical image cannot be used");
}

}  // namespace

CentreSpread centre_spread(const std::vector<PhotometricMeasurement>& centres) {
  CentreSpread s;
  std::vector<const Centre*> ok;
  for (const auto& c : centres)
    if (c.ok()) ok.push_back(&c.centre);
  s.count = static_cast<int>(ok.size());
  if (ok.empty()) return s;
  const OffsetFrame f0(ok.front()->position);
  Eigen::Vector2d mean = Eigen::Vector2d::Zero();
  std::vector<Eigen::Vector2d> v;
  for (auto* c : ok) {
    const SkyOffset o = f0.to_offset(c->position);
    v.emplace_back(o.east, o.north);
    mean += v.back();
  }
  mean /= static_cast<double>(ok.size());
  s.mean = f0.to_world({mean(0), mean(1)});
  if (ok.size() >= 2) {
    Eigen::Matrix2d c = Eigen::Matrix2d::Zero();
    for (auto& x : v) c += (x - mean) * (x - mean).transpose();
    s.scatter_cov_arcsec2 = c / static_cast<double>(ok.size() - 1);
    s.rms_arcsec = std::sqrt(s.scatter_cov_arcsec2.trace());
    for (std::size_t i = 0; i < ok.size(); ++i)
      for (std::size_t j = i + 1; j < ok.size(); ++j) {
        const double d = separation_arcsec(ok[i]->position, ok[j]->position);
        if (d > s.max_separation_arcsec) {
          s.max_separation_arcsec = d;
          s.farthest_pair[0] = ok[i]->id();
          s.farthest_pair[1] = ok[j]->id();
        }
      }
  }
  return s;
}

PhotometrySummary measure_photometric_centres(const Image& optical, const Image* mask,
                                              const PhotometryOptions& options) {
  PhotometryOptions o = options;
  const std::string src = optical.path.empty() ? std::string("optical image") : optical.path;
  if (!optical.wcs.valid()) throw InputError(src, "the optical image has no celestial WCS");
  if ((mask && (mask->nx != optical.nx || mask->ny != optical.ny)) || optical.nx < 8 || optical.ny < 8 ||
      optical.data.size() != optical.size() ||
      static_cast<int>(optical.finite_count()) < o.preparation.min_finite_pixels)
    throw_unusable(optical, mask, o);  // prepare_image names the problem
  std::vector<std::uint8_t> user_mask;
  if (mask)
    for (double m : mask->data) user_mask.push_back((!std::isfinite(m) || m != 0.0) ? 1 : 0);
  const PsfSize psf = determine_psf_size(optical, o.psf_fwhm_arcsec, mask ? &user_mask : nullptr, o.psf_estimate);
  if (!psf.known) return refused_summary(optical, psf, "the PSF size is unknown: " + psf.detail +
                                                           "; give " + setting_ref("psf_fwhm_arcsec"), o);
  o.psf_fwhm_arcsec = psf.fwhm_arcsec;
  o.preparation.psf_fwhm_arcsec = o.psf_fwhm_arcsec;
  const PreparedImage p = prepare_image(optical, mask, o.preparation);

  PhotometrySummary s;
  s.image = optical.path;
  s.psf_fwhm_arcsec = o.psf_fwhm_arcsec;
  s.psf = psf;
  s.pixel_scale_arcsec = p.pixel_scale_arcsec;
  s.background = p.background;
  for (std::size_t i = 0; i < p.user_masked.size(); ++i) {
    s.user_masked_pixels += p.user_masked[i];
    s.auto_masked_pixels += p.auto_masked[i] && !p.user_masked[i];
  }
  for (const auto& m : p.sources.sources) {
    ++s.masked_sources;
    s.masked_sources_on_galaxy += m.on_galaxy ? 1 : 0;
    if (m.near_centre)
      s.stars_near_centre.push_back({optical.wcs.pixel_to_world(m.centre),
                                     {fits_pixel(m.centre.x), fits_pixel(m.centre.y)},
                                     m.offset_arcsec, m.fwhm_arcsec, m.peak_snr});
  }
  s.galaxy_peak_snr = p.sources.galaxy_peak_snr;
  s.ok = p.ok;
  s.reason = p.reason;

  const double rms = p.background.rms;
  // Centroid first: the others start from it.
  PixelEstimate centroid = PixelEstimate::failure(p.ok ? "not run" : p.reason);
  if (o.centroid_enabled || o.profile_enabled || o.isophote_enabled || o.symmetry_enabled)
    centroid = estimate_centroid(p, p.data, o.centroid);
  std::optional<PixelCoord> start;
  if (centroid.ok) start = centroid.centre;

  if (o.peak_enabled) {
    PhotometricMeasurement c =
        on_sky(CentreMethod::photometric_peak, estimate_peak(p, p.data, o.peak), optical, p);
    // The draws smooth and search only a box about the peak (peak_box): the
    // cut holds every pixel the peak of a draw can read.
    const PixelBox box = peak_box(p, o.peak.cap_fraction);
    const PreparedImage cut = cut_out(p, box);
    auto est = [&](const std::vector<double>& d) {
      std::vector<double> values;
      cut_values(d, p.nx, box, values);
      PixelEstimate e = estimate_peak(cut, values, o.peak);
      e.centre = {e.centre.x + box.x0, e.centre.y + box.y0};
      return e;
    };
    attach_bootstrap(c, p, est, o, box);
    s.centres.push_back(std::move(c));
  }
  if (o.centroid_enabled) {
    // Closed-form covariance (centroid.hpp): no bootstrap.
    s.centres.push_back(on_sky(CentreMethod::photometric_centroid, centroid, optical, p, "closed-form"));
  }
  if (o.profile_enabled) {
    ProfileFitOptions po = o.profile;
    if (!po.start) po.start = start;
    PhotometricMeasurement c =
        on_sky(CentreMethod::photometric_profile, fit_sersic_profile(p, p.data, rms, po), optical, p);
    s.centres.push_back(std::move(c));
  }
  if (o.isophote_enabled) {
    IsophoteOptions io = o.isophote;
    if (!io.start) io.start = start;
    // The level is fixed from the data once, so every draw follows the same isophote.
    if (p.ok && !io.level) io.level = isophote_level(p, p.data, rms, io);
    const PixelEstimate e = estimate_isophote_centre(p, p.data, rms, io);
    PhotometricMeasurement c = on_sky(CentreMethod::photometric_isophote, e, optical, p);
    // Draws start from the converged ellipse and read only near it.
    IsophoteOptions warm = io;
    std::optional<PixelBox> window;
    if (e.ok) {
      warm.start_ellipse = isophote_ellipse(e);
      window = ellipse_box(p, *warm.start_ellipse);
    }
    auto est = [&](const std::vector<double>& d) { return estimate_isophote_centre(p, d, rms, warm); };
    attach_bootstrap(c, p, est, o, window);
    s.centres.push_back(std::move(c));
  }
  if (o.symmetry_enabled) {
    SymmetryOptions so = o.symmetry;
    if (!so.start) so.start = start;
    if (so.aperture_radius_arcsec <= 0)
      so.aperture_radius_arcsec = centroid_aperture_radius(p, o.centroid);
    const PixelEstimate e = estimate_symmetry_centre(p, p.data, so);
    PhotometricMeasurement c = on_sky(CentreMethod::photometric_symmetry, e, optical, p);
    // Draws run the same search from the same start (a warm start at the
    // point estimate would find the local minimum there too often: the
    // asymmetry of a noisy image is rough, and the draws' scatter came out
    // at half the true one); their noise is needed only about the aperture.
    std::optional<PixelBox> window;
    if (e.ok) window = aperture_box(p, e.centre, so.aperture_radius_arcsec, so.start.value_or(p.guess));
    // The draws stop their searches at kSymmetryDrawTolerancePixels: each
    // simplex takes the same steps as with the point estimate's tolerance
    // and stops earlier, within about that distance of where it would have
    // ended, far inside the draws' scatter (their standard deviations moved
    // by at most 0.4%, docs/performance.md).
    // They search once, over the aperture about the point estimate (the
    // point estimate's second round centres its aperture there too), from
    // the same start with the first round's step: one round of the two.
    SymmetryOptions sd = so;
    sd.tolerance_pixels = std::max(so.tolerance_pixels, kSymmetryDrawTolerancePixels);
    if (e.ok) sd.aperture_centre = e.centre;
    // Every draw has the usable pixels of p.data, so the aperture's pixels
    // are found once (SymmetryDraws: the same centres as
    // estimate_symmetry_centre).
    std::optional<SymmetryDraws> draws;
    if (e.ok) draws.emplace(p, sd);
    auto est = [&](const std::vector<double>& d) {
      return draws ? draws->estimate(d) : PixelEstimate::failure("no symmetry centre to draw about");
    };
    attach_bootstrap(c, p, est, o, window);
    s.centres.push_back(std::move(c));
  }
  s.spread = centre_spread(s.centres);
  return s;
}

namespace {
nlohmann::json cov_json(const Eigen::Matrix2d& c) {
  return nlohmann::json::array({nlohmann::json::array({c(0, 0), c(0, 1)}),
                                nlohmann::json::array({c(1, 0), c(1, 1)})});
}
}  // namespace

nlohmann::json to_json(const PhotometricMeasurement& m) {
  const Centre& c = m.centre;
  nlohmann::json j;
  j["id"] = c.id();
  j["status"] = c.ok() ? "ok" : "failed";
  if (!c.ok()) {
    j["reason"] = c.reason;
    j["ra_deg"] = nullptr;
    j["dec_deg"] = nullptr;
    j["cov_arcsec2"] = nullptr;
  } else {
    j["ra_deg"] = c.position.ra_deg;
    j["dec_deg"] = c.position.dec_deg;
    j["x_fits"] = c.pixel_fits ? c.pixel_fits->x : 0.0;
    j["y_fits"] = c.pixel_fits ? c.pixel_fits->y : 0.0;
    j["cov_arcsec2"] = cov_json(c.covariance);
    j["sigma_east_arcsec"] = std::sqrt(std::max(c.covariance(0, 0), 0.0));
    j["sigma_north_arcsec"] = std::sqrt(std::max(c.covariance(1, 1), 0.0));
    j["uncertainty_method"] = m.uncertainty_method;
    if (m.uncertainty_method == "noise-bootstrap") j["bootstrap_draws"] = m.bootstrap_draws;
  }
  j["details"] = m.details;
  return j;
}

nlohmann::json to_json(const PhotometrySummary& s) {
  nlohmann::json j;
  j["image"] = s.image;
  j["status"] = s.status();
  if (!s.ok) j["reason"] = s.reason;
  j["psf_fwhm_arcsec"] = s.psf.known ? nlohmann::json(s.psf_fwhm_arcsec) : nlohmann::json(nullptr);
  j["psf"] = to_json(s.psf);
  j["pixel_scale_arcsec"] = s.pixel_scale_arcsec;
  j["background"] = {{"level", s.background.level},
                     {"rms", s.background.rms},
                     {"pixels_used", s.background.n_used},
                     {"iterations", s.background.iterations},
                     {"converged", s.background.converged},
                     {"method", "iterative 3-sigma clipping about the median"}};
  j["masking"] = {{"user_masked_pixels", s.user_masked_pixels},
                  {"auto_masked_pixels", s.auto_masked_pixels},
                  {"masked_sources", s.masked_sources},
                  {"masked_sources_on_galaxy", s.masked_sources_on_galaxy},
                  {"stars_near_centre", nlohmann::json::array()}};
  for (const auto& st : s.stars_near_centre)
    j["masking"]["stars_near_centre"].push_back({{"ra_deg", st.world.ra_deg},
                                                 {"dec_deg", st.world.dec_deg},
                                                 {"x_fits", st.pixel_fits.x},
                                                 {"y_fits", st.pixel_fits.y},
                                                 {"offset_from_outer_isophotes_arcsec", st.offset_arcsec},
                                                 {"fwhm_arcsec", st.fwhm_arcsec},
                                                 {"peak_snr", st.peak_snr}});
  j["galaxy_peak_snr"] = s.galaxy_peak_snr;
  j["centres"] = nlohmann::json::array();
  for (const auto& c : s.centres) j["centres"].push_back(to_json(c));
  nlohmann::json sp;
  sp["count"] = s.spread.count;
  if (s.spread.count > 0) {
    sp["mean_ra_deg"] = s.spread.mean.ra_deg;
    sp["mean_dec_deg"] = s.spread.mean.dec_deg;
  }
  if (s.spread.count >= 2) {
    sp["scatter_cov_arcsec2"] = cov_json(s.spread.scatter_cov_arcsec2);
    sp["rms_arcsec"] = s.spread.rms_arcsec;
    sp["max_separation_arcsec"] = s.spread.max_separation_arcsec;
    sp["farthest_pair"] = {s.spread.farthest_pair[0], s.spread.farthest_pair[1]};
  }
  j["spread"] = sp;
  return j;
}

}  // namespace fulcrum::photometry
