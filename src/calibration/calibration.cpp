// Matched-mock calibration of the split/robustness analysis (see
// include/fulcrum/calibration/calibration.hpp for the model and conventions).
#include "fulcrum/core/settings_check.hpp"
#include "fulcrum/core/work_limit.hpp"
#include "fulcrum/calibration/calibration.hpp"

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <numbers>

#include "fulcrum/calibration/mock_refit.hpp"
#include "fulcrum/core/binomial_interval.hpp"
#include "fulcrum/core/error.hpp"
#include "fulcrum/core/log.hpp"
#include "fulcrum/core/random.hpp"
#include "fulcrum/imaging/correlated_noise.hpp"
#include "fulcrum/imaging/gaussian_smooth.hpp"
#include "fulcrum/kinematics/kinematic_fit.hpp"
#include "fulcrum/sky/angle.hpp"
#include "fulcrum/sky/ellipse.hpp"
#include "fulcrum/sky/pixel_offsets.hpp"

namespace fulcrum::calibration {

using nlohmann::json;

namespace {

// Streams of one mock (Random::stream(mock seed, id)), so that turning the
// re-fit on or off does not change the other draws: the line noise (and the
// velocity noise when both maps share a grid: the second field of the same
// transform), the velocity noise on a grid of its own, the other centre
// estimates, the adopted centre of a mock that is not re-fitted.
constexpr std::uint64_t kLineNoiseStream = 1, kVelocityNoiseStream = 2, kEstimatesStream = 3,
                        kAdoptedStream = 4;
constexpr std::uint64_t kChainTag = 0x626f6f74ull;  // "boot": the mock's chain seed

Rate make_rate(std::size_t k, std::size_t n) {
  Rate r;
  r.k = k;
  r.n = n;
  if (n > 0) {
    r.rate = static_cast<double>(k) / static_cast<double>(n);
    r.err = std::sqrt(r.rate * (1.0 - r.rate) / static_cast<double>(n));
  }
  const ProportionInterval ci = wilson_interval(k, n);
  r.lo95 = ci.lo, r.hi95 = ci.hi;
  return r;
}

double interp_vrot(const MatchedInputs& in, double r) {
  const auto& R = in.ring_radius_arcsec;
  const auto& V = in.ring_vrot_kms;
  if (r <= R.front()) return R.front() > 0 ? V.front() * r / R.front() : V.front();
  if (r >= R.back()) return V.back();
  auto it = std::upper_bound(R.begin(), R.end(), r);
  std::size_t j = static_cast<std::size_t>(it - R.begin());
  double t = (r - R[j - 1]) / (R[j] - R[j - 1]);
  return V[j - 1] + t * (V[j] - V[j - 1]);
}

// The noise of the mocks: white noise smoothed by a Gaussian of the beam's
// shape and FWHM beam x sqrt(k / 2) has a Gaussian correlation function of
// FWHM beam x sqrt(k), whose integral is k beam areas (k =
// noise_correlation_beams; k = 1: the correlation is the beam itself), drawn
// by FFT with unit variance (imaging/correlated_noise.hpp).
Eigen::Matrix2d noise_kernel(const Beam& beam, const Eigen::Matrix2d& jac, double k_beams) {
  const double f = std::sqrt(0.5 * k_beams);
  return pixel_covariance(Beam{beam.bmaj_arcsec * f, beam.bmin_arcsec * f, beam.bpa_deg}, jac);
}

split::SplitSummary split_truth(const Image& model, const MatchedInputs& in) {
  split::SplitOptions so;
  so.centre = in.centre.position;
  so.tail_pa_deg = in.tail_pa_deg;
  so.aperture = in.aperture;
  return split::split_halves(model, so);
}

}  // namespace

std::uint64_t mock_seed(std::uint64_t seed, int set, std::size_t k) {
  return splitmix64(splitmix64(seed ^ 0x63616c6962ull) + static_cast<std::uint64_t>(set) * 0x100000001ull +
                    static_cast<std::uint64_t>(k) * 2 + 1);
}

double RadialProfile::value(double r) const {
  if (mean.empty() || r < 0) return 0.0;
  if (r <= radius_arcsec.front()) return mean.front();
  if (r >= radius_arcsec.back() + 0.5 * bin_arcsec) return 0.0;
  if (r >= radius_arcsec.back()) return mean.back();
  double f = (r - radius_arcsec.front()) / bin_arcsec;
  std::size_t j = static_cast<std::size_t>(f);
  double t = f - static_cast<double>(j);
  return mean[j] + t * (mean[j + 1] - mean[j]);
}

RadialProfile gas_profile(const Image& intensity, WorldCoord centre, double pa_deg, double inc_deg,
                          double bin_arcsec) {
  if (!(bin_arcsec > 0)) throw InputError(intensity.path, "the profile bin width must be positive");
  PixelOffsets off(intensity, centre);
  const Angle pa = pa_deg * degrees, inc = inc_deg * degrees;
  std::vector<double> sum, cnt;
  for (int y = 0; y < intensity.ny; ++y)
    for (int x = 0; x < intensity.nx; ++x) {
      const double v = intensity.at(x, y);
      if (!std::isfinite(v)) continue;
      DiscPoint d = disc_coordinates(off.at(x, y), SkyOffset{0, 0}, pa, inc);
      std::size_t b = static_cast<std::size_t>(d.radius_arcsec / bin_arcsec);
      if (b >= sum.size()) sum.resize(b + 1, 0.0), cnt.resize(b + 1, 0.0);
      sum[b] += v;
      cnt[b] += 1.0;
    }
  RadialProfile p;
  p.bin_arcsec = bin_arcsec;
  for (std::size_t b = 0; b < sum.size(); ++b) {
    p.radius_arcsec.push_back((static_cast<double>(b) + 0.5) * bin_arcsec);
    p.mean.push_back(cnt[b] > 0 ? sum[b] / cnt[b] : std::nan(""));
  }
  // Fill empty bins from the nearest filled neighbour inside.
  for (std::size_t b = 0; b < p.mean.size(); ++b)
    if (!std::isfinite(p.mean[b])) p.mean[b] = b > 0 ? p.mean[b - 1] : 0.0;
  // Trim the outer bins that average to nothing above zero.
  while (!p.mean.empty() && p.mean.back() <= 0) p.mean.pop_back(), p.radius_arcsec.pop_back();
  return p;
}

namespace {
// The noise-free lopsided disc on any grid (blank where `blanks` is blank,
// when given on the same grid).
Image model_on_grid(const Image& grid, const MatchedInputs& in, const RadialProfile& profile, double e) {
  Image m = grid.like(0.0);
  m.path = "mock of " + (grid.path.empty() ? in.galaxy : grid.path);
  PixelOffsets off(grid, in.centre.position);
  const Angle pa = in.pa_deg * degrees, inc = in.inc_deg * degrees;
  const double phi_lead = (in.tail_pa_deg + 180.0) * kRadPerDeg;
  // A blank pixel of the data is outside the observed field, and stays blank
  // in the model, unless the map was blanked by clipping (clip_blank) and the
  // pixel has a finite noise: then it is a clipped pixel inside the field,
  // and the model is evaluated there (the mocks clip themselves). Inheriting
  // the data's clip mask would give the "symmetric" model the data's
  // asymmetry: a lopsided disc clips further out on its bright side.
  auto in_field = [&](int x, int y) {
    if (std::isfinite(grid.at(x, y))) return true;
    if (!in.clip_blank) return false;
    const double sig = in.intensity_error ? in.intensity_error->at(x, y) : in.rms;
    return std::isfinite(sig) && sig > 0.0;
  };
  for (int y = 0; y < grid.ny; ++y)
    for (int x = 0; x < grid.nx; ++x) {
      if (!in_field(x, y)) {
        m.at(x, y) = std::nan("");
        continue;
      }
      SkyOffset o = off.at(x, y);
      DiscPoint d = disc_coordinates(o, SkyOffset{0, 0}, pa, inc);
      const double phi = std::atan2(o.east, o.north);
      m.at(x, y) = profile.value(d.radius_arcsec) * (1.0 + e * std::cos(phi - phi_lead));
    }
  return m;
}
}  // namespace

Image mock_intensity_model(const MatchedInputs& in, const RadialProfile& profile, double e) {
  return model_on_grid(*in.intensity, in, profile, e);
}

// The per-mock step (see the header): the one robustness chain on a mock map.
robustness::AnalysisSummary analyse_mock(const Image& map, const MatchedInputs& in, const MockCentres& centres,
                                         const CalibrationOptions& opt, std::uint64_t chain_seed) {
  robustness::AnalysisOptions ao;
  ao.galaxy = in.galaxy + " mock";
  ao.adopted = centres.adopted;
  ao.estimates = centres.estimates;
  ao.failures = centres.failures;
  ao.tail_pa_deg = in.tail_pa_deg;
  ao.tail_pa_err_deg = in.tail_pa_err_deg;
  ao.aperture = in.aperture;
  ao.rms = in.rms;
  ao.error_map = in.intensity_error;
  ao.clip_snr = in.clip_snr;  // the same clip-aware errors as the real analysis
  ao.noise_correlation_beams = in.noise_correlation_beams;
  ao.settings = opt.chain;
  ao.settings.seed = chain_seed;
  ao.settings.n_draws = opt.n_draws;
  ao.settings.figure_data = false;
  return robustness::analyse(map, ao);
}

namespace {

// Everything the mocks of one calibration share: the noise-free maps, the
// noise generators (kernel transforms made once), the per-pixel errors and
// the re-fit's samples and smearing grids (mock_refit.hpp).
struct MockSetup {
  MockSetup(const MatchedInputs& i, const CalibrationOptions& o, const Image& r) : in(i), opt(o), real(r) {}
  const MatchedInputs& in;
  const CalibrationOptions& opt;
  const Image& real;
  Image model[2];                    // noise-free line maps: symmetric, lopsided
  double truth[2] = {0.0, 0.0};      // their A at the true centre
  std::vector<double> line_sigma;    // per line-map pixel (0 where unknown)
  std::optional<CorrelatedNoise> line_noise, velocity_noise;  // velocity_noise: its own grid only
  bool refit = false;
  std::vector<std::size_t> shared;   // indices of the successful shared re-fits (opt.shared_refits)
  std::vector<double> velocity[2];   // noise-free moment-1-like velocity maps (km/s)
  std::vector<double> velocity_sigma;  // per velocity pixel (km/s)
  std::optional<MockRefit> refitter;
};

// The moment-1-like velocity of a beam-convolved cube: (I v) * B / (I * B),
// I the noise-free line model `I` on the velocity grid, v the tilted-ring
// model; NaN where the real velocity map is blank or I * B vanishes.
std::vector<double> smeared_velocity(const MatchedInputs& in, const PixelOffsets& voff, const Beam& beam,
                                     const Image& I) {
  const Image& vgrid = *in.velocity;
  const Angle pa = in.pa_deg * degrees, inc = in.inc_deg * degrees;
  const std::size_t n = vgrid.size();
  std::vector<double> v(n), iv(n), ii(n);
  for (int y = 0; y < vgrid.ny; ++y)
    for (int x = 0; x < vgrid.nx; ++x) {
      const DiscPoint d = disc_coordinates(voff.at(x, y), SkyOffset{0, 0}, pa, inc);
      const std::size_t i = static_cast<std::size_t>(x) + static_cast<std::size_t>(vgrid.nx) * y;
      v[i] = in.vsys_kms + interp_vrot(in, d.radius_arcsec) * std::sin(inc.rad()) * d.cos_theta;
      ii[i] = std::max(0.0, I.data[i]);
      iv[i] = ii[i] * v[i];
    }
  const Eigen::Matrix2d K = pixel_covariance(beam, voff.jacobian());
  const auto num = convolve_gaussian(iv, vgrid.nx, vgrid.ny, K), den = convolve_gaussian(ii, vgrid.nx, vgrid.ny, K);
  double peak = 0.0;
  for (double d : den) peak = std::max(peak, d);
  for (std::size_t i = 0; i < n; ++i) {
    if (den[i] > 1e-9 * peak) v[i] = num[i] / den[i];
    if (!std::isfinite(vgrid.data[i])) v[i] = std::nan("");
  }
  return v;
}

// The shared velocity part of the mocks (when the centre is re-fitted).
void setup_velocity(MockSetup& m, const RadialProfile& profile, double e_lopsided) {
  const MatchedInputs& in = m.in;
  const Image& vgrid = *in.velocity;
  const PixelOffsets voff(vgrid, in.centre.position);
  const Beam beam = vgrid.beam ? *vgrid.beam : *m.real.beam;
  std::vector<Image> line_on_vgrid;
  for (int set = 0; set < 2; ++set) {
    line_on_vgrid.push_back(model_on_grid(vgrid.like(0.0), in, profile, set == 0 ? 0.0 : e_lopsided));
    m.velocity[set] = smeared_velocity(in, voff, beam, line_on_vgrid.back());
  }
  MockRefitSetup rs;
  rs.truth = in.centre.position;
  rs.pa_deg = in.pa_deg, rs.inc_deg = in.inc_deg, rs.vsys_kms = in.vsys_kms;
  rs.correct_beam_smearing = m.opt.correct_beam_smearing;  // the mock velocities are smeared like the data
  rs.beam = beam;
  rs.expected_residual_fraction = in.expected_residual_fraction;
  m.refitter.emplace(vgrid, in.velocity_error, std::move(line_on_vgrid), rs);
  m.velocity_sigma = m.refitter->pixel_sigma();
  for (double& s : m.velocity_sigma)
    if (!std::isfinite(s)) s = in.velocity_noise_kms;
  // Without the data fit's value, one noise-free re-fit of the symmetric
  // disc computes it for all (the expectation does not depend on the noise).
  if (!(rs.expected_residual_fraction > 0.0)) {
    try {
      const auto f = m.refitter->fit(m.velocity[0], 0);
      if (f.status == "ok" && f.centre_errors.applied)
        m.refitter->share_expected_residual_fraction(f.centre_errors.expected_residual_fraction);
    } catch (const std::exception&) {
      // Each re-fit computes its own.
    }
  }
  // The same grid and kernel: the velocity noise is the second field of the
  // line noise's transform; otherwise a generator of its own.
  const Eigen::Matrix2d vk = noise_kernel(beam, voff.jacobian(), in.noise_correlation_beams);
  // With an extra scatter the velocity grid needs two fields per mock: a
  // generator of its own gives both from one transform.
  const bool same = vgrid.nx == m.real.nx && vgrid.ny == m.real.ny &&
                    (vk - m.line_noise->covariance()).norm() <= 1e-12 * vk.norm() &&
                    !(in.velocity_scatter_kms > 0.0);
  if (!same) m.velocity_noise.emplace(vgrid.nx, vgrid.ny, vk);
}

// What every kind of mock needs first: the grids' world positions computed
// once (the mocks' splits and re-fits read them) and the line noise's
// generator on the real line map's grid.
void prepare_grids(MockSetup& m) {
  const MatchedInputs& in = m.in;
  m.real.wcs.keep_grid_world(m.real.nx, m.real.ny);
  if (in.velocity) in.velocity->wcs.keep_grid_world(in.velocity->nx, in.velocity->ny);
  m.line_noise.emplace(m.real.nx, m.real.ny,
                       noise_kernel(*m.real.beam, PixelOffsets(m.real, in.centre.position).jacobian(),
                                    in.noise_correlation_beams));
}

// Line map of one mock: model + beam-correlated noise, clipped like the data.
Image noisy_line_map(const MockSetup& m, int set, const std::vector<double>& n) {
  Image map = m.model[set];
  for (std::size_t i = 0; i < map.size(); ++i) {
    if (!std::isfinite(map.data[i])) continue;
    const double sig = m.line_sigma[i];
    map.data[i] += sig * n[i];
    if (m.in.clip_snr > 0.0 && map.data[i] < m.in.clip_snr * sig)
      map.data[i] = m.in.clip_blank ? std::nan("") : 0.0;
  }
  return map;
}

// Velocity map of one mock: smeared model + noise with the beam correlation
// (+ the measured extra scatter, field `scatter`, when there is one).
std::vector<double> noisy_velocity(const MockSetup& m, int set, const std::vector<double>& n,
                                   const std::vector<double>& scatter) {
  std::vector<double> vel = m.velocity[set];
  const double s = m.in.velocity_scatter_kms;
  for (std::size_t i = 0; i < vel.size(); ++i) {
    vel[i] += m.velocity_sigma[i] * n[i];
    if (s > 0.0 && i < scatter.size()) vel[i] += s * scatter[i];
  }
  return vel;
}

// The velocity noise fields of mock `seed`: on the velocity grid's own
// generator (with the scatter field when there is a scatter), else the second
// field of the line noise's transform (drawn by the caller).
void draw_velocity_noise(const MockSetup& m, std::uint64_t seed, std::vector<double>& vel_n,
                         std::vector<double>& scatter_n) {
  Random vnoise = Random::stream(seed, kVelocityNoiseStream);
  m.velocity_noise->draw(vnoise, vel_n, m.in.velocity_scatter_kms > 0.0 ? &scatter_n : nullptr);
}

// The squared Mahalanobis distance of `truth` from a re-fitted centre at
// `fitted` with covariance C (arcsec^2, east-north); infinite when C is
// singular.
double truth_m2(WorldCoord fitted, const Eigen::Matrix2d& C, WorldCoord truth) {
  const SkyOffset d = OffsetFrame(fitted).to_offset(truth);
  const Eigen::Vector2d dv(d.east, d.north);
  return C.determinant() > 0.0 ? dv.dot(C.inverse() * dv) : INFINITY;
}

// Re-fit the kinematic centre of one mock velocity map `vel` of set `set`
// and describe the outcome against the truth (centre_refit.hpp).
CentreRefit refit_mock_centre(const MockSetup& m, const std::vector<double>& vel, int set) {
  CentreRefit r;
  const MatchedInputs& in = m.in;
  try {
    const auto fit = m.refitter->fit(vel, set);
    if (fit.status != "ok" || !fit.centre) {
      r.failure = "the kinematic fit " + fit.status + " (" + fit.reason + ")";
      return r;
    }
    r.offset = OffsetFrame(in.centre.position).to_offset(fit.centre->position);
    r.covariance = fit.centre->covariance;
    r.m2 = truth_m2(fit.centre->position, r.covariance, in.centre.position);
    if (!std::isfinite(r.m2)) {
      r.failure = "the re-fitted centre's covariance is singular";
      return r;
    }
    const double dpa = std::remainder(fit.pa_deg - in.pa_deg, 360.0);
    if (fit.pa_err_deg > 0.0) r.pa_pull2 = std::pow(dpa / fit.pa_err_deg, 2);
    if (fit.inc_err_deg > 0.0) r.inc_pull2 = std::pow((fit.inc_deg - in.inc_deg) / fit.inc_err_deg, 2);
    r.ok = true;
  } catch (const std::exception& e) {
    r.failure = std::string("the kinematic fit stopped: ") + e.what();
  }
  return r;
}

// A mock adopts re-fit `r`: the truth moved by its offset, its covariance
// times the galaxy's scale (data and mocks carry errors made the same way);
// a failed re-fit is recorded as the mock's failure.
void adopt_refit(const MockSetup& m, const CentreRefit& r, MockCentres& mc, MockOutcome& out) {
  out.centre_refitted = true;
  out.centre_fit_ok = r.ok;
  if (!r.ok) {
    mc.failures.push_back(r.failure);
    return;
  }
  const double k = m.opt.centre_covariance_scale2;
  mc.adopted.position = OffsetFrame(m.in.centre.position).to_world(r.offset);
  mc.adopted.covariance = k * r.covariance;
  out.centre_mahalanobis = std::sqrt(r.m2 / k);
}

// `c` moved from the truth by its own (east, north) offset plus a draw from
// its covariance.
Centre scattered(const Centre& c, const OffsetFrame& truth, Random& g) {
  const Eigen::Matrix2d& C = c.covariance;
  Eigen::Vector2d z(g.normal(), g.normal());
  Eigen::Vector2d dz = Eigen::Vector2d::Zero();
  if (C.determinant() > 0) dz = Eigen::Matrix2d(C.llt().matrixL()) * z;
  const SkyOffset o = truth.to_offset(c.position);
  Centre w = c;
  w.position = truth.to_world(SkyOffset{o.east + dz(0), o.north + dz(1)});
  return w;
}

// The other centre estimates: truth + their real offsets, scattered by their own errors.
void place_estimates(const MatchedInputs& in, Random& g, MockCentres& mc) {
  const OffsetFrame truth(in.centre.position);
  for (const auto& p : in.estimates)
    if (p.ok()) mc.estimates.push_back(scattered(p, truth, g));
}

void run_mock(const MockSetup& m, int set, std::size_t k, MockOutcome& out) {
  const MatchedInputs& in = m.in;
  out.seed = mock_seed(m.opt.seed, set, k);
  out.true_asymmetry = m.truth[set];
  try {
    const bool shared = !m.shared.empty();
    const bool do_refit = !shared && m.refit && (m.opt.refit_every <= 1 || k % m.opt.refit_every == 0);
    std::vector<double> line_n, vel_n, scatter_n;
    Random noise = Random::stream(out.seed, kLineNoiseStream);
    m.line_noise->draw(noise, line_n, do_refit && !m.velocity_noise ? &vel_n : nullptr);
    if (do_refit && m.velocity_noise) draw_velocity_noise(m, out.seed, vel_n, scatter_n);
    const Image map = noisy_line_map(m, set, line_n);
    MockCentres mc;
    out.centre_fit_ok = true;
    mc.adopted = in.centre;
    if (shared) {
      // The shared re-fits in turn (their noise is independent of this
      // mock's line noise, so any pairing is a fair draw).
      adopt_refit(m, m.opt.shared_refits[m.shared[k % m.shared.size()]], mc, out);
    } else if (do_refit) {
      adopt_refit(m, refit_mock_centre(m, noisy_velocity(m, set, vel_n, scatter_n), set), mc, out);
    } else if (m.refit) {
      // A mock between re-fits stands in for one: its adopted centre is the
      // truth moved by a draw from the real fit's covariance (what a re-fit
      // with honest errors would give). Without re-fits at all
      // (refit_centre false, or no velocity map) it stays at the truth.
      Random g = Random::stream(out.seed, kAdoptedStream);
      mc.adopted = scattered(in.centre, OffsetFrame(in.centre.position), g);
    }
    Random g = Random::stream(out.seed, kEstimatesStream);
    place_estimates(in, g, mc);
    const auto a = analyse_mock(map, in, mc, m.opt, splitmix64(out.seed ^ kChainTag));
    out.verdict = robustness::verdict_name(a.verdict.verdict);
    out.measured_asymmetry = a.split.asymmetry;
    out.lo68 = a.bootstrap.lo68, out.hi68 = a.bootstrap.hi68;
    out.lo95 = a.bootstrap.lo95, out.hi95 = a.bootstrap.hi95;
  } catch (const std::exception& ex) {
    out.verdict = std::string("error: ") + ex.what();
    out.measured_asymmetry = std::nan("");
  }
}

// A mock whose centre re-fit failed or whose analysis threw says nothing
// about how often these data fake a result: counted apart.
bool mock_failed(const MockOutcome& o) {
  return !std::isfinite(o.measured_asymmetry) || (o.centre_refitted && !o.centre_fit_ok);
}

void check_inputs(const MatchedInputs& in, const CalibrationOptions& opt) {
  const std::string who = in.galaxy;
  if (!in.intensity) throw InputError(who, "calibration needs the intensity map");
  const Image& real = *in.intensity;
  if (!real.beam) throw InputError(real.path.empty() ? who : real.path, "calibration needs the beam (BMAJ/BMIN)");
  if (!in.intensity_error && !(in.rms > 0))
    throw InputError(who, "calibration needs the map noise (an error map or an rms)");
  if (in.ring_radius_arcsec.empty() || in.ring_radius_arcsec.size() != in.ring_vrot_kms.size())
    throw InputError(who, "calibration needs the rotation curve (ring radii and velocities)");
  check_mock_work("mocks", static_cast<std::int64_t>(std::min<std::size_t>(opt.n_mocks, INT64_MAX)),
                  static_cast<std::int64_t>(std::min<std::size_t>(opt.n_draws, INT64_MAX)));
  if (in.intensity_error && (in.intensity_error->nx != real.nx || in.intensity_error->ny != real.ny))
    throw InputError(in.intensity_error->path, "is not on the grid of the intensity map");
  if (!(in.clip_snr >= 0.0)) throw InputError(who, "the clipping threshold (clip_snr) must not be negative");
  if (!(in.noise_correlation_beams > 0.0))
    throw InputError(who, "the noise correlation area (noise_correlation_beams) must be positive");
}

// Tune e so that the noise-free mock has the measured A (secant steps;
// A(e) is close to linear, A ~ (2/pi) e for a pure cos term on a half).
double tune_amplitude(const MatchedInputs& in, const RadialProfile& profile, double a_sym, int steps,
                      CalibrationSummary& s) {
  double e0 = 0.0, f0 = a_sym - in.measured_asymmetry;
  double e1 = std::clamp(0.5 * std::numbers::pi * in.measured_asymmetry, -0.99, 0.99);
  double f1 = split_truth(mock_intensity_model(in, profile, e1), in).asymmetry - in.measured_asymmetry;
  for (int it = 0; it < steps && std::abs(f1) > 1e-9 && f1 != f0; ++it) {
    double e2 = std::clamp(e1 - f1 * (e1 - e0) / (f1 - f0), -0.999, 0.999);
    e0 = e1, f0 = f1, e1 = e2;
    f1 = split_truth(mock_intensity_model(in, profile, e1), in).asymmetry - in.measured_asymmetry;
    s.tuning_steps = it + 1;
  }
  return e1;
}

void mean_err(double sum, double sum2, std::size_t n, double* m, double* e) {
  if (n == 0) {
    *m = *e = std::nan("");
    return;
  }
  *m = sum / static_cast<double>(n);
  const double var = n > 1 ? (sum2 - static_cast<double>(n) * *m * *m) / static_cast<double>(n - 1) : 0.0;
  *e = std::sqrt(std::max(0.0, var) / static_cast<double>(n));
}

// The verdict a lopsided mock should reach: robust for a leading excess,
// reversed for a trailing one (the sign of the measured A).
std::string recovered_verdict(const CalibrationSummary& s) {
  return s.target_asymmetry < 0.0 ? "reversed" : "robust";
}

// Rates, biases and coverages over the valid mocks (serial, in mock order).
void summarise(CalibrationSummary& s) {
  std::size_t fr = 0, rec = 0, nsym = 0, nlop = 0, c68 = 0, c95 = 0, nint = 0, cc = 0, ncc = 0;
  double sum[2] = {0, 0}, sum2[2] = {0, 0};
  std::size_t nb[2] = {0, 0};
  for (int set = 0; set < 2; ++set)
    for (const auto& o : set == 0 ? s.symmetric : s.lopsided) {
      if (o.centre_refitted && !o.centre_fit_ok) ++s.centre_fit_failures;
      if (mock_failed(o)) {
        ++(set == 0 ? s.symmetric_failures : s.lopsided_failures);
        continue;
      }
      if (set == 0) ++nsym, fr += o.verdict == "robust" || o.verdict == "reversed";
      else ++nlop, rec += o.verdict == recovered_verdict(s);
      ++nint;
      c68 += o.lo68 <= o.true_asymmetry && o.true_asymmetry <= o.hi68;
      c95 += o.lo95 <= o.true_asymmetry && o.true_asymmetry <= o.hi95;
      if (o.centre_refitted) ++ncc, cc += o.centre_mahalanobis <= 2.0;
      const double d = o.measured_asymmetry - o.true_asymmetry;
      sum[set] += d, sum2[set] += d * d, ++nb[set];
    }
  s.false_robust = make_rate(fr, nsym);
  s.recovery = make_rate(rec, nlop);
  mean_err(sum[1], sum2[1], nb[1], &s.bias, &s.bias_err);
  mean_err(sum[0], sum2[0], nb[0], &s.bias_symmetric, &s.bias_symmetric_err);
  s.coverage68 = make_rate(c68, nint);
  s.coverage95 = make_rate(c95, nint);
  s.centre_coverage = make_rate(cc, ncc);
  s.centre_coverage_expected = 1.0 - std::exp(-2.0);
}

// With shared re-fits the centre coverage is theirs, each counted once (a
// mock repeats one), under the covariance the mocks adopted (x scale2).
void shared_centre_coverage(const CalibrationOptions& opt, CalibrationSummary& s) {
  std::size_t inside = 0, n = 0;
  s.centre_fit_failures = 0;
  for (const auto& r : opt.shared_refits) {
    if (!r.ok) {
      ++s.centre_fit_failures;
      continue;
    }
    ++n;
    inside += r.m2 / opt.centre_covariance_scale2 <= 4.0;
  }
  s.centre_coverage = make_rate(inside, n);
  s.centre_refits_shared = true;
}

// No valid mock in a set: no rate can be stated ("0.0% of 0" read as a
// result). Refused, with the first failure's reason.
void refuse_if_every_mock_failed(const CalibrationSummary& s) {
  if (s.symmetric_failures < s.symmetric.size() && s.lopsided_failures < s.lopsided.size()) return;
  std::string first;
  for (const auto* set : {&s.symmetric, &s.lopsided})
    for (const auto& o : *set)
      if (first.empty() && o.verdict.rfind("error: ", 0) == 0) first = o.verdict.substr(7);
  if (first.empty()) first = "the centre re-fit failed";
  throw InputError(s.galaxy, "calibration failed: " + std::to_string(s.symmetric_failures) + " of " +
                                 std::to_string(s.symmetric.size()) + " symmetric and " +
                                 std::to_string(s.lopsided_failures) + " of " + std::to_string(s.lopsided.size()) +
                                 " lopsided mocks failed (first: " + first + "); no rate can be stated");
}

std::string calibration_statement(const CalibrationSummary& s, const CalibrationOptions& opt) {
  char buf[512];
  std::snprintf(buf, sizeof buf,
                "a symmetric disc with these data is called robust or reversed in %.1f%% of %zu matched mocks "
                "(95%% interval %.1f-%.1f%%), and a disc with the measured A = %.3f is called %s in %.1f%% of %zu",
                100.0 * s.false_robust.rate, s.false_robust.n, 100.0 * s.false_robust.lo95,
                100.0 * s.false_robust.hi95, s.achieved_asymmetry, recovered_verdict(s).c_str(),
                100.0 * s.recovery.rate, s.recovery.n);
  std::string st = buf;
  if (s.symmetric_failures + s.lopsided_failures > 0) {
    std::snprintf(buf, sizeof buf, "; %zu symmetric and %zu lopsided mocks failed (centre re-fit or analysis) "
                  "and are not counted", s.symmetric_failures, s.lopsided_failures);
    st += buf;
  }
  if (!s.tuning_converged) {
    std::snprintf(buf, sizeof buf,
                  "; warning: the lopsided mocks reach A = %.3f, not the measured %.3f (amplitude tuning "
                  "stopped after %d of at most %d secant steps at e = %.3f)",
                  s.achieved_asymmetry, s.target_asymmetry, s.tuning_steps, opt.secant_steps, s.lopsided_amplitude);
    st += buf;
  }
  return st;
}

}  // namespace

void check_mock_work(std::string_view mocks_setting, std::int64_t n_mocks, std::int64_t n_draws) {
  check_count_limit(mocks_setting, n_mocks, 1, 1e5, "the calibration", "mocks per set");
  check_count_limit("mock_draws", n_draws, 100, 1e7, "each mock's bootstrap", "draws");
  const double total = 2.0 * static_cast<double>(n_mocks) * static_cast<double>(n_draws);
  check_work_limit("mock_draws", std::to_string(n_draws), "the mocks' bootstraps", total, kMaxMockDraws, "draws",
                   "2 sets x " + std::to_string(n_mocks) + " mocks x " + std::to_string(n_draws) + " draws");
}

CalibrationSummary calibrate(const MatchedInputs& in, const CalibrationOptions& opt) {
  const auto t0 = std::chrono::steady_clock::now();
  check_inputs(in, opt);
  const Image& real = *in.intensity;
  const RadialProfile profile =
      gas_profile(real, in.centre.position, in.pa_deg, in.inc_deg, opt.profile_bin_beams * real.beam->fwhm_arcsec());
  if (profile.mean.empty()) throw InputError(in.galaxy, "the intensity map has no positive gas profile");

  CalibrationSummary s;
  s.galaxy = in.galaxy;
  s.n_mocks = opt.n_mocks;
  s.seed = opt.seed;
  s.target_asymmetry = in.measured_asymmetry;
  MockSetup m(in, opt, real);
  prepare_grids(m);  // every mock map is a copy of one grid
  m.line_sigma.resize(real.size());
  for (std::size_t i = 0; i < real.size(); ++i) {
    const double sig = in.intensity_error ? in.intensity_error->data[i] : in.rms;
    m.line_sigma[i] = std::isfinite(sig) ? sig : 0.0;
  }
  m.model[0] = mock_intensity_model(in, profile, 0.0);
  m.truth[0] = split_truth(m.model[0], in).asymmetry;
  s.lopsided_amplitude = tune_amplitude(in, profile, m.truth[0], opt.secant_steps, s);
  m.model[1] = mock_intensity_model(in, profile, s.lopsided_amplitude);
  m.truth[1] = s.achieved_asymmetry = split_truth(m.model[1], in).asymmetry;
  // The step bound (or the amplitude limit |e| < 1) can stop the tuning short
  // of the measured A: the statement says so.
  s.tuning_converged = std::abs(s.achieved_asymmetry - s.target_asymmetry) <= kTuningTolerance;
  m.refit = opt.refit_centre && in.velocity != nullptr;
  if (m.refit)
    for (std::size_t i = 0; i < opt.shared_refits.size(); ++i)
      if (opt.shared_refits[i].ok) m.shared.push_back(i);
  // Shared re-fits: the mocks need no velocity maps of their own.
  if (m.refit && m.shared.empty()) setup_velocity(m, profile, s.lopsided_amplitude);

  const std::size_t N = opt.n_mocks;
  s.symmetric.assign(N, {});
  s.lopsided.assign(N, {});
  Progress progress("calibration mocks", 2 * N);
  const long total = static_cast<long>(2 * N);
#pragma omp parallel for schedule(dynamic, 1)
  for (long task = 0; task < total; ++task) {
    const int set = task < static_cast<long>(N) ? 0 : 1;
    const std::size_t k = static_cast<std::size_t>(set == 0 ? task : task - static_cast<long>(N));
    run_mock(m, set, k, set == 0 ? s.symmetric[k] : s.lopsided[k]);
#pragma omp critical(calibration_progress)
    progress.advance();
  }
  progress.finish();
  summarise(s);
  if (!m.shared.empty()) shared_centre_coverage(opt, s);
  refuse_if_every_mock_failed(s);
  s.statement = calibration_statement(s, opt);
  s.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
  return s;
}

CentreBootstrap bootstrap_centre_covariance(const MatchedInputs& in, const CentreBootstrapOptions& o) {
  CentreBootstrap b;
  if (!in.velocity) {
    b.reason = "no velocity map";
    return b;
  }
  if (!in.intensity || !in.intensity->beam) {
    b.reason = "no line map with a beam to weight the mock velocities";
    return b;
  }
  CalibrationOptions opt;
  opt.seed = o.seed;
  opt.correct_beam_smearing = o.correct_beam_smearing;
  const Image& real = *in.intensity;
  const RadialProfile profile = gas_profile(real, in.centre.position, in.pa_deg, in.inc_deg,
                                            opt.profile_bin_beams * real.beam->fwhm_arcsec());
  if (profile.mean.empty()) {
    b.reason = "the intensity map has no positive gas profile";
    return b;
  }
  MockSetup m(in, opt, real);
  prepare_grids(m);
  setup_velocity(m, profile, 0.0);
  const Image& vgrid = *in.velocity;
  if (!m.velocity_noise)  // the line grid's kernel: a generator on the velocity grid for both fields
    m.velocity_noise.emplace(vgrid.nx, vgrid.ny, m.line_noise->covariance());
  b.outcomes.resize(o.n_refits);
  const long n = static_cast<long>(o.n_refits);
#pragma omp parallel for schedule(dynamic, 1)
  for (long k = 0; k < n; ++k) {
    const std::uint64_t seed = mock_seed(o.seed, 2, static_cast<std::size_t>(k));
    std::vector<double> vel_n, scatter_n;
    draw_velocity_noise(m, seed, vel_n, scatter_n);
    b.outcomes[static_cast<std::size_t>(k)] = refit_mock_centre(m, noisy_velocity(m, 0, vel_n, scatter_n), 0);
  }
  double sum = 0.0;
  std::vector<double> pa2, inc2;
  for (const auto& r : b.outcomes) {
    if (r.ok) {
      ++b.refits;
      sum += r.m2;
      pa2.push_back(r.pa_pull2);
      inc2.push_back(r.inc_pull2);
    } else {
      ++b.failed;
    }
  }
  if (b.refits < o.min_refits) {
    b.reason = std::to_string(b.refits) + " of " + std::to_string(o.n_refits) + " re-fits succeeded (at least " +
               std::to_string(o.min_refits) + " needed)";
    return b;
  }
  b.mean_m2 = sum / static_cast<double>(b.refits);
  b.scale2 = std::clamp(0.5 * b.mean_m2, o.min_scale2, o.max_scale2);
  // Mean squared pull over the re-fits that gave one (NaN: none did).
  auto mean_finite = [](const std::vector<double>& v) {
    double s = 0.0;
    int count = 0;
    for (double x : v)
      if (std::isfinite(x)) s += x, ++count;
    return count > 0 ? s / count : std::nan("");
  };
  b.mean_pa_pull2 = mean_finite(pa2);
  b.mean_inc_pull2 = mean_finite(inc2);
  if (std::isfinite(b.mean_pa_pull2)) b.pa_scale2 = std::clamp(b.mean_pa_pull2, o.min_scale2, o.max_scale2);
  if (std::isfinite(b.mean_inc_pull2)) b.inc_scale2 = std::clamp(b.mean_inc_pull2, o.min_scale2, o.max_scale2);
  b.applied = true;
  return b;
}

json to_json(const CentreBootstrap& b) {
  json j = {{"applied", b.applied}, {"refits", b.refits}, {"failed", b.failed}};
  if (b.applied) {
    j["mean_m2"] = b.mean_m2;
    j["covariance_scale"] = b.scale2;
    j["error_scale"] = std::sqrt(b.scale2);
    j["mean_pa_pull2"] = std::isfinite(b.mean_pa_pull2) ? json(b.mean_pa_pull2) : json(nullptr);
    j["mean_inc_pull2"] = std::isfinite(b.mean_inc_pull2) ? json(b.mean_inc_pull2) : json(nullptr);
    j["pa_error_scale"] = std::sqrt(b.pa_scale2);
    j["inc_error_scale"] = std::sqrt(b.inc_scale2);
  } else {
    j["reason"] = b.reason;
  }
  return j;
}

robustness::CalibrationEvidence verdict_evidence(const CalibrationSummary& s) {
  return {s.false_robust.k, s.false_robust.n, s.symmetric_failures};
}

namespace {
json rate_json(const Rate& r) {
  return {{"k", r.k}, {"n", r.n}, {"rate", r.rate}, {"err", r.err}, {"ci95", {r.lo95, r.hi95}}};
}
json num(double v) { return std::isfinite(v) ? json(v) : json(nullptr); }
}  // namespace

json to_json(const CalibrationSummary& s, bool per_mock) {
  json j = {{"n_mocks", s.n_mocks},
            {"seed", s.seed},
            {"lopsided_amplitude", num(s.lopsided_amplitude)},
            {"target_asymmetry", num(s.target_asymmetry)},
            {"achieved_asymmetry", num(s.achieved_asymmetry)},
            {"tuning_steps", s.tuning_steps},
            {"tuning_converged", s.tuning_converged},
            {"false_robust", rate_json(s.false_robust)},
            {"false_robust_rate", s.false_robust.rate},
            {"recovery", rate_json(s.recovery)},
            {"recovery_rate", s.recovery.rate},
            {"asymmetry_bias", num(s.bias)},
            {"asymmetry_bias_err", num(s.bias_err)},
            {"asymmetry_bias_symmetric", num(s.bias_symmetric)},
            {"asymmetry_bias_symmetric_err", num(s.bias_symmetric_err)},
            {"coverage68", rate_json(s.coverage68)},
            {"coverage95", rate_json(s.coverage95)},
            {"centre_coverage_2sigma", rate_json(s.centre_coverage)},
            {"centre_coverage_expected", s.centre_coverage_expected},
            {"centre_fit_failures", s.centre_fit_failures},
            {"centre_refits_shared", s.centre_refits_shared},
            {"symmetric_failures", s.symmetric_failures},
            {"lopsided_failures", s.lopsided_failures},
            {"statement", s.statement}};
  if (per_mock) {
    auto list = [](const std::vector<MockOutcome>& v) {
      json a = json::array();
      for (const auto& o : v)
        a.push_back({{"seed", o.seed}, {"verdict", o.verdict}, {"true_asymmetry", num(o.true_asymmetry)},
                     {"asymmetry", num(o.measured_asymmetry)}, {"ci68", {num(o.lo68), num(o.hi68)}},
                     {"ci95", {num(o.lo95), num(o.hi95)}}, {"centre_refitted", o.centre_refitted},
                     {"centre_fit_ok", o.centre_fit_ok}, {"centre_mahalanobis", num(o.centre_mahalanobis)}});
      return a;
    };
    j["symmetric_mocks"] = list(s.symmetric);
    j["lopsided_mocks"] = list(s.lopsided);
  }
  return j;
}

}  // namespace fulcrum::calibration
