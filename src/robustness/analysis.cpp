// One galaxy's split-robustness chain (see the header).
#include "fulcrum/robustness/analysis.hpp"

#include <algorithm>
#include <cmath>

#include "fulcrum/core/error.hpp"
#include "fulcrum/sky/offset_frame.hpp"

namespace fulcrum::robustness {

namespace {

constexpr std::uint64_t kTailStream = 0x7461696cull;  // "tail"

// The tail PA and its error: given, or measured on the tail image.
void place_tail(const split::SplitProblem& pr, const AnalysisOptions& o, AnalysisSummary& a) {
  a.tail_pa_err_deg = o.tail_pa_err_deg;
  if (o.tail_pa_deg) {
    a.tail_pa_deg = *o.tail_pa_deg;
    return;
  }
  if (!o.tail_image) throw InputError("", "no tail PA and no tail image: cannot place the split line");
  if (!pr.aperture)
    throw InputError(o.tail_image->path, "estimating the tail PA from an image needs the kinematic disc");
  TailDirectionOptions t;
  t.centre = o.adopted.position;
  t.disc = *pr.aperture;
  t.rms = o.rms;
  t.seed = o.settings.seed ^ kTailStream;
  a.tail = tail_direction(*o.tail_image, t);
  a.tail_pa_deg = a.tail->tail_pa_deg;
  a.tail_pa_err_deg = a.tail->tail_pa_err_deg;
}

// A over the offset plane (half width from the beam, the plausible centres
// and the flip distance) and the flip distance over a wide angle range.
RobustnessFigureData figure_data(const split::SplitProblem& pr, const AnalysisSummary& a,
                                 const FlipOptions& fo) {
  RobustnessFigureData f;
  const double fwhm = pr.beam ? pr.beam->fwhm_arcsec() : 1.0;
  double half = std::max(2.0 * fwhm, 1.3 * a.verdict.plausible.farthest_plausible_arcsec);
  if (a.flip.nominal.found) half = std::max(half, 1.25 * a.flip.nominal.distance_arcsec);
  half = std::min(half, 6.0 * fwhm);
  ScanOptions sc;
  sc.tail_pa_deg = a.tail_pa_deg;
  sc.half_width_arcsec = half;
  sc.step_arcsec = half / 50.0;
  sc.angle_half_width_deg = 0.0;
  f.plane = scan(pr, sc);
  FlipOptions wide = fo;
  wide.tail_pa_err_deg = std::min(90.0, std::max(30.0, 2.0 * a.tail_pa_err_deg));
  f.wide_flip = flip_distance(pr, wide);
  return f;
}

}  // namespace

AnalysisSummary analyse(const Image& map, const AnalysisOptions& o) {
  AnalysisSummary a;
  a.galaxy = o.galaxy;
  a.settings = o.settings;
  split::SplitOptions so;
  so.centre = o.adopted.position;
  so.aperture = o.aperture;
  so.rms = o.rms;
  so.error_map = o.error_map;
  so.clip_snr = o.clip_snr;
  so.noise_correlation_beams = o.noise_correlation_beams;
  a.problem = split::prepare_split(map, so);
  const split::SplitProblem& pr = a.problem;
  place_tail(pr, o, a);
  const Angle tail = a.tail_pa_deg * degrees;
  a.split = split::split_at(pr, tail);

  a.at_centres.push_back({o.adopted.id(), a.split});
  for (const auto& e : o.estimates)
    if (e.ok()) a.at_centres.push_back({e.id(), split::split_at(pr, tail, pr.offset_of(e.position))});

  FlipOptions fo;
  fo.tail_pa_deg = a.tail_pa_deg;
  fo.tail_pa_err_deg = a.tail_pa_err_deg;
  fo.angle_step_deg = o.settings.verdict.angle_step_deg;
  // The plausible-centre check (verdict.hpp) reads these instead of building
  // the engines of the angles the two share again.
  for (const auto& e : o.estimates)
    if (e.ok()) fo.probes.push_back(pr.offset_of(e.position));
  a.flip = flip_distance(pr, fo);

  BootstrapOptions bo;
  bo.n_draws = o.settings.n_draws;
  bo.seed = o.settings.seed;
  bo.centre_covariance = o.adopted.covariance;
  bo.use_estimates = o.settings.bootstrap_estimates;
  bo.estimates = o.estimates;
  bo.tail_pa_deg = a.tail_pa_deg;
  bo.tail_pa_err_deg = a.tail_pa_err_deg;
  bo.keep_draws = o.settings.figure_data;
  a.bootstrap = bootstrap(pr, bo);

  VerdictInput vi;
  vi.centre_covariance = o.adopted.covariance;
  vi.estimates = o.estimates;
  vi.tail_pa_deg = a.tail_pa_deg;
  vi.tail_pa_err_deg = a.tail_pa_err_deg;
  vi.failures = o.failures;
  vi.galaxy = o.galaxy;
  if (!o.adopted.ok()) vi.failures.push_back("the adopted centre (" + o.adopted.id() + ") failed");
  a.verdict = decide(pr, a.split, a.flip, a.bootstrap, vi, o.settings.verdict);

  if (o.settings.figure_data) a.figures = figure_data(pr, a, fo);
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
  return j;
}

}  // namespace fulcrum::robustness
