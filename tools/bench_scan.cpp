// Benchmark of the scan (not a test): 101 x 101 centre offsets x 181 split
// angles on an N x N map, against a one-pass-per-angle floor timed in the same
// run. The floor is the least any per-angle method does: for every angle one
// pass over all pixels of the split (project each centre on the angle's
// normal, add its value into a histogram over the grid's range of s), one
// prefix sum, then one histogram read per grid point; its buffers are
// allocated once per thread. Scan and floor alternate `reps` times and the
// medians are compared (CPU seconds of the timed part, all threads, and wall
// seconds). Invented data: an inclined exponential disc with a lopsided term
// and noise on a rotated grid, 0.1" pixels, its scale length growing with N.
//
//   OMP_NUM_THREADS=2 build/tools/bench_scan [N=1024] [reps=3] [scan|floor|both]
//
// "scan" or "floor" runs only that side once (for whole-process timing and
// peak memory with /usr/bin/time -v). The scan's checksum (FNV-1a of the
// cube's bytes) shows whether two builds give byte-identical cubes.
#include <omp.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <ctime>
#include <numbers>
#include <string>
#include <vector>

#include "fulcrum/core/random.hpp"
#include "fulcrum/robustness/scan.hpp"
#include "fulcrum/split/half_split.hpp"

using namespace fulcrum;
using Clock = std::chrono::steady_clock;

namespace {

struct Timing {
  double wall = 0.0, cpu = 0.0;
};

template <class F>
Timing timed(F&& f) {
  const std::clock_t c0 = std::clock();
  const auto t0 = Clock::now();
  f();
  return {std::chrono::duration<double>(Clock::now() - t0).count(),
          double(std::clock() - c0) / CLOCKS_PER_SEC};
}

double median(std::vector<double> v) {
  std::sort(v.begin(), v.end());
  const std::size_t n = v.size();
  return n % 2 ? v[n / 2] : 0.5 * (v[n / 2 - 1] + v[n / 2]);
}

std::uint64_t fnv1a(const std::vector<double>& v) {
  std::uint64_t h = 1469598103934665603ULL;
  const auto* b = reinterpret_cast<const unsigned char*>(v.data());
  for (std::size_t i = 0; i < v.size() * sizeof(double); ++i) h = (h ^ b[i]) * 1099511628211ULL;
  return h;
}

// The floor: one pass over all pixels per angle into a histogram of s over the
// grid's range (bins of step/8; pixels outside add to a running total), one
// prefix sum, one read per grid point. Returns a checksum.
double one_pass_floor(const split::PixelSet& px, const robustness::ScanOptions& o) {
  const long long m = static_cast<long long>(std::floor(o.half_width_arcsec / o.step_arcsec + 1e-9));
  const long long na = static_cast<long long>(std::floor(o.angle_half_width_deg / o.angle_step_deg + 1e-9));
  const double bin = o.step_arcsec / 8.0;
  const double reach = std::sqrt(2.0) * m * o.step_arcsec;
  const long long nb = static_cast<long long>(std::ceil(2.0 * reach / bin)) + 1;
  const std::size_t n = px.size();
  const double* E = px.east.data();
  const double* N = px.north.data();
  const double* F = px.value.data();
  double sink = 0.0;
#pragma omp parallel reduction(+ : sink)
  {
    std::vector<double> hist(static_cast<std::size_t>(nb) + 1);
#pragma omp for schedule(dynamic, 1)
    for (long long ia = -na; ia <= na; ++ia) {
      const SkyOffset nv = split::leading_normal((o.tail_pa_deg + ia * o.angle_step_deg) * degrees);
      std::fill(hist.begin(), hist.end(), 0.0);
      double below = 0.0;
      for (std::size_t i = 0; i < n; ++i) {
        const double k = std::floor((nv.east * E[i] + nv.north * N[i] + reach) / bin);
        if (k < 0.0)
          below += F[i];
        else if (k < double(nb))
          hist[static_cast<std::size_t>(k)] += F[i];
      }
      double acc = below;
      for (double& h : hist) acc = (h += acc);
      for (long long in = -m; in <= m; ++in)
        for (long long ie = -m; ie <= m; ++ie) {
          const double s = (nv.east * ie + nv.north * in) * o.step_arcsec;
          const auto k = static_cast<std::size_t>(std::clamp((s + reach) / bin, 0.0, double(nb)));
          sink += hist[k];
        }
    }
  }
  return sink;
}

}  // namespace

