// Moment maps of mock cubes (fulcrum synth) against their truth: total flux,
// velocities, error maps against the scatter over noise draws, channel order,
// the noise estimate, and the refusals (no spectral axis, no rest frequency,
// all channels blank).
#include <catch2/catch.hpp>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <sstream>

#include <nlohmann/json.hpp>

#include "../support/test_support.hpp"
#include "fulcrum/core/error.hpp"
#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/moments/moment_maps.hpp"
#include "fulcrum/synth/mock_galaxy.hpp"
#include "fulcrum/core/random.hpp"

using namespace fulcrum;
using namespace fulcrum::synth;

namespace {

constexpr double kFluxRelTol = 0.02;       // issue requirement, S/N >= 10 per beam
constexpr double kVelocityTolKms = 3.0;    // issue requirement, where S/N >= 5
constexpr double kErrorScatterTol = 0.10;  // issue requirement, 100 noise draws

// A bright, compact mock with a cube.
MockGalaxy cube_mock(std::uint64_t seed) {
  MockGalaxy g;
  g.name = "cube-disc";
  g.seed = seed;
  g.grid.nx = g.grid.ny = 56;
  g.grid.pixel_arcsec = 0.8;
  g.disc_radius_arcsec = 12.0;
  g.scale_length_arcsec = 3.5;
  g.tail_length_arcsec = 12.0;
  g.total_flux_jykms = 20.0;
  g.vflat_kms = 150.0;
  g.optical.enabled = false;
  g.cube.enabled = true;
  g.cube.n_channels = 72;
  g.cube.channel_width_kms = 5.0;
  g.cube.dispersion_kms = 6.0;
  g.cube.noise_rms = 0.0005;
  return g;
}

std::string slurp(const std::filesystem::path& p) {
  std::ifstream in(p);
  std::stringstream ss;
  ss << in.rdbuf();
  return ss.str();
}

}  // namespace

TEST_CASE("moment-0 total of a mock cube is within 2% of the truth", "[moments]") {
  for (MaskMethod m : {MaskMethod::SmoothAndMask, MaskMethod::MomentMasking}) {
    for (std::uint64_t seed : {m == MaskMethod::SmoothAndMask ? 11u : 12u}) {
      MockGalaxy g = cube_mock(seed);
      auto mock = make_mock(g);
      MomentOptions o;
      o.mask = m;
      auto p = make_moment_maps(*mock.cube, o);
      const double truth = mock.truth["truth"]["flux_in_map_jykms"].get<double>();
      double peak_snr = 0.0;
      for (std::size_t i = 0; i < p.mom0.size(); ++i)
        if (p.mom0_err.data[i] > 0) peak_snr = std::max(peak_snr, p.mom0.data[i] / p.mom0_err.data[i]);
      INFO(mask_method_name(m) << " seed " << seed << ": total " << p.total_flux << " +/- " << p.total_flux_err
                               << " truth " << truth << " peak S/N " << peak_snr);
      REQUIRE(peak_snr >= 10.0);
      CHECK(p.flux_unit == "Jy km/s");
      CHECK(std::abs(p.total_flux / truth - 1.0) < kFluxRelTol);
      CHECK(p.mom0.unit == "Jy/beam.km/s");
      REQUIRE(p.mom0.beam);
      CHECK(p.mom0.beam->bmaj_arcsec == g.bmaj_arcsec);
    }
  }
}

