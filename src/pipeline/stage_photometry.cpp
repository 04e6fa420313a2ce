// The photometry stage: every photometric centre on the optical image (see
// include/fulcrum/pipeline/galaxy_stages.hpp).
#include "fulcrum/pipeline/galaxy_stages.hpp"

namespace fulcrum::pipeline {

namespace {

constexpr std::uint64_t kPhotometryStream = 0x70686f746f6d6574ull;  // "photomet"

}  // namespace

PhotometryResult measure_photometry(const GalaxyMaps& maps, const GalaxyInput& in, std::uint64_t seed,
                                    const Centre* kinematic_rings, std::optional<Beam> beam) {
  PhotometryResult r;
  photometry::PhotometryOptions po;
  if (in.psf_fwhm_arcsec) po.psf_fwhm_arcsec = *in.psf_fwhm_arcsec;
  po.bootstrap.seed = seed ^ kPhotometryStream;  // a stream of its own
  r.summary = photometry::measure_photometric_centres(*maps.optical, maps.optical_mask ? &*maps.optical_mask : nullptr,
                                                      po);
  for (const auto& c : r.summary.centres) r.centres.push_back(c.centre);
  if (kinematic_rings && kinematic_rings->ok()) {
    photometry::ComparisonOptions co;
    co.beam = beam;
    co.distance_mpc = in.distance_mpc;
    r.comparison = photometry::compare_with_dynamical(r.summary, *kinematic_rings, co);
  }
  return r;
}

}  // namespace fulcrum::pipeline