int main(int argc, char** argv) {
  const int n = argc > 1 ? std::atoi(argv[1]) : 1024;
  const int reps = argc > 2 ? std::max(1, std::atoi(argv[2])) : 3;
  const std::string which = argc > 3 ? argv[3] : "both";
  if (n < 64 || n > 8192 || (which != "both" && which != "scan" && which != "floor")) {
    std::fprintf(stderr, "usage: bench_scan [N in 64..8192] [reps] [scan|floor|both]\n");
    return 2;
  }
  const double pix = 0.1, rot = 30.0 * std::numbers::pi / 180.0, h = 8.0 * n / 1024.0;
  const double x0 = 0.5 * (n - 1) - 0.2, y0 = 0.5 * (n - 1) + 1.1;
  const WorldCoord centre{150.0, 20.0};
  Image img;
  img.nx = img.ny = n;
  const double cd[2][2] = {{-std::cos(rot) * pix / 3600, std::sin(rot) * pix / 3600},
                           {std::sin(rot) * pix / 3600, std::cos(rot) * pix / 3600}};
  img.wcs = CelestialWcs::from_cd("SIN", {x0, y0}, centre, cd);
  img.beam = Beam{1.0, 0.8, 20.0};
  img.unit = "Jy/beam km/s";
  img.data.resize(img.size());
  Random g(42);
  for (int y = 0; y < n; ++y)
    for (int x = 0; x < n; ++x) {
      const double e = -(x - x0) * pix * std::cos(rot) + (y - y0) * pix * std::sin(rot);
      const double nn = (x - x0) * pix * std::sin(rot) + (y - y0) * pix * std::cos(rot);
      const double r = std::hypot(e, nn / 0.6);
      const double phi = std::atan2(e, nn);
      img.at(x, y) = std::exp(-r / h) * (1.0 + 0.1 * std::cos(phi - 2.1)) + 0.01 * g.normal();
    }
  split::SplitOptions so;
  so.centre = centre;
  so.rms = 0.01;
  const split::SplitProblem pr = split::prepare_split(img, so);

  robustness::ScanOptions sc;
  sc.tail_pa_deg = 300.0;
  sc.half_width_arcsec = 2.5;
  sc.step_arcsec = 0.05;  // 101 x 101
  sc.angle_half_width_deg = 90.0;
  sc.angle_step_deg = 1.0;  // 181 angles

  if (which != "both") {
    if (which == "scan") {
      const robustness::ScanSummary s = robustness::scan(pr, sc);
      std::printf("scan %dx%d: checksum %016llx\n", n, n, static_cast<unsigned long long>(fnv1a(s.asymmetry)));
    } else {
      std::printf("floor %dx%d: checksum %.6g\n", n, n, one_pass_floor(pr.pixels, sc));
    }
    return 0;
  }
  std::printf("map %dx%d, %zu pixels in the split, %d threads, %d alternating runs of each side\n", n, n,
              pr.pixels.size(), omp_get_max_threads(), reps);
  std::vector<double> sw, sc_cpu, fw, fc;
  std::uint64_t sum = 0;
  double fsum = 0.0;
  for (int r = 0; r < reps; ++r) {
    const Timing f = timed([&] { fsum = one_pass_floor(pr.pixels, sc); });
    robustness::ScanSummary s;
    const Timing t = timed([&] { s = robustness::scan(pr, sc); });
    sum = fnv1a(s.asymmetry);
    fw.push_back(f.wall);
    fc.push_back(f.cpu);
    sw.push_back(t.wall);
    sc_cpu.push_back(t.cpu);
  }
  std::printf("scan : %.3f s wall, %.3f s CPU (medians; cube checksum %016llx)\n", median(sw), median(sc_cpu),
              static_cast<unsigned long long>(sum));
  std::printf("floor: %.3f s wall, %.3f s CPU (medians; checksum %.6g)\n", median(fw), median(fc), fsum);
  std::printf("scan / floor: %.2f (wall), %.2f (CPU)\n", median(sw) / median(fw), median(sc_cpu) / median(fc));
  return 0;
}
