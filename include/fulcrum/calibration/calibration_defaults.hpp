// How much matched-mock calibration (calibration.hpp) a galaxy gets when
// nobody says otherwise: the defaults of `fulcrum analyse --calibrate`, of
// the manifest key `calibrate` (so of `fulcrum run` and `fulcrum demo`) and
// of CalibrationOptions. 0 mocks turns the calibration off.
//
// Chosen so that the calibration adds a few CPU seconds to a galaxy of about
// 200 x 200 pixels (docs/performance.md has the measured cost per mock): the
// verdict's false-robust gate (robustness::apply_calibration, at most 5% of
// the symmetric mocks called robust or reversed) is then read off this many
// symmetric mocks, with a binomial resolution of 1 / kDefaultCalibrationMocks.
#pragma once

#include <cstddef>

namespace fulcrum::calibration {

inline constexpr int kDefaultCalibrationMocks = 40;  // per set (symmetric and lopsided)
// A calibration without shared re-fits (CalibrationOptions::shared_refits;
// in `analyse` the mocks adopt the centre bootstrap's) re-fits the kinematic
// centre on every kDefaultRefitEvery-th mock (a re-fit costs about 8 times
// the rest of a mock); the others adopt the true centre moved by a draw from
// the real fit's covariance. The re-fitted quarter measures the centre
// coverage and the re-fit failures.
inline constexpr std::size_t kDefaultRefitEvery = 4;
// Mocks of the fitted disc re-fitted to check the kinematic centre's error
// (bootstrap_centre_covariance); the mean m^2 of 24 has a relative error of
// about 20%. The calibration's mocks adopt the same re-fits.
inline constexpr std::size_t kDefaultCentreRefits = 24;

}  // namespace fulcrum::calibration
