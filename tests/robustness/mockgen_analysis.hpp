// Analyse one mock galaxy written by tests/python/mockgen.py (an independent
// generator: FFT beam-correlated noise, moment-1 velocities, 3-sigma
// clipping) the way a user would: fit the kinematic centre with the
// library's defaults, then run the robustness analysis about it with the
// tail PA from the truth and every detected pixel (no aperture, like the
// truth's expected footprint). Shared by the coverage test
// (test_split_coverage.cpp) and tools/study_split_coverage.cpp.
#pragma once

#include <fstream>
#include <string>

#include <nlohmann/json.hpp>

#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/kinematics/kinematic_fit.hpp"
#include "fulcrum/robustness/analysis.hpp"

namespace fulcrum::test {

struct MockgenRun {
  double clip_snr = 3.0;       // the generator clips at 3 rms
  std::size_t draws = 2000;
  double tail_err_deg = 0.0;   // the truth's tail PA is exact
  double noise_correlation_beams = 2.0;  // white noise convolved with the beam (mockgen.py)
  // true: split about the truth's centre with zero covariance and no
  // kinematic fit, which isolates the map-noise part of the error bars.
  bool true_centre = false;
};

// One JSON object: A, sigma_A (split formula and bootstrap), intervals, P,
// verdict, the truth's A_expected; "centre_status" != "ok" when the fit failed.
inline nlohmann::json analyse_mockgen(const std::string& dir, const MockgenRun& run) {
  const auto truth = nlohmann::json::parse(std::ifstream(dir + "/truth.json"));
  const Image line = read_image(dir + "/intensity.fits");
  const Image line_err = read_image(dir + "/intensity_error.fits");
  const Image vel = read_image(dir + "/velocity.fits");
  const Image vel_err = read_image(dir + "/velocity_error.fits");  // read even when unused: the files must be valid
  nlohmann::json out = {{"dir", dir}, {"A_expected", truth["A_expected"]}, {"preset", truth["preset"]}};
  const WorldCoord truth_centre{truth["centre"]["ra_deg"].get<double>(), truth["centre"]["dec_deg"].get<double>()};
  Centre centre = measured_centre(CentreMethod::external, truth_centre, Eigen::Matrix2d::Zero(), "truth");
  if (!run.true_centre) {
    const kinematics::KinematicOptions ko;
    const auto fit = kinematics::fit_kinematics(vel, &vel_err, ko, &line);
    out["centre_status"] = fit.status;
    if (fit.status != "ok" || !fit.centre) return out;
    centre = *fit.centre;
  } else {
    out["centre_status"] = "ok";
  }
  robustness::AnalysisOptions ao;
  ao.galaxy = dir;
  ao.adopted = measured_centre(run.true_centre ? CentreMethod::external : CentreMethod::kinematic_rings,
                               centre.position, centre.covariance, run.true_centre ? "truth" : "velocity map");
  if (run.true_centre) ao.adopted.label = "true";
  ao.tail_pa_deg = truth["tail_pa_deg"].get<double>();
  ao.tail_pa_err_deg = run.tail_err_deg;
  ao.error_map = &line_err;
  ao.clip_snr = run.clip_snr;
  ao.noise_correlation_beams = run.noise_correlation_beams;
  ao.settings.n_draws = run.draws;
  ao.settings.seed = 1;
  const auto a = robustness::analyse(line, ao);
  const SkyOffset d = OffsetFrame(truth_centre).to_offset(centre.position);
  const Eigen::Matrix2d& C = centre.covariance;
  out.update({{"A", a.split.asymmetry}, {"sigma_A_split", a.split.asymmetry_err},
              {"sigma_A_boot", a.bootstrap.stddev}, {"lo68", a.bootstrap.lo68}, {"hi68", a.bootstrap.hi68},
              {"lo95", a.bootstrap.lo95}, {"hi95", a.bootstrap.hi95}, {"P", a.bootstrap.p_positive},
              {"verdict", robustness::verdict_name(a.verdict.verdict)}, {"reason", a.verdict.reason},
              {"centre_offset_arcsec", {d.east, d.north}}, {"centre_cov", {C(0, 0), C(0, 1), C(1, 1)}}});
  return out;
}

}  // namespace fulcrum::test
