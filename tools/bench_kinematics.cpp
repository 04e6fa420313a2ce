// Benchmark of the kinematic fit: a 400x400 velocity map (0.25" pixels, a
// 1.2" beam, a disc of 45" radius filling most of the map), the global
// tilted-ring fit plus the ring-by-ring fit, on one core. Prints the median
// wall time of several repeats. The map comes from the tests' tilted-ring
// generator (tests/kinematics/velocity_field_mock.hpp).
//
//   cmake --build build --target bench_kinematics && OMP_NUM_THREADS=1 build/tools/bench_kinematics
#include <algorithm>
#include <chrono>
#include <ctime>
#include <cstdio>
#include <vector>

#include "fulcrum/kinematics/kinematic_fit.hpp"
#include "kinematics/velocity_field_mock.hpp"

int main(int argc, char** argv) {
  using namespace fulcrum;
  using namespace fulcrum::kinematics;
  const int repeats = argc > 1 ? std::atoi(argv[1]) : 5;
  test::VelocityMockSpec spec;
  spec.nx = spec.ny = 400;
  spec.pixel_arcsec = 0.25;
  spec.beam = Beam{1.2, 1.2, 0.0};
  spec.disc_radius_arcsec = 45.0;
  spec.scale_length_arcsec = 15.0;
  spec.r_turn_arcsec = 6.0;
  spec.inc_deg = 50;
  spec.rotation_deg = 25;
  spec.noise_kms = 5.0;
  spec.smear = false;  // the smearing of the mock is not what is timed
  spec.centre_offset = {1.3, -0.8};
  const auto mock = test::make_velocity_mock(spec);
  std::printf("map %dx%d, %zu finite pixels, beam %.2f\", pixel %.2f\"\n", spec.nx, spec.ny,
              mock.velocity.finite_count(), spec.beam.fwhm_arcsec(), spec.pixel_arcsec);

  for (const char* what : {"global + ring-by-ring", "global + ring-by-ring + harmonic"}) {
    KinematicOptions opt;
    opt.method = std::string(what).find("harmonic") != std::string::npos ? Method::both : Method::rings;
    std::vector<double> times, cpu;
    KinematicFit fit;
    for (int r = 0; r < repeats; ++r) {
      const std::clock_t c0 = std::clock();
      const auto t0 = std::chrono::steady_clock::now();
      fit = fit_kinematics(mock.velocity, &mock.velocity_error, opt);
      const auto t1 = std::chrono::steady_clock::now();
      times.push_back(std::chrono::duration<double>(t1 - t0).count());
      cpu.push_back(static_cast<double>(std::clock() - c0) / CLOCKS_PER_SEC);
    }
    std::sort(times.begin(), times.end());
    std::sort(cpu.begin(), cpu.end());
    std::printf("%-36s wall median %.3f s (min %.3f s), CPU median %.3f s (min %.3f s) over %d "
                "runs: status %s, %d pixels, %d rings, %d passes, %d iterations, centre error "
                "%.4f\"\n",
                what, times[times.size() / 2], times.front(), cpu[cpu.size() / 2], cpu.front(),
                repeats, fit.status.c_str(),
                fit.diagnostics.pixels_used, fit.diagnostics.rings_used, fit.diagnostics.passes,
                fit.diagnostics.iterations,
                fit.centre ? separation_arcsec(fit.centre->position, mock.true_centre) : -1.0);
  }
  return 0;
}
