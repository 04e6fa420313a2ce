// Benchmark of the split engine (not a test): a 1024x1024 map, a scan of
// 101 x 101 centre offsets x 181 split angles plus 1e5 bootstrap draws, timed
// in one run, with the evaluations per second and the ratio against the
// baseline (a plain loop over all pixels for every grid point, timed on a
// subsample of grid points and extrapolated). Invented data: an inclined
// exponential disc with a lopsided term and noise, on a rotated grid.
//
//   OMP_NUM_THREADS=2 build/tools/bench_split [--no-aperture|--aperture ARCSEC]
#include <chrono>
#include <ctime>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <numbers>
#include <omp.h>

#include "fulcrum/robustness/bootstrap.hpp"
#include "fulcrum/core/random.hpp"
#include "fulcrum/robustness/scan.hpp"
#include "fulcrum/split/half_split.hpp"

using namespace fulcrum;
using Clock = std::chrono::steady_clock;

static double since(Clock::time_point t) { return std::chrono::duration<double>(Clock::now() - t).count(); }

int main(int argc, char** argv) {
  double aperture = 0.0;  // 0: all finite pixels (the worst case)
  for (int i = 1; i < argc; ++i)
    if (!std::strcmp(argv[i], "--aperture") && i + 1 < argc) aperture = std::atof(argv[++i]);
  const int n = 1024;
  const double pix = 0.1, rot = 30.0 * std::numbers::pi / 180.0;
  const WorldCoord centre{150.0, 20.0};
  Image img;
  img.nx = img.ny = n;
  const double cd[2][2] = {{-std::cos(rot) * pix / 3600, std::sin(rot) * pix / 3600},
                           {std::sin(rot) * pix / 3600, std::cos(rot) * pix / 3600}};
  img.wcs = CelestialWcs::from_cd("SIN", {511.3, 512.6}, centre, cd);
  img.beam = Beam{1.0, 0.8, 20.0};
  img.unit = "Jy/beam km/s";
  img.data.resize(img.size());
  Random g(42);
  const auto t_setup = Clock::now();
  for (int y = 0; y < n; ++y)
    for (int x = 0; x < n; ++x) {
      const double e = -(x - 511.3) * pix * std::cos(rot) + (y - 512.6) * pix * std::sin(rot);
      const double nn = (x - 511.3) * pix * std::sin(rot) + (y - 512.6) * pix * std::cos(rot);
      const double r = std::hypot(e, nn / 0.6);
      const double phi = std::atan2(e, nn);
      img.at(x, y) = std::exp(-r / 8.0) * (1.0 + 0.1 * std::cos(phi - 2.1)) + 0.01 * g.normal();
    }
  split::SplitOptions so;
  so.centre = centre;
  so.rms = 0.01;
  if (aperture > 0.0) so.aperture = split::ApertureSpec{aperture, 0.0, 0.6, std::nullopt};
  const split::SplitProblem pr = split::prepare_split(img, so);
  std::printf("map %dx%d, %zu pixels in the split, %.2f pixels/beam, %d threads (setup %.2f s, not timed)\n",
              n, n, pr.pixels.size(), pr.pixels_per_beam, omp_get_max_threads(), since(t_setup));

  robustness::ScanOptions sc;
  sc.tail_pa_deg = 300.0;
  sc.half_width_arcsec = 2.5;
  sc.step_arcsec = 0.05;  // 101 x 101
  sc.angle_half_width_deg = 90.0;
  sc.angle_step_deg = 1.0;  // 181 angles
  robustness::BootstrapOptions bo;
  bo.n_draws = 100000;
  bo.seed = 7;
  bo.centre_covariance << 0.09, 0.02, 0.02, 0.16;
  bo.tail_pa_deg = 300.0;
  bo.tail_pa_err_deg = 10.0;

  const std::clock_t cpu0 = std::clock();
  const auto t0 = Clock::now();
  const robustness::ScanSummary s = robustness::scan(pr, sc);
  const double t_scan = since(t0);
  const auto t1 = Clock::now();
  const robustness::BootstrapSummary b = robustness::bootstrap(pr, bo);
  const double t_boot = since(t1);
  const double total = t_scan + t_boot;
  const double cpu = double(std::clock() - cpu0) / CLOCKS_PER_SEC;
  const double evals = double(s.evaluations) + double(b.n_draws);
  std::printf("scan: %d x %d offsets x %d angles = %zu evaluations in %.3f s (fraction A>0 %.3f)\n",
              s.n_east, s.n_north, s.n_angle, s.evaluations, t_scan, s.fraction_positive);
  std::printf("bootstrap: %zu draws over %zu angle nodes in %.3f s (P(A>0) = %.4f, 68%% [%.4f, %.4f])\n",
              b.n_draws, b.angle_nodes, t_boot, b.p_positive, b.lo68, b.hi68);
  std::printf("total %.3f s for %.0f evaluations: %.3g evaluations per second  [%s 2 s]\n", total, evals,
              evals / total, total < 2.0 ? "under" : "OVER");

  std::printf("CPU time of the timed part: %.3f s over all threads (%.3f s per core on %d idle "
              "cores; wall time above includes waiting for cores other processes hold)\n",
              cpu, cpu / omp_get_max_threads(), omp_get_max_threads());
  // Baseline: a plain per-grid-point loop over all pixels (direct sum of exact
  // fractions), parallel over grid points like the engine, on a subsample.
  const int sub = 64;
  const auto t2 = Clock::now();
  double sink = 0.0;
#pragma omp parallel for reduction(+ : sink) schedule(static)
  for (int k = 0; k < sub; ++k) {
    const double a = sc.tail_pa_deg + (k % 181) - 90.0;
    const SkyOffset c{s.east[k % s.n_east], s.north[(7 * k) % s.n_north]};
    sink += split::direct_halves(pr.pixels, a * degrees, c).asymmetry();
  }
  const double t_base = since(t2);
  const double per_eval = t_base / sub;
  const double base_total = per_eval * evals;
  std::printf("baseline: %d direct evaluations in %.3f s (%.3g s each) -> %.1f s extrapolated for %.0f "
              "evaluations (checksum %.3f)\n",
              sub, t_base, per_eval, base_total, evals, sink);
  std::printf("speed-up over the baseline: %.0fx\n", base_total / total);
  return 0;
}
