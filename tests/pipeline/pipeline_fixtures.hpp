// Small invented discs for the pipeline tests: a velocity field from the
// tilted-ring formula (Begeman 1989) and an exponential line map on a
// rotated TAN grid, written as FITS with write_image. Invented data, used
// only to exercise the pipeline end to end (not a reference).
#pragma once

#include <cmath>
#include <filesystem>
#include <fstream>
#include <random>
#include <string>
#include <vector>

#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/sky/ellipse.hpp"
#include "fulcrum/sky/offset_frame.hpp"

namespace fulcrum::test {

struct TinyDisc {
  std::string name;
  double ra = 150.0, dec = 20.0, pa = 60.0, inc = 55.0, vsys = 7000.0, vflat = 180.0;
  double excess = 0.3, tail_pa = 300.0;
  int n = 48;
  double pixel = 0.5, rotation = 25.0;
  unsigned seed = 1;
};

inline Image tiny_grid(const TinyDisc& d) {
  const double r = d.rotation * M_PI / 180.0, s = d.pixel / 3600.0;
  double cd[2][2] = {{-s * std::cos(r), s * std::sin(r)}, {s * std::sin(r), s * std::cos(r)}};
  Image im;
  im.nx = im.ny = d.n;
  im.data.assign(static_cast<std::size_t>(d.n) * d.n, 0.0);
  im.wcs = CelestialWcs::from_cd("TAN", {0.5 * (d.n - 1) + 0.3, 0.5 * (d.n - 1) - 0.2}, {d.ra, d.dec}, cd);
  im.beam = Beam{2.0, 1.6, 20.0};
  return im;
}

// Writes vel.fits, mom0.fits, mom0_err.fits into dir.
inline void write_tiny_disc(const std::filesystem::path& dir, const TinyDisc& d) {
  std::filesystem::create_directories(dir);
  Image vel = tiny_grid(d), mom = tiny_grid(d), err = tiny_grid(d);
  vel.unit = "km/s";
  mom.unit = "Jy/beam km/s";
  err.unit = "Jy/beam km/s";
  std::mt19937 gen(d.seed);
  std::normal_distribution<double> noise(0.0, 1.0);
  OffsetFrame frame({d.ra, d.dec});
  for (int y = 0; y < d.n; ++y)
    for (int x = 0; x < d.n; ++x) {
      SkyOffset o = frame.to_offset(vel.wcs.pixel_to_world({double(x), double(y)}));
      DiscPoint p = disc_coordinates(o, {}, d.pa * degrees, d.inc * degrees);
      double vrot = d.vflat * 2 / M_PI * std::atan(p.radius_arcsec / 3.0);
      double phi = std::atan2(o.east, o.north) - (d.tail_pa + 180.0) * M_PI / 180.0;
      double sigma = std::exp(-p.radius_arcsec / 4.0) * (1 + d.excess * std::cos(phi));
      bool inside = p.radius_arcsec < 9.0;
      mom.at(x, y) = (inside ? 0.5 * sigma : 0.0) + 0.01 * noise(gen);
      err.at(x, y) = 0.01;
      vel.at(x, y) = inside ? d.vsys + vrot * std::sin(d.inc * M_PI / 180) * p.cos_theta + 3.0 * noise(gen) : NAN;
    }
  write_image((dir / "vel.fits").string(), vel);
  write_image((dir / "mom0.fits").string(), mom);
  write_image((dir / "mom0_err.fits").string(), err);
}

// A manifest of `count` tiny discs in dir (paths relative to it). The
// calibration is off (`calibrate = 0`) unless `calibrate` mocks are asked
// for: the tests that run samples are about the run, not the calibration
// (its default is on; tests/calibration/ and the analyse test check it).
inline std::string write_tiny_sample(const std::filesystem::path& dir, int count, int seed = 7, int draws = 400,
                                     int calibrate = 0) {
  std::ofstream m(dir / "sample.toml");
  m << "# invented test sample\n[sample]\nname = \"Tiny test sample\"\nseed = " << seed << "\ndraws = " << draws
    << "\ncalibrate = " << calibrate << "\n";
  for (int i = 0; i < count; ++i) {
    TinyDisc d;
    d.name = "tiny-" + std::to_string(i + 1);
    d.pa = 30.0 + 47.0 * i;
    d.excess = (i % 3 == 2) ? -0.25 : 0.3;
    d.tail_pa = std::fmod(300.0 + 61.0 * i, 360.0);
    d.rotation = 17.0 * i;
    d.seed = 100 + i;
    write_tiny_disc(dir / d.name, d);
    m << "\n[[galaxy]]\nname = \"" << d.name << "\"\nvelocity = \"" << d.name << "/vel.fits\"\nintensity = \"" << d.name
      << "/mom0.fits\"\nintensity_error = \"" << d.name << "/mom0_err.fits\"\ntail_pa_deg = " << d.tail_pa
      << "\ntail_pa_err_deg = 8.0\ndistance_mpc = 90.0\n";
  }
  return (dir / "sample.toml").string();
}

}  // namespace fulcrum::test
