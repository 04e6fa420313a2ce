// Where the PSF size of an optical image comes from, in order of trust:
//   "given"          the caller's value (--psf-fwhm), error unknown (0)
//   "header-beam"    the image's BMAJ/BMIN (geometric mean), error unknown
//   "header-card"    a seeing card: PSF_FWHM, then SEEING, then FWHM. These
//                    names are common practice in observatory and survey
//                    headers (recalled from memory, not from a standard).
//                    The unit is taken from the card's comment: "pix" means
//                    pixels (times the pixel scale), "arcsec" or '"' means
//                    arcsec; PSF_FWHM and SEEING without a unit are taken
//                    as arcsec (common practice), a bare FWHM is ambiguous
//                    and not used. Values outside [0.5 pixel, 60 arcsec]
//                    are not used.
//   "measured"       the median FWHM of the image's stars with its error
//                    (psf_estimate.hpp)
//   "not-available"  none of the above; `reason` says why.
// Sizes are FWHM in arcsec on the sky.
#pragma once

#include <cstdint>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <vector>

#include "fulcrum/io/image.hpp"
#include "fulcrum/photometry/psf_estimate.hpp"

namespace fulcrum::photometry {

struct PsfSize {
  bool known = false;
  double fwhm_arcsec = 0.0;
  double fwhm_err_arcsec = 0.0;  // 0 when the source gives none
  std::string source = "not-available";
  std::string detail;            // e.g. "SEEING = 1.1 arcsec", "median of 7 stars"
  std::optional<PsfEstimate> measured;  // when stars were measured
};

// A keyword's value and comment from 80-character header records.
struct HeaderEntry {
  std::string value, comment;
};
std::optional<HeaderEntry> header_entry(const std::string& header_cards, const std::string& key);

// The PSF size from a seeing card, or nothing (`why` says what was skipped).
std::optional<double> psf_from_header_card(const Image& image, double pixel_scale_arcsec,
                                           std::string* detail);

// `given_fwhm_arcsec` <= 0: not given. `exclude`: pixels the star search skips.
PsfSize determine_psf_size(const Image& image, double given_fwhm_arcsec,
                           const std::vector<std::uint8_t>* exclude,
                           const PsfEstimateOptions& options = {});

nlohmann::json to_json(const PsfSize& psf);

}  // namespace fulcrum::photometry
