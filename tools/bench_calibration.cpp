// Benchmark of the matched-mock calibration: a 200x200 synth galaxy, N mocks
// per set (default 500), centre re-fitted on every k-th mock (default 1), or,
// with refit_every 0, the way `analyse` calibrates: the centre re-fit
// bootstrap's 24 re-fits first (timed apart), shared by the mocks.
// Usage: bench_calibration [mocks_per_set] [refit_every] [grid] [no-setup]
// Prints the wall time, the process CPU time of the calibration (all
// threads), the CPU time of the per-galaxy set-up alone (a calibration of 1
// mock per set without re-fits, subtracted from the total), the CPU seconds
// per mock, and the calibration numbers; "no-setup" skips the set-up
// measurement (for whole-process comparisons). Compare builds by running both
// alternately (docs/performance.md). Not a test.
#include <chrono>
#include <ctime>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <numbers>
#include <string>

#include "fulcrum/calibration/calibration.hpp"
#include "fulcrum/synth/mock_galaxy.hpp"

using namespace fulcrum;

int main(int argc, char** argv) {
  const std::size_t n = argc > 1 ? std::strtoul(argv[1], nullptr, 10) : 500;
  const std::size_t every = argc > 2 ? std::strtoul(argv[2], nullptr, 10) : 1;
  const int grid = argc > 3 ? std::atoi(argv[3]) : 200;
  synth::MockGalaxy g;
  g.seed = 42;
  g.grid.nx = g.grid.ny = grid;
  g.grid.pixel_arcsec = 0.25;
  g.leading_excess = 0.15;
  g.tail_flux_fraction = 0.0;
  g.optical.enabled = false;
  const auto p = synth::make_mock(g);
  calibration::MatchedInputs in;
  in.galaxy = "benchmark disc";
  in.intensity = &p.intensity;
  in.intensity_error = &p.intensity_error;
  in.velocity = &p.velocity;
  in.velocity_error = &p.velocity_error;
  Eigen::Matrix2d cov;
  cov << 0.04, 0.0, 0.0, 0.04;
  in.centre = measured_centre(CentreMethod::kinematic_rings, {g.ra_deg, g.dec_deg}, cov, "velocity map");
  in.pa_deg = g.pa_deg;
  in.inc_deg = g.inc_deg;
  in.vsys_kms = g.vsys_kms;
  for (double r = 0.5; r <= g.disc_radius_arcsec; r += 1.0) {
    in.ring_radius_arcsec.push_back(r);
    in.ring_vrot_kms.push_back(g.vflat_kms * 2.0 / std::numbers::pi * std::atan(r / g.r_turn_arcsec));
  }
  in.tail_pa_deg = g.tail_pa_deg;
  in.tail_pa_err_deg = g.tail_pa_err_deg;
  in.measured_asymmetry = 0.08;
  split::ApertureSpec ap;
  ap.radius_arcsec = g.disc_radius_arcsec;
  ap.pa_deg = g.pa_deg;
  ap.axis_ratio = std::cos(g.inc_deg * std::numbers::pi / 180.0);
  in.aperture = ap;
  calibration::CalibrationOptions co;
  co.n_mocks = n;
  co.seed = 7;
  co.refit_every = every > 0 ? every : 1;
  co.progress = false;
  auto cpu_now = [] { return static_cast<double>(std::clock()) / CLOCKS_PER_SEC; };
  double bootstrap_cpu = 0.0;
  if (every == 0) {
    const double b0 = cpu_now();
    calibration::CentreBootstrapOptions bo;
    const auto b = calibration::bootstrap_centre_covariance(in, bo);
    bootstrap_cpu = cpu_now() - b0;
    co.shared_refits = b.outcomes;
    co.centre_covariance_scale2 = b.scale2;
    std::printf("centre re-fit bootstrap: %zu re-fits (%zu failed), %.3f s CPU\n", b.refits, b.failed,
                bootstrap_cpu);
  }
  calibration::CalibrationOptions one = co;
  one.n_mocks = 1;
  one.refit_every = 1000000000;  // mock 0 is still re-fitted: the set-up plus two mocks
  const bool measure_setup = !(argc > 4 && std::string(argv[4]) == "no-setup");
  const double c0 = cpu_now();
  if (measure_setup) (void)calibration::calibrate(in, one);
  const double setup_cpu = cpu_now() - c0;
  const double c1 = cpu_now();
  const auto t0 = std::chrono::steady_clock::now();
  auto s = calibration::calibrate(in, co);
  const double sec = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
  const double cpu = cpu_now() - c1;
  const std::string how = every == 0 ? "centres from the shared re-fits" : "centre re-fit every " + std::to_string(every);
  std::printf("%dx%d grid, %zu mocks per set, %s: %.2f s wall, %.2f s CPU; set-up with 2 "
              "mocks %.3f s CPU; %.4f s CPU per mock beyond it\n",
              grid, grid, n, how.c_str(), sec, cpu, setup_cpu, (cpu - setup_cpu) / (2.0 * n - 2.0));
  std::printf("%s\n", calibration::to_json(s).dump(2).c_str());
  return 0;
}