TEST_CASE("moment-1 follows the model velocities where S/N >= 5", "[moments]") {
  MockGalaxy g = cube_mock(21);
  auto mock = make_mock(g);
  auto p = make_moment_maps(*mock.cube, MomentOptions{});
  // The reference is the beam-smeared, intensity-weighted model velocity
  // conv(I v)/conv(I), what a noise-free first moment sees.
  double s2 = 0.0, z2 = 0.0;
  int n = 0;
  for (std::size_t i = 0; i < p.mom1.size(); ++i) {
    if (!(p.mom0.data[i] >= 5.0 * p.mom0_err.data[i]) || !std::isfinite(p.mom1.data[i])) continue;
    const double d = p.mom1.data[i] - mock.velocity_model_beam.data[i];
    s2 += d * d;
    z2 += (d / p.mom1_err.data[i]) * (d / p.mom1_err.data[i]);
    ++n;
  }
  REQUIRE(n > 100);
  const double rms = std::sqrt(s2 / n);
  INFO(n << " pixels, rms deviation " << rms << " km/s, rms of deviation/error " << std::sqrt(z2 / n));
  CHECK(rms < kVelocityTolKms);
  // The velocity error map describes the deviations (first-order propagation;
  // 25% allows for the masking and the non-linearity of the ratio).
  CHECK(std::sqrt(z2 / n) == Approx(1.0).epsilon(0.25));
  // Dispersion: the line's own 8 km/s, widened by channels and beam smearing.
  std::vector<double> m2;
  for (double x : p.mom2.data)
    if (std::isfinite(x)) m2.push_back(x);
  REQUIRE(!m2.empty());
  std::nth_element(m2.begin(), m2.begin() + m2.size() / 2, m2.end());
  CHECK(m2[m2.size() / 2] > 6.0);
  CHECK(m2[m2.size() / 2] < 20.0);
}

TEST_CASE("moment error maps match the scatter over 100 noise draws", "[moments][noise]") {
  // A tiny cube so that 100 draws take a second or two. The mask is fixed
  // (external, from the noise-free cube) so that the formula, which holds
  // for a given mask, is what is tested.
  MockGalaxy g;
  g.grid.nx = g.grid.ny = 20;
  g.grid.pixel_arcsec = 1.0;
  g.disc_radius_arcsec = 7.0;
  g.scale_length_arcsec = 3.0;
  g.tail_flux_fraction = 0.0;
  g.bmaj_arcsec = 2.5;
  g.bmin_arcsec = 2.0;
  g.vflat_kms = 100.0;
  g.optical.enabled = false;
  g.cube.enabled = true;
  g.cube.n_channels = 16;
  g.cube.channel_width_kms = 20.0;
  g.cube.dispersion_kms = 15.0;
  g.cube.noise_rms = 0.0;
  auto clean = make_mock(g);
  Cube mask = *clean.cube;
  double peak = 0.0;
  for (double v : mask.data) peak = std::max(peak, v);
  for (double& v : mask.data) v = v > 0.02 * peak ? 1.0 : 0.0;
  MomentOptions o;
  o.mask = MaskMethod::External;
  o.external_mask = mask;
  const std::size_t np = clean.cube->plane_size();
  std::vector<double> s0(np, 0.0), ss0(np, 0.0), s1(np, 0.0), ss1(np, 0.0), pred0(np, 0.0), pred1(np, 0.0);
  const int draws = 100;
  g.cube.noise_rms = 0.002;
  for (int d = 0; d < draws; ++d) {
    g.seed = 1000 + static_cast<std::uint64_t>(d);
    auto p = make_moment_maps(*make_mock(g).cube, o);
    for (std::size_t i = 0; i < np; ++i) {
      s0[i] += p.mom0.data[i];
      ss0[i] += p.mom0.data[i] * p.mom0.data[i];
      pred0[i] += p.mom0_err.data[i] * p.mom0_err.data[i];
      if (std::isfinite(p.mom1.data[i])) {
        s1[i] += p.mom1.data[i];
        ss1[i] += p.mom1.data[i] * p.mom1.data[i];
        pred1[i] += p.mom1_err.data[i] * p.mom1_err.data[i];
      }
    }
  }
  // Sum of empirical variances over the masked pixels against the sum of the
  // predicted ones (each pixel's empirical variance alone scatters by 14%).
  auto clean_p = make_moment_maps(*clean.cube, o);
  double emp0 = 0.0, pre0 = 0.0, emp1 = 0.0, pre1 = 0.0;
  int n0 = 0, n1 = 0;
  for (std::size_t i = 0; i < np; ++i) {
    if (clean_p.nchan.data[i] < 3) continue;
    const double m = s0[i] / draws;
    emp0 += (ss0[i] / draws - m * m) * draws / (draws - 1.0);
    pre0 += pred0[i] / draws;
    ++n0;
    // Velocity errors where the first-order formula applies (S/N >= 10).
    if (clean_p.mom0.data[i] < 10.0 * std::sqrt(pred0[i] / draws)) continue;
    const double m1 = s1[i] / draws;
    emp1 += (ss1[i] / draws - m1 * m1) * draws / (draws - 1.0);
    pre1 += pred1[i] / draws;
    ++n1;
  }
  REQUIRE(n0 > 50);
  REQUIRE(n1 > 20);
  INFO("mom0: " << n0 << " pixels, empirical/predicted variance " << emp0 / pre0 << "; mom1: " << n1
                << " pixels, " << emp1 / pre1);
  CHECK(std::abs(std::sqrt(emp0 / pre0) - 1.0) < kErrorScatterTol);
  CHECK(std::abs(std::sqrt(emp1 / pre1) - 1.0) < kErrorScatterTol);
}

