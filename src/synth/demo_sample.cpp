// The built-in demo sample: six invented disc galaxies falling through the
// invented "Orrin cluster" (centre RA 226.80, Dec +27.40, 88 Mpc), each built
// to show one outcome of the analysis. Positions, names and the cluster are
// made up; the parameters were chosen by hand (and may be retuned so that the
// full analysis reaches each expected verdict).
#include <cstdio>
#include <filesystem>
#include <sstream>

#include "fulcrum/core/error.hpp"
#include "fulcrum/io/atomic_file.hpp"
#include "fulcrum/sky/angle.hpp"
#include "fulcrum/sky/offset_frame.hpp"
#include "fulcrum/synth/mock_galaxy.hpp"

namespace fulcrum::synth {

namespace {
MockGalaxy base(const char* name, std::uint64_t seed, double ra, double dec, double vsys) {
  MockGalaxy g;
  g.name = name;
  g.seed = seed;
  g.ra_deg = ra;
  g.dec_deg = dec;
  g.vsys_kms = vsys;
  g.distance_mpc = 88.0;
  g.grid.centre_east_arcsec = 0.37;
  g.grid.centre_north_arcsec = -0.21;
  g.optical.grid.centre_east_arcsec = -0.45;
  g.optical.grid.centre_north_arcsec = 0.18;
  return g;
}
// Photometric offset of `dist` arcsec towards position angle `pa`.
void offset_towards(MockGalaxy& g, double pa_deg, double dist) {
  SkyOffset u = direction_of(pa_deg * degrees);
  g.optical.offset_east_arcsec = dist * u.east;
  g.optical.offset_north_arcsec = dist * u.north;
}
}  // namespace

std::vector<MockGalaxy> demo_sample() {
  std::vector<MockGalaxy> s;
  {
    MockGalaxy g = base("orrin-01", 101, 226.7312, 27.4586, 6840.0);
    g.pa_deg = 62.0; g.inc_deg = 55.0; g.vflat_kms = 190.0;
    g.total_flux_jykms = 30.0; g.leading_excess = 0.40;
    g.tail_pa_deg = 305.0; g.tail_flux_fraction = 0.06; g.stripped_fraction = 0.15;
    offset_towards(g, 140.0, 0.3);
    g.description = "A bright disc with a clear leading-side excess; every plausible centre agrees.";
    g.expected_verdict = "robust";
    s.push_back(g);
  }
  {
    MockGalaxy g = base("orrin-02", 102, 226.9120, 27.3311, 7105.0);
    g.pa_deg = 148.0; g.inc_deg = 62.0; g.vflat_kms = 170.0;
    g.total_flux_jykms = 18.0; g.leading_excess = 0.07;
    g.tail_pa_deg = 120.0; g.tail_flux_fraction = 0.02;
    // About one beam (2 arcsec) towards the leading side (PA 300).
    offset_towards(g, 300.0, 2.0);
    g.description = "A small leading excess, and a photometric centre about one beam towards the leading "
                    "side: from that centre the sign reverses.";
    g.expected_verdict = "centre-sensitive";
    s.push_back(g);
  }
  {
    MockGalaxy g = base("orrin-03", 103, 226.8455, 27.5190, 6512.0);
    g.pa_deg = 20.0; g.inc_deg = 48.0; g.vflat_kms = 150.0;
    g.total_flux_jykms = 0.6; g.leading_excess = 0.2;
    g.stripped_fraction = 0.97; g.tail_flux_fraction = 0.5; g.tail_pa_deg = 210.0; g.tail_length_arcsec = 20.0;
    g.description = "Nearly fully stripped: a tiny detection in the centre and a faint tail, too little "
                    "emission to measure the halves.";
    g.expected_verdict = "undetermined";
    s.push_back(g);
  }
  {
    MockGalaxy g = base("orrin-04", 104, 226.6401, 27.2733, 6977.0);
    g.pa_deg = 255.0; g.inc_deg = 58.0; g.vflat_kms = 160.0;
    // Faint and noisy in the line map, but with a well-sampled velocity field
    // (low velocity noise, velocities kept down to S/N 1) so that the centre
    // is known well: the sign is then limited by the map noise, not the centre.
    g.total_flux_jykms = 10.0; g.intensity_rms = 0.06; g.leading_excess = 0.18;
    g.tail_pa_deg = 20.0; g.tail_flux_fraction = 0.03;
    g.mask_snr = 1.0; g.velocity_noise_kms = 2.0; g.velocity_noise_floor_kms = 0.5;
    g.description = "A faint, noisy line map with a modest leading excess: the centre is well known but the "
                    "sign is not secure given the noise.";
    g.expected_verdict = "marginal";
    s.push_back(g);
  }
  {
    MockGalaxy g = base("orrin-05", 105, 226.9873, 27.4102, 6655.0);
    g.pa_deg = 318.0; g.inc_deg = 50.0; g.vflat_kms = 200.0;
    g.total_flux_jykms = 25.0; g.leading_excess = -0.40;
    g.tail_pa_deg = 80.0; g.tail_flux_fraction = 0.06;
    offset_towards(g, 15.0, 0.4);
    g.description = "A trailing-side excess: the gas is piled up on the side of the tail.";
    g.expected_verdict = "reversed";
    s.push_back(g);
  }
  {
    MockGalaxy g = base("orrin-06", 106, 226.7788, 27.2208, 7260.0);
    g.pa_deg = 100.0; g.inc_deg = 65.0; g.vflat_kms = 210.0;
    g.total_flux_jykms = 22.0; g.leading_excess = 0.35;
    g.tail_pa_deg = 190.0; g.tail_flux_fraction = 0.07; g.stripped_fraction = 0.2;
    g.grid.rotation_deg = 35.0; g.grid.flip = true;
    g.optical.grid.rotation_deg = -20.0; g.optical.grid.pixel_arcsec = 0.35; g.optical.grid.nx = 180;
    g.optical.grid.ny = 180;
    offset_towards(g, 290.0, 0.35);
    g.cube.enabled = true; g.cube.spectral_type = "FREQ"; g.cube.n_channels = 64;
    g.cube.channel_width_kms = 12.0; g.cube.noise_rms = 0.0006;
    g.description = "A clear leading excess observed on a rotated and flipped pixel grid (and as a "
                    "frequency cube): nothing may assume north is up.";
    g.expected_verdict = "robust";
    s.push_back(g);
  }
  return s;
}

namespace {
std::string toml_string(const std::string& s) {
  std::string o = "\"";
  for (char c : s) {
    if (c == '"' || c == '\\') o += '\\';
    o += c;
  }
  return o + "\"";
}
// A TOML float: always with a decimal point, shortest exact form.
std::string toml_float(double v) {
  char b[40];
  std::snprintf(b, sizeof b, "%.10g", v);
  std::string s(b);
  if (s.find_first_of(".eEn") == std::string::npos) s += ".0";
  return s;
}
}  // namespace

std::string write_sample(const std::string& dir, const std::vector<MockGalaxy>& galaxies,
                         const std::string& sample_name, std::uint64_t seed) {
  std::ostringstream m;
  m.precision(10);
  m << "# Sample manifest written by `fulcrum synth --demo-sample`: invented mock galaxies.\n"
    << "# Paths are relative to this file's folder; each folder holds truth.json.\n"
    << "[sample]\n"
    << "name = " << toml_string(sample_name) << "\n"
    << "seed = " << seed << "\n";
  for (const auto& g : galaxies) {
    auto p = make_mock(g);
    auto files = write_mock((std::filesystem::path(dir) / g.name).string(), p);
    m << "\n[[galaxy]]\n"
      << "name = " << toml_string(g.name) << "\n"
      << "velocity = " << toml_string(g.name + "/vel.fits") << "\n"
      << "intensity = " << toml_string(g.name + "/mom0.fits") << "\n"
      << "intensity_error = " << toml_string(g.name + "/mom0_err.fits") << "\n";
    if (p.optical) m << "optical = " << toml_string(g.name + "/opt.fits") << "\n";
    m << "tail_pa_deg = " << toml_float(wrap_pa_deg(g.tail_pa_deg)) << "\n"
      << "tail_pa_err_deg = " << toml_float(g.tail_pa_err_deg) << "\n"
      << "distance_mpc = " << toml_float(g.distance_mpc) << "\n";
  }
  const std::string path = (std::filesystem::path(dir) / "sample.toml").string();
  write_text_file(path, m.str());
  return path;
}

}  // namespace fulcrum::synth
