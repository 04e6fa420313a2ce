// The calibration mocks' kinematic re-fit with shared samples and smearing
// grids (see include/fulcrum/calibration/mock_refit.hpp).
#include "fulcrum/calibration/mock_refit.hpp"

#include <cmath>

#include "fulcrum/kinematics/footprint.hpp"

namespace fulcrum::calibration {

MockRefit::MockRefit(const Image& velocity, const Image* velocity_error, std::vector<Image> set_models,
                     const MockRefitSetup& setup)
    : velocity_(velocity), models_(std::move(set_models)), truth_(setup.truth), beam_(setup.beam) {
  if (beam_ && !(beam_->bmaj_arcsec > 0 && beam_->bmin_arcsec > 0)) beam_.reset();
  samples_ = kinematics::samples_from_image(velocity, velocity_error, truth_);
  pixel_sigma_.assign(velocity.size(), std::nan(""));
  if (samples_.has_errors)
    for (std::size_t i = 0; i < samples_.size(); ++i)
      pixel_sigma_[static_cast<std::size_t>(samples_.x[i]) + static_cast<std::size_t>(velocity.nx) * samples_.y[i]] =
          samples_.sigma[i];

  auto& ko = options_;
  ko.method = kinematics::Method::rings;
  ko.ring_by_ring = false;
  ko.centre_guess = truth_;
  ko.pa_guess_deg = setup.pa_deg;
  ko.inc_guess_deg = setup.inc_deg;
  ko.vsys_guess_kms = setup.vsys_kms;
  ko.starts.enabled = false;
  ko.expected_residual_fraction = setup.expected_residual_fraction;
  ko.correct_beam_smearing = setup.correct_beam_smearing && beam_.has_value();

  grids_.resize(models_.size());
  if (ko.correct_beam_smearing && samples_.size() > 0)
    for (std::size_t k = 0; k < models_.size(); ++k)
      grids_[k] = kinematics::make_smearing_grid(velocity_, samples_, truth_, *beam_, &models_[k]);
}

kinematics::KinematicFit MockRefit::fit(const std::vector<double>& mock_velocity, int set) const {
  kinematics::VelocitySamples s = samples_;
  const std::size_t nx = static_cast<std::size_t>(velocity_.nx);
  for (std::size_t i = 0; i < s.size(); ++i)
    s.velocity[i] = mock_velocity[static_cast<std::size_t>(s.x[i]) + nx * static_cast<std::size_t>(s.y[i])];
  // A mock pixel can be blank where the real one is not (no emission left
  // under the smeared model): drop it before the cleaning, as reading would.
  bool dropped = false;
  {
    std::size_t w = 0;
    for (std::size_t i = 0; i < s.size(); ++i) {
      if (!std::isfinite(s.velocity[i])) {
        dropped = true;
        continue;
      }
      s.east[w] = s.east[i], s.north[w] = s.north[i], s.velocity[w] = s.velocity[i];
      s.sigma[w] = s.sigma[i], s.x[w] = s.x[i], s.y[w] = s.y[i];
      ++w;
    }
    s.east.resize(w), s.north.resize(w), s.velocity.resize(w), s.sigma.resize(w), s.x.resize(w), s.y.resize(w);
  }
  const std::size_t before = s.size();
  kinematics::clean_footprint(s, options_.footprint);
  dropped = dropped || s.size() != before;

  const kinematics::SmearingGrid* grid = nullptr;
  std::optional<kinematics::SmearingGrid> own;
  const std::size_t k = static_cast<std::size_t>(set);
  if (options_.correct_beam_smearing && s.size() > 0 && k < grids_.size() && grids_[k]) {
    if (dropped) {
      own = kinematics::make_smearing_grid(velocity_, s, truth_, *beam_, &models_[k]);
      grid = &*own;
    } else {
      grid = &*grids_[k];
    }
  }
  return kinematics::fit_kinematics_samples(s, OffsetFrame(truth_), velocity_.wcs, options_, grid);
}

}  // namespace fulcrum::calibration
