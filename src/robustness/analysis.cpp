// One galaxy's split-robustness analysis (see the header).
#include "fulcrum/robustness/analysis.hpp"

#include "fulcrum/core/error.hpp"

namespace fulcrum::robustness {

AnalysisSummary analyse(const Image& map, const AnalysisOptions& o) {
  AnalysisSummary a;
  a.galaxy = o.galaxy;
  split::SplitOptions so;
  so.centre = o.adopted.position;
  so.aperture = o.aperture;
  so.rms = o.rms;
  so.error_map = o.error_map;
  so.clip_snr = o.clip_snr;
  so.noise_correlation_beams = o.noise_correlation_beams;
  const split::SplitProblem pr = split::prepare_split(map, so);
  const OffsetFrame frame(o.adopted.position);

  a.tail_pa_err_deg = o.tail_pa_err_deg;
  if (o.tail_pa_deg) {
    a.tail_pa_deg = *o.tail_pa_deg;
  } else {
    if (!o.tail_image) throw InputError("", "no tail PA and no tail image: cannot place the split line");
    TailDirectionOptions t;
    t.centre = o.adopted.position;
    if (pr.aperture) {
      t.disc = *pr.aperture;
    } else {
      throw InputError("", "estimating the tail PA from an image needs the disc aperture");
    }
    t.rms = o.rms;
    t.seed = o.seed;
    a.tail = tail_direction(*o.tail_image, t);
    a.tail_pa_deg = a.tail->tail_pa_deg;
    a.tail_pa_err_deg = a.tail->tail_pa_err_deg;
  }
  const Angle tail = a.tail_pa_deg * degrees;
  a.split = split::split_at(pr, tail);

  FlipOptions fo;
  fo.tail_pa_deg = a.tail_pa_deg;
  fo.tail_pa_err_deg = a.tail_pa_err_deg;
  fo.angle_step_deg = o.verdict.angle_step_deg;
  a.flip = flip_distance(pr, fo);

  VerdictInput vi;
  vi.centre = {};
  vi.centre_covariance = o.adopted.covariance;
  vi.tail_pa_deg = a.tail_pa_deg;
  vi.tail_pa_err_deg = a.tail_pa_err_deg;
  vi.failures = o.failures;
  vi.galaxy = o.galaxy;
  if (!o.adopted.ok) vi.failures.push_back("the adopted centre (" + o.adopted.name + ") failed");
  for (const auto& e : o.estimates) {
    CentreEstimate ce;
    ce.name = e.name;
    ce.offset = frame.to_offset(e.position);
    ce.covariance = e.covariance;
    ce.weight = e.weight;
    ce.ok = e.ok;
    vi.estimates.push_back(ce);
  }

  BootstrapOptions bo;
  bo.n_draws = o.n_draws;
  bo.seed = o.seed;
  bo.centre_covariance = o.adopted.covariance;
  bo.use_estimates = o.bootstrap_estimates;
  bo.estimates = vi.estimates;
  bo.tail_pa_deg = a.tail_pa_deg;
  bo.tail_pa_err_deg = a.tail_pa_err_deg;
  a.bootstrap = bootstrap(pr, bo);

  a.verdict = decide(pr, a.split, a.flip, a.bootstrap, vi, o.verdict);

  if (o.run_scan) {
    ScanOptions sc = o.scan;
    sc.tail_pa_deg = a.tail_pa_deg;
    sc.centre = {};
    a.scan = scan(pr, sc);
  }
  return a;
}

nlohmann::json to_json(const AnalysisSummary& a) {
  nlohmann::json j = {{"galaxy", a.galaxy},
                      {"tail_pa_deg", a.tail_pa_deg},
                      {"tail_pa_err_deg", a.tail_pa_err_deg},
                      {"split", split::to_json(a.split)},
                      {"flip", to_json(a.flip)},
                      {"bootstrap", to_json(a.bootstrap)},
                      {"verdict", to_json(a.verdict)}};
  if (a.tail) j["tail_direction"] = to_json(*a.tail);
  if (a.scan) j["scan"] = to_json(*a.scan);
  return j;
}

}  // namespace fulcrum::robustness