TEST_CASE("channel order and the spectral axis type do not change the moments", "[moments][spectral]") {
  MockGalaxy g = cube_mock(3);
  g.cube.noise_rms = 0.0;
  g.grid.nx = g.grid.ny = 32;
  g.grid.pixel_arcsec = 1.0;
  MomentOptions o;
  o.mask = MaskMethod::None;
  auto ref = make_moment_maps(*make_mock(g).cube, o);
  for (bool reverse : {false, true})
    for (std::string type : {"VRAD", "FREQ"}) {
      g.cube.reverse_channels = reverse;
      g.cube.spectral_type = type;
      auto p = make_moment_maps(*make_mock(g).cube, o);
      double worst0 = 0.0, worst1 = 0.0;
      for (std::size_t i = 0; i < p.mom0.size(); ++i) {
        worst0 = std::max(worst0, std::abs(p.mom0.data[i] - ref.mom0.data[i]));
        if (std::isfinite(ref.mom1.data[i]) && ref.mom0.data[i] > 1e-3)
          worst1 = std::max(worst1, std::abs(p.mom1.data[i] - ref.mom1.data[i]));
      }
      INFO(type << (reverse ? " reversed" : ""));
      // FREQ channels are uniform in radio velocity (exact), so only rounding differs.
      CHECK(worst0 < 1e-9);
      CHECK(worst1 < 1e-6);
      CHECK(p.axis.increasing() == !reverse);
    }
  // The noise-free cube's moments equal the mock's line map.
  auto mock = make_mock(g);
  double worst = 0.0;
  for (std::size_t i = 0; i < ref.mom0.size(); ++i)
    worst = std::max(worst, std::abs(ref.mom0.data[i] - mock.intensity_model.data[i]));
  CHECK(worst < 1e-9);
}

TEST_CASE("robust noise estimate ignores emission", "[moments][noise]") {
  fulcrum::Random rng(fulcrum::splitmix64(77));
  std::vector<double> v(4000);
  for (double& x : v) x = 0.5 * rng.normal();
  for (int i = 0; i < 400; ++i) v[static_cast<std::size_t>(i)] += 5.0 + i * 0.01;  // 10% bright emission
  NoiseOptions o;
  // 4000 samples: the MAD-based sigma scatters by ~2%; clipping removes the emission.
  CHECK(robust_sigma(v, o) == Approx(0.5).epsilon(0.06));
  std::vector<double> few = {1.0, NAN};
  CHECK(std::isnan(robust_sigma(few, o)));
}

