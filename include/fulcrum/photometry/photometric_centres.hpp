// Every photometric centre of a galaxy on an optical image, on the sky.
//
// measure_photometric_centres() prepares the image (sky, masks, galaxy; see
// prepared_image.hpp) and runs the five estimators:
//   photometric-peak      peak.hpp        uncertainty: noise bootstrap
//   photometric-centroid  centroid.hpp    uncertainty: closed form
//   photometric-profile   profile_fit.hpp uncertainty: fit covariance (Ceres)
//   photometric-isophote  isophote.hpp    uncertainty: noise bootstrap
//   photometric-symmetry  symmetry.hpp    uncertainty: noise bootstrap
// Each result carries RA/Dec (degrees, the image's frame), the FITS pixel
// position (first pixel centre = 1), the 2x2 covariance in arcsec^2 on
// (east, north) -- C_sky = J C_pix J^T with J = d(east, north)/d(x, y) --,
// `uncertainty_method` ("fit-covariance", "closed-form" or
// "noise-bootstrap"), and a status
// ("ok" or "failed") with a reason when it failed. The profile, isophote and
// symmetry estimators start from the centroid when it succeeded.
//
// The bootstraps' draws add noise only where an estimator reads
// (bootstrap.hpp): the peak's draws smooth and search a box about the
// peak, the isophote's start from the converged ellipse (no search for the
// level) and read near it, the symmetry's read its apertures; the boxes are
// in photometric_centres.cpp.
//
// The whole image being unusable (no WCS, too small, a mask on another grid)
// is an InputError; an unknown PSF size, a flat image, no galaxy or a
// saturated core is a status: the summary's `status` is "refused", with the reason, and
// every estimator failed with it.
//
// The spread among the successful estimators (their scatter about their
// mean, on the sky) is the systematic part of "where is the centre".
#pragma once

#include <Eigen/Dense>
#include <cstdint>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "fulcrum/io/image.hpp"
#include "fulcrum/photometry/bootstrap.hpp"
#include "fulcrum/photometry/centroid.hpp"
#include "fulcrum/photometry/isophote.hpp"
#include "fulcrum/photometry/peak.hpp"
#include "fulcrum/photometry/prepared_image.hpp"
#include "fulcrum/photometry/profile_fit.hpp"
#include "fulcrum/photometry/psf_size.hpp"
#include "fulcrum/photometry/symmetry.hpp"
#include "fulcrum/sky/centre.hpp"

namespace fulcrum::photometry {

struct PhotometryOptions {
  // PSF FWHM (arcsec); <= 0: the image's beam (BMAJ/BMIN), a seeing card,
  // or measured from the image's stars (psf_size.hpp); when none works the
  // summary is "refused" with the reason.
  double psf_fwhm_arcsec = 0.0;
  PsfEstimateOptions psf_estimate;
  PreparationOptions preparation;  // its psf_fwhm_arcsec is set from the above
  PeakOptions peak;
  CentroidOptions centroid;
  ProfileFitOptions profile;
  IsophoteOptions isophote;
  SymmetryOptions symmetry;
  BootstrapOptions bootstrap;  // draws, seed
  bool peak_enabled = true, centroid_enabled = true, profile_enabled = true,
       isophote_enabled = true, symmetry_enabled = true;
};

// One estimator's result: the centre in the one centre type (sky/centre.hpp:
// method photometric_*, RA/Dec, covariance in arcsec^2 on (east, north),
// FITS pixel, status and reason) and how its uncertainty was found.
struct PhotometricMeasurement {
  Centre centre;
  std::string uncertainty_method;  // "fit-covariance", "closed-form" or "noise-bootstrap"
  int bootstrap_draws = 0;         // succeeded draws, for the bootstrap
  nlohmann::json details = nlohmann::json::object();
  bool ok() const { return centre.ok(); }
  std::string id() const { return centre.id(); }
};

struct CentreSpread {
  int count = 0;                 // successful estimators
  WorldCoord mean;               // mean position of the successful estimators
  Eigen::Matrix2d scatter_cov_arcsec2 = Eigen::Matrix2d::Zero();  // about the mean (n-1)
  double rms_arcsec = 0.0;       // sqrt(trace of the scatter covariance)
  double max_separation_arcsec = 0.0;
  std::string farthest_pair[2];
};

// A point source near the galaxy's centre that was masked (central_star.hpp).
struct StarNearCentre {
  WorldCoord world;
  PixelCoord pixel_fits;          // 1-based
  double offset_arcsec = 0.0;     // from the centre of the outer isophotes
  double fwhm_arcsec = 0.0;       // fitted
  double peak_snr = 0.0;
};

struct PhotometrySummary {
  bool ok = false;               // the galaxy was measurable at all
  std::string reason;            // when !ok
  std::string image;             // path, for the report
  double psf_fwhm_arcsec = 0.0;
  PsfSize psf;                   // where the PSF size came from
  double pixel_scale_arcsec = 0.0;
  BackgroundSummary background;
  int user_masked_pixels = 0;
  int auto_masked_pixels = 0;
  int masked_sources = 0;
  int masked_sources_on_galaxy = 0;
  std::vector<StarNearCentre> stars_near_centre;
  double galaxy_peak_snr = 0.0;
  std::vector<PhotometricMeasurement> centres;
  CentreSpread spread;
  std::string status() const { return ok ? "measured" : "refused"; }
  const PhotometricMeasurement* find(const std::string& id) const;
};

PhotometrySummary measure_photometric_centres(const Image& optical, const Image* mask,
                                              const PhotometryOptions& options);

// Spread of the successful centres among `centres`.
CentreSpread centre_spread(const std::vector<PhotometricMeasurement>& centres);

nlohmann::json to_json(const PhotometricMeasurement& c);
nlohmann::json to_json(const PhotometrySummary& s);

}  // namespace fulcrum::photometry
