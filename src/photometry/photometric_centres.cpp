// Running every photometric centre estimator and putting the results on the
// sky (see photometric_centres.hpp).
#include "fulcrum/photometry/photometric_centres.hpp"

#include <cmath>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/settings_check.hpp"
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
                              const PreparedImage& p) {
  PhotometricMeasurement c;
  c.details = e.details;
  if (!e.ok) {
    c.centre = failed_centre(method, e.reason, kOpticalImage);
    return c;
  }
  Eigen::Matrix2d cov = Eigen::Matrix2d::Zero();
  if (e.cov_pixels) {
    cov = p.jacobian * (*e.cov_pixels) * p.jacobian.transpose();
    c.uncertainty_method = "fit-covariance";
  }
  c.centre = measured_centre(method, image.wcs.pixel_to_world(e.centre), cov, kOpticalImage);
  c.centre.pixel_fits = PixelCoord{fits_pixel(e.centre.x), fits_pixel(e.centre.y)};
  return c;
}

void attach_bootstrap(PhotometricMeasurement& c, const PreparedImage& p, const Estimator& est,
                      const PhotometryOptions& o) {
  if (!c.ok()) return;
  const BootstrapSummary b = bootstrap_centre(p, est, p.background.rms, c.id(), o.bootstrap);
  c.uncertainty_method = "noise-bootstrap";
  c.bootstrap_draws = b.succeeded;
  if (!b.ok) {
    c.centre = failed_centre(c.centre.method, "the noise bootstrap failed: " + b.reason, kOpticalImage);
    return;
  }
  c.centre.covariance = p.jacobian * b.cov_pixels * p.jacobian.transpose();
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
    auto est = [&](const std::vector<double>& d) { return estimate_peak(p, d, o.peak); };
    PhotometricMeasurement c = on_sky(CentreMethod::photometric_peak, est(p.data), optical, p);
    attach_bootstrap(c, p, est, o);
    s.centres.push_back(std::move(c));
  }
  if (o.centroid_enabled) {
    auto est = [&](const std::vector<double>& d) { return estimate_centroid(p, d, o.centroid); };
    PhotometricMeasurement c = on_sky(CentreMethod::photometric_centroid, centroid, optical, p);
    attach_bootstrap(c, p, est, o);
    s.centres.push_back(std::move(c));
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
    auto est = [&](const std::vector<double>& d) {
      return estimate_isophote_centre(p, d, rms, io);
    };
    PhotometricMeasurement c = on_sky(CentreMethod::photometric_isophote, est(p.data), optical, p);
    attach_bootstrap(c, p, est, o);
    s.centres.push_back(std::move(c));
  }
  if (o.symmetry_enabled) {
    SymmetryOptions so = o.symmetry;
    if (!so.start) so.start = start;
    if (so.aperture_radius_arcsec <= 0)
      so.aperture_radius_arcsec = centroid_aperture_radius(p, o.centroid);
    auto est = [&](const std::vector<double>& d) { return estimate_symmetry_centre(p, d, so); };
    PhotometricMeasurement c = on_sky(CentreMethod::photometric_symmetry, est(p.data), optical, p);
    attach_bootstrap(c, p, est, o);
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