TEST_CASE("cubes the moments cannot use get clear errors", "[moments][errors]") {
  MockGalaxy g = cube_mock(5);
  g.grid.nx = g.grid.ny = 16;
  g.cube.n_channels = 8;
  auto mock = make_mock(g);
  Cube c = *mock.cube;
  c.path = "mock.fits";
  SECTION("all channels blank") {
    for (double& v : c.data) v = NAN;
    CHECK_THROWS_WITH(make_moment_maps(c, MomentOptions{}), Catch::Contains("all channels are blank") &&
                                                                Catch::Contains("mock.fits"));
  }
  SECTION("no spectral axis") {
    // Replace the spectral cards by a Stokes axis.
    std::string h;
    for (std::size_t pos = 0; pos + 80 <= c.header.size(); pos += 80) {
      std::string rec = c.header.substr(pos, 80);
      if (rec.rfind("CTYPE3", 0) == 0) rec = std::string("CTYPE3  = 'STOKES  '").append(60, ' ');
      if (rec.rfind("CUNIT3", 0) == 0) continue;
      h += rec;
    }
    c.header = h;
    CHECK_THROWS_WITH(make_moment_maps(c, MomentOptions{}), Catch::Contains("no spectral axis"));
  }
  SECTION("frequency axis without a rest frequency, and the override") {
    g.cube.spectral_type = "FREQ";
    Cube f = *make_mock(g).cube;
    f.path = "freq.fits";
    std::string h;
    for (std::size_t pos = 0; pos + 80 <= f.header.size(); pos += 80)
      if (f.header.compare(pos, 7, "RESTFRQ") != 0) h += f.header.substr(pos, 80);
    f.header = h;
    CHECK_THROWS_WITH(make_moment_maps(f, MomentOptions{}), Catch::Contains("rest frequency"));
    MomentOptions o;
    o.spectral.rest_frequency_hz = g.cube.rest_frequency_hz;
    CHECK_NOTHROW(make_moment_maps(f, o));
  }
  SECTION("a mask cube of another shape") {
    MomentOptions o;
    o.mask = MaskMethod::External;
    Cube m = c;
    m.nz = 4;
    m.data.resize(m.plane_size() * 4);
    m.path = "mask.fits";
    CHECK_THROWS_WITH(make_moment_maps(c, o), Catch::Contains("needs a mask cube"));
    o.external_mask = m;
    CHECK_THROWS_WITH(make_moment_maps(c, o), Catch::Contains("mask.fits"));
  }
}

