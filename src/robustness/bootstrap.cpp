// Bootstrap of A through the projection engine (see the header for the model).
#include "fulcrum/robustness/bootstrap.hpp"

#include <Eigen/Cholesky>
#include <algorithm>
#include <cmath>
#include <map>
#include <numeric>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/random.hpp"

namespace fulcrum::robustness {

using split::ProjectionEngine;

double percentile_sorted(const std::vector<double>& v, double q) {
  if (v.empty()) return std::numeric_limits<double>::quiet_NaN();
  const double h = (double(v.size()) - 1.0) * q;
  const std::size_t lo = static_cast<std::size_t>(std::floor(h));
  const std::size_t hi = std::min(lo + 1, v.size() - 1);
  return v[lo] + (h - double(lo)) * (v[hi] - v[lo]);
}

namespace {
// Lower Cholesky factor of a 2x2 covariance (zero for a zero covariance).
Eigen::Matrix2d chol2(const Eigen::Matrix2d& C, const std::string& what) {
  if (!C.allFinite() || C(0, 0) < 0.0 || C(1, 1) < 0.0)
    throw InputError("", what + " covariance is not a valid covariance matrix");
  Eigen::Matrix2d L = Eigen::Matrix2d::Zero();
  const double a = C(0, 0);
  if (a > 0.0) {
    L(0, 0) = std::sqrt(a);
    L(1, 0) = C(1, 0) / L(0, 0);
    const double r = C(1, 1) - L(1, 0) * L(1, 0);
    if (r < -1e-12 * (C(1, 1) + a)) throw InputError("", what + " covariance is not positive semi-definite");
    L(1, 1) = std::sqrt(std::max(0.0, r));
  } else {
    L(1, 1) = std::sqrt(C(1, 1));
  }
  return L;
}

struct Draw {
  double ce, cn;     // centre offset
  long long node;    // angle node index (relative to nominal)
  double zl, zt;     // noise deviates
};
}  // namespace

BootstrapSummary bootstrap(const split::SplitProblem& pr, const BootstrapOptions& o) {
  if (o.n_draws == 0) throw InputError("", "the number of bootstrap draws must be positive");
  if (o.tail_pa_err_deg < 0.0) throw InputError("", "the tail-PA error must not be negative");
  BootstrapSummary B;
  B.n_draws = o.n_draws;
  B.seed = o.seed;
  B.noise_included = o.noise && pr.pixels.has_variance();

  // The centres to draw from: adopted first, then the successful estimates.
  struct Source { SkyOffset c; Eigen::Matrix2d L; double w; };
  std::vector<Source> sources{{o.centre, chol2(o.centre_covariance, "the adopted centre's"), 1.0}};
  if (o.use_estimates)
    for (const auto& e : o.estimates)
      if (e.ok() && e.weight > 0.0)
        sources.push_back({pr.offset_of(e.position), chol2(e.covariance, e.id() + "'s"), e.weight});
  double wsum = 0.0;
  for (const auto& s : sources) wsum += s.w;

  double step = o.angle_node_step_deg;
  if (!(step > 0.0)) step = o.tail_pa_err_deg > 0.0 ? std::min(1.0, o.tail_pa_err_deg / 10.0) : 1.0;

  // 1. Generate every deviate in a fixed order from the one generator.
  Random g(o.seed);
  std::vector<Draw> draws(o.n_draws);
  for (auto& d : draws) {
    std::size_t k = 0;
    if (sources.size() > 1) {
      double u = g.uniform() * wsum;
      while (k + 1 < sources.size() && u >= sources[k].w) u -= sources[k++].w;
    }
    const double z1 = g.normal(), z2 = g.normal();
    const Source& src = sources[k];
    d.ce = src.c.east + src.L(0, 0) * z1;
    d.cn = src.c.north + src.L(1, 0) * z1 + src.L(1, 1) * z2;
    const double dth = o.tail_pa_err_deg * g.normal();
    d.node = std::llround(dth / step);
    d.zl = g.normal();
    d.zt = g.normal();
  }
  // 2. Group by angle node (ordered), evaluate each group with its engine.
  std::map<long long, std::vector<std::size_t>> groups;
  for (std::size_t i = 0; i < draws.size(); ++i) groups[draws[i].node].push_back(i);
  std::vector<std::pair<long long, const std::vector<std::size_t>*>> glist;
  for (const auto& [k, v] : groups) glist.push_back({k, &v});
  B.angle_nodes = glist.size();
  std::vector<double> A(draws.size());
  const double ppb = pr.pixels_per_beam;
  const bool noise = B.noise_included;
  const long long ng = static_cast<long long>(glist.size());
  // One engine per thread, rebuilt in place for every angle node.
#pragma omp parallel
  {
    ProjectionEngine e;
    split::EngineScratch scratch;
#pragma omp for schedule(dynamic, 1)
    for (long long gi = 0; gi < ng; ++gi) {
      const Angle th = (o.tail_pa_deg + glist[gi].first * step) * degrees;
      // The window: the s-range of this node's draws.
      const SkyOffset nn = split::leading_normal(th);
      split::EngineOptions eo;
      eo.with_variance = noise;
      eo.window_lo = 1e300;
      eo.window_hi = -1e300;
      for (std::size_t i : *glist[gi].second) {
        const double s = nn.east * draws[i].ce + nn.north * draws[i].cn;
        eo.window_lo = std::min(eo.window_lo, s);
        eo.window_hi = std::max(eo.window_hi, s);
      }
      e.rebuild(pr.pixels, th, eo, &scratch);
      for (std::size_t i : *glist[gi].second) {
        const Draw& d = draws[i];
        const split::HalfSums h = e.halves(SkyOffset{d.ce, d.cn});
        double L = h.leading, T = h.trailing;
        if (noise) {
          L += std::sqrt(ppb * h.leading_var) * d.zl;
          T += std::sqrt(ppb * h.trailing_var) * d.zt;
        }
        A[i] = (L - T) / (L + T);
      }
    }
  }
  // 3. Statistics (fixed order: independent of threads).
  std::size_t pos = 0;
  double sum = 0.0, sum2 = 0.0;
  for (double a : A) {
    pos += a > 0.0 ? 1 : 0;
    sum += a;
  }
  B.mean = sum / double(A.size());
  for (double a : A) sum2 += (a - B.mean) * (a - B.mean);
  B.stddev = A.size() > 1 ? std::sqrt(sum2 / double(A.size() - 1)) : 0.0;
  B.p_positive = double(pos) / double(A.size());
  if (o.keep_draws) B.draws = A;
  std::sort(A.begin(), A.end());
  B.median = percentile_sorted(A, 0.5);
  B.lo68 = percentile_sorted(A, 0.16);
  B.hi68 = percentile_sorted(A, 0.84);
  B.lo95 = percentile_sorted(A, 0.025);
  B.hi95 = percentile_sorted(A, 0.975);
  return B;
}

nlohmann::json to_json(const BootstrapSummary& b) {
  return {{"n_draws", b.n_draws},       {"seed", b.seed},
          {"p_positive", b.p_positive}, {"median", b.median},
          {"mean", b.mean},             {"stddev", b.stddev},
          {"interval68", {b.lo68, b.hi68}},
          {"interval95", {b.lo95, b.hi95}},
          {"angle_nodes", b.angle_nodes},
          {"noise_included", b.noise_included}};
}

}  // namespace fulcrum::robustness