TEST_CASE("fulcrum moments writes the maps and the summary", "[moments][cli]") {
  auto dir = test::temp_dir("moments-cli");
  auto synth = test::run_fulcrum("-q synth --out " + (dir / "mock").string() +
                                 " --optical-enabled=false --grid-nx 40 --grid-ny 40 --grid-pixel-arcsec 1"
                                 " --cube-enabled --cube-n-channels 40 --cube-spectral-type FREQ"
                                 " --cube-noise-rms 0.0005");
  INFO(synth.err);
  REQUIRE(synth.exit_code == 0);
  auto r = test::run_fulcrum("moments --cube " + (dir / "mock" / "cube.fits").string() + " --out " +
                             (dir / "m").string() + " --mask moment-masking");
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  for (const char* f : {"mom0.fits", "mom0_err.fits", "mom1.fits", "mom1_err.fits", "mom2.fits", "peak.fits",
                        "mask.fits", "nchan.fits", "moments.json"})
    CHECK(std::filesystem::exists(dir / "m" / f));
  auto j = nlohmann::json::parse(slurp(dir / "m" / "moments.json"));
  CHECK(j["total_flux"]["unit"] == "Jy km/s");
  CHECK(j["mask"]["method"] == "moment-masking");
  CHECK(j["spectral_axis"]["convention"] == "radio");
  CHECK(j["noise"]["channel_rms"].size() == 40);
  CHECK(j["noise"]["median_channel_rms"].get<double>() == Approx(0.0005).epsilon(0.1));
  // The maps keep the cube's celestial WCS and beam.
  Image m0 = read_image((dir / "m" / "mom0.fits").string());
  Image ref = read_image((dir / "mock" / "mom0.fits").string());
  CHECK(m0.unit == "Jy/beam.km/s");
  REQUIRE(m0.beam);
  CHECK(m0.beam->bmaj_arcsec == Approx(ref.beam->bmaj_arcsec));
  auto w1 = m0.wcs.pixel_to_world({3.0, 7.0}), w2 = ref.wcs.pixel_to_world({3.0, 7.0});
  CHECK(w1.ra_deg == Approx(w2.ra_deg).margin(1e-12));
  CHECK(w1.dec_deg == Approx(w2.dec_deg).margin(1e-12));
  Cube mask = read_cube((dir / "m" / "mask.fits").string());
  CHECK(mask.nz == 40);
  // Optical velocities on request; a 2-D image is refused with one line.
  auto opt = test::run_fulcrum("moments --cube " + (dir / "mock" / "cube.fits").string() + " --out " +
                               (dir / "o").string() + " --convention optical --mask none");
  CHECK(opt.exit_code == 0);
  auto jo = nlohmann::json::parse(slurp(dir / "o" / "moments.json"));
  CHECK(jo["spectral_axis"]["convention"] == "optical");
  auto bad = test::run_fulcrum("moments --cube " + (dir / "mock" / "mom0.fits").string() + " --out " +
                               (dir / "b").string());
  CHECK(bad.exit_code == 2);
  CHECK(bad.err.find("mom0.fits") != std::string::npos);
  CHECK_FALSE(std::filesystem::exists(dir / "b" / "moments.json"));
}

TEST_CASE("a 4-D cube with a Stokes axis and per-pixel noise", "[moments][fits][python]") {
  MockGalaxy g = cube_mock(8);
  g.grid.nx = g.grid.ny = 24;
  g.grid.pixel_arcsec = 1.0;
  g.cube.spectral_type = "FREQ";
  g.cube.n_channels = 60;
  auto dir = test::temp_dir("stokes");
  auto mock = make_mock(g);
  write_mock(dir.string(), mock);
  // astropy.io.fits writes the same data as (x, y, STOKES, FREQ).
  auto r = test::run_python("make_stokes_cube.py", (dir / "cube.fits").string() + " " + (dir / "cube4.fits").string());
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
  Cube c3 = read_cube((dir / "cube.fits").string());
  Cube c4 = read_cube((dir / "cube4.fits").string());
  REQUIRE(c4.spectral_axis == 4);
  auto p3 = make_moment_maps(c3, MomentOptions{});
  auto p4 = make_moment_maps(c4, MomentOptions{});
  double worst = 0.0;
  for (std::size_t i = 0; i < p3.mom0.size(); ++i) worst = std::max(worst, std::abs(p3.mom0.data[i] - p4.mom0.data[i]));
  CHECK(worst < 1e-12);
  CHECK(p4.axis.velocity_kms.front() == Approx(p3.axis.velocity_kms.front()).margin(1e-9));
  CHECK(header_value(p4.spectral_cards, "CTYPE3").value() == "FREQ");
  // Per-pixel noise: each spectrum's own rms, here the cube's 0.0005 Jy/beam.
  MomentOptions o;
  o.noise.per_pixel = true;
  auto pp = make_moment_maps(c3, o);
  REQUIRE(pp.pixel_rms);
  std::vector<double> v;
  for (double x : pp.pixel_rms->data)
    if (std::isfinite(x)) v.push_back(x);
  std::nth_element(v.begin(), v.begin() + v.size() / 2, v.end());
  // 60 channels per spectrum: each estimate scatters by ~12%; the median by much less.
  CHECK(v[v.size() / 2] == Approx(g.cube.noise_rms).epsilon(0.05));
}
