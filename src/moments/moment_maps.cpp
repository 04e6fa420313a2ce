// Masked moment maps of a spectral-line cube and their errors (the method,
// formulas and sources are in moment_maps.hpp). Velocities km/s; S in the
// cube's BUNIT; sizes in pixels unless named _arcsec.
#include "fulcrum/moments/moment_maps.hpp"

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <numeric>

#include <Eigen/LU>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/log.hpp"
#include "fulcrum/imaging/gaussian_smooth.hpp"
#include "fulcrum/io/atomic_file.hpp"
#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/sky/pixel_offsets.hpp"

namespace fulcrum {

namespace {

// 1/Phi^-1(3/4): MAD -> Gaussian sigma (common practice).
constexpr double kMadToSigma = 1.482602218505602;

double median_of(std::vector<double>& v) {
  const std::size_t n = v.size();
  auto mid = v.begin() + static_cast<std::ptrdiff_t>(n / 2);
  std::nth_element(v.begin(), mid, v.end());
  double m = *mid;
  if (n % 2 == 0) m = 0.5 * (m + *std::max_element(v.begin(), mid));
  return m;
}

std::string lower_nospace(const std::string& s) {
  std::string o;
  for (char c : s)
    if (c != ' ') o += static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  return o;
}

bool is_jy_per_beam(const std::string& unit) {
  const std::string u = lower_nospace(unit);
  return u == "jy/beam" || u == "jy/bm" || u == "jybeam-1" || u == "jy.beam-1" || u == "jy/beam.";
}

Image plane_image(const Cube& c, std::vector<double> data, const std::string& unit) {
  Image im;
  im.nx = c.nx;
  im.ny = c.ny;
  im.wcs = c.wcs;
  im.beam = c.beam;
  im.unit = unit;
  im.data = std::move(data);
  im.path = c.path;
  return im;
}

// Dilate a voxel mask by `dz` channels and a round footprint of radius `r` pixels.
std::vector<unsigned char> dilate(const std::vector<unsigned char>& m, int nx, int ny, int nz, int dz, double r) {
  const std::size_t plane = static_cast<std::size_t>(nx) * ny;
  std::vector<unsigned char> a = m;
  if (dz > 0) {
    for (int z = 0; z < nz; ++z)
      for (std::size_t p = 0; p < plane; ++p)
        if (m[p + plane * z])
          for (int k = std::max(0, z - dz); k <= std::min(nz - 1, z + dz); ++k) a[p + plane * k] = 1;
  }
  if (r <= 0.0) return a;
  std::vector<std::pair<int, int>> fp;
  const int ri = static_cast<int>(std::floor(r));
  for (int dy = -ri; dy <= ri; ++dy)
    for (int dx = -ri; dx <= ri; ++dx)
      if (dx * dx + dy * dy <= r * r + 1e-9) fp.emplace_back(dx, dy);
  std::vector<unsigned char> b = a;
  for (int z = 0; z < nz; ++z)
    for (int y = 0; y < ny; ++y)
      for (int x = 0; x < nx; ++x) {
        if (!a[static_cast<std::size_t>(x) + static_cast<std::size_t>(nx) * y + plane * z]) continue;
        for (auto [dx, dy] : fp) {
          const int xx = x + dx, yy = y + dy;
          if (xx >= 0 && yy >= 0 && xx < nx && yy < ny)
            b[static_cast<std::size_t>(xx) + static_cast<std::size_t>(nx) * yy + plane * z] = 1;
        }
      }
  return b;
}

// Per-voxel noise lookup: per channel or per pixel.
struct NoiseModel {
  std::vector<double> chan;   // per channel
  std::vector<double> pixel;  // per pixel (empty unless per-pixel)
  std::size_t plane = 0;
  std::size_t at_bound = 0;   // estimates whose clipping stopped at max_iterations
  double at(std::size_t p, int z) const { return pixel.empty() ? chan[static_cast<std::size_t>(z)] : pixel[p]; }
};

NoiseModel measure_noise(const std::vector<double>& data, int nx, int ny, int nz, const NoiseOptions& opt) {
  NoiseModel nm;
  nm.plane = static_cast<std::size_t>(nx) * ny;
  nm.chan.resize(nz);
  std::vector<double> buf;
  for (int z = 0; z < nz; ++z) {
    buf.assign(data.begin() + static_cast<std::ptrdiff_t>(nm.plane * z),
               data.begin() + static_cast<std::ptrdiff_t>(nm.plane * (z + 1)));
    bool hit = false;
    nm.chan[z] = robust_sigma(buf, opt, &hit);
    nm.at_bound += hit;
  }
  if (opt.per_pixel) {
    nm.pixel.resize(nm.plane);
    for (std::size_t p = 0; p < nm.plane; ++p) {
      buf.resize(nz);
      for (int z = 0; z < nz; ++z) buf[z] = data[p + nm.plane * z];
      bool hit = false;
      nm.pixel[p] = robust_sigma(buf, opt, &hit);
      nm.at_bound += hit;
    }
  }
  return nm;
}

// The cube's smoothed copy used to find emission: smoothed spatially to
// smooth_factor x the beam (with `kernel`, arcsec), then by a boxcar of
// smooth_channels channels.
struct SmoothedCube {
  std::vector<double> data;
  Beam kernel;
  double pixel_scale = 1.0;  // arcsec per pixel
  int half_channels = 0;
};

SmoothedCube smooth_cube(const Cube& cube, const MomentOptions& opt, const std::string& src) {
  const int nx = cube.nx, ny = cube.ny, nz = cube.nz;
  const std::size_t plane = static_cast<std::size_t>(nx) * ny;
  SmoothedCube sc;
  // One pixel-space kernel for every channel (the grid's Jacobian is the
  // same for all planes).
  const PixelOffsets off(nx, ny, cube.wcs, cube.wcs.pixel_to_world({0.5 * (nx - 1), 0.5 * (ny - 1)}));
  sc.pixel_scale = off.pixel_scale_arcsec();
  if (cube.beam) {
    Beam target{opt.smooth_factor * cube.beam->bmaj_arcsec, opt.smooth_factor * cube.beam->bmin_arcsec,
                cube.beam->bpa_deg};
    sc.kernel = kernel_between(*cube.beam, target);
  } else {
    warn(src + ": no beam (BMAJ/BMIN) in the header; smoothing the mask with a 3-pixel kernel");
    sc.kernel = Beam{3.0 * sc.pixel_scale, 3.0 * sc.pixel_scale, 0.0};
  }
  const Eigen::Matrix2d kcov = pixel_covariance(sc.kernel, off.jacobian());
  std::vector<double>& sm = sc.data;
  sm.resize(plane * nz);
  SmoothOptions so;
  so.normalise_missing = true;
  so.fill_missing = false;
  std::vector<double> chan(plane);
  for (int z = 0; z < nz; ++z) {
    std::copy(cube.data.begin() + static_cast<std::ptrdiff_t>(plane * z),
              cube.data.begin() + static_cast<std::ptrdiff_t>(plane * (z + 1)), chan.begin());
    auto s = convolve_gaussian(chan, nx, ny, kcov, so);
    std::copy(s.begin(), s.end(), sm.begin() + static_cast<std::ptrdiff_t>(plane * z));
  }
  const int half = opt.smooth_channels / 2;
  sc.half_channels = half;
  if (half > 0) {
    std::vector<double> sp(plane * nz, NAN);
    for (std::size_t p = 0; p < plane; ++p)
      for (int z = 0; z < nz; ++z) {
        double s = 0.0;
        int n = 0;
        for (int k = std::max(0, z - half); k <= std::min(nz - 1, z + half); ++k) {
          const double x = sm[p + plane * k];
          if (std::isfinite(x)) { s += x; ++n; }
        }
        if (n > 0 && std::isfinite(sm[p + plane * z])) sp[p + plane * z] = s / n;
      }
    sm.swap(sp);
  }
  return sc;
}

// The mask of the smooth-and-mask or moment-masking method: voxels of the
// smoothed cube above the threshold, grown; its settings go to mask_json.
std::vector<unsigned char> emission_mask(const Cube& cube, const MomentOptions& opt, const std::string& src,
                                         nlohmann::json& mask_json) {
  const int nx = cube.nx, ny = cube.ny, nz = cube.nz;
  const std::size_t plane = static_cast<std::size_t>(nx) * ny;
  const SmoothedCube sc = smooth_cube(cube, opt, src);
  const std::vector<double>& sm = sc.data;
  NoiseModel snoise = measure_noise(sm, nx, ny, nz, opt.noise);
  const double t = opt.mask == MaskMethod::SmoothAndMask ? opt.threshold_sigma : opt.dame_threshold_sigma;
  std::vector<unsigned char> seed(plane * nz, 0);
  for (int z = 0; z < nz; ++z)
    for (std::size_t p = 0; p < plane; ++p) {
      const double s = snoise.at(p, z), x = sm[p + plane * z];
      if (std::isfinite(x) && std::isfinite(s) && s > 0.0 && x > t * s) seed[p + plane * z] = 1;
    }
  int dz = 0;
  double r = 0.0;
  if (opt.mask == MaskMethod::SmoothAndMask) {
    dz = opt.grow_channels;
    r = opt.grow_pixels;
    mask_json["threshold_sigma"] = opt.threshold_sigma;
    mask_json["grow_channels"] = opt.grow_channels;
    mask_json["grow_pixels"] = opt.grow_pixels;
  } else {
    // Dame (2011): every voxel that contributes to an above-threshold
    // smoothed voxel, i.e. within the smoothing kernel.
    dz = sc.half_channels;
    r = sc.kernel.fwhm_arcsec() / sc.pixel_scale;
    mask_json["threshold_sigma"] = opt.dame_threshold_sigma;
    mask_json["footprint_radius_pixels"] = r;
    mask_json["footprint_half_channels"] = dz;
  }
  std::vector<unsigned char> mask = dilate(seed, nx, ny, nz, dz, r);
  for (std::size_t i = 0; i < mask.size(); ++i)
    if (!std::isfinite(cube.data[i])) mask[i] = 0;
  mask_json["smooth_factor"] = opt.smooth_factor;
  mask_json["smooth_channels"] = opt.smooth_channels;
  mask_json["smoothing_kernel_arcsec"] = {{"bmaj", sc.kernel.bmaj_arcsec}, {"bmin", sc.kernel.bmin_arcsec},
                                          {"bpa_deg", sc.kernel.bpa_deg}};
  std::vector<double> finite;
  for (double s : snoise.chan)
    if (std::isfinite(s)) finite.push_back(s);
  mask_json["smoothed_noise_median"] = finite.empty() ? 0.0 : median_of(finite);
  return mask;
}

// The voxel mask of the chosen method (1 = use the voxel).
std::vector<unsigned char> voxel_mask(const Cube& cube, const MomentOptions& opt, const std::string& src,
                                      nlohmann::json& mask_json) {
  const std::size_t nvox = cube.data.size();
  mask_json = {{"method", mask_method_name(opt.mask)}};
  if (opt.mask == MaskMethod::SmoothAndMask || opt.mask == MaskMethod::MomentMasking)
    return emission_mask(cube, opt, src, mask_json);
  std::vector<unsigned char> mask(nvox, 0);
  if (opt.mask == MaskMethod::None) {
    for (std::size_t i = 0; i < nvox; ++i) mask[i] = std::isfinite(cube.data[i]) ? 1 : 0;
    return mask;
  }
  if (!opt.external_mask) throw InputError("", "the external mask method needs a mask cube");
  const Cube& m = *opt.external_mask;
  if (m.nx != cube.nx || m.ny != cube.ny || m.nz != cube.nz)
    throw InputError(m.path, "the mask cube is " + std::to_string(m.nx) + " x " + std::to_string(m.ny) + " x " +
                                 std::to_string(m.nz) + " but the cube is " + std::to_string(cube.nx) + " x " +
                                 std::to_string(cube.ny) + " x " + std::to_string(cube.nz));
  for (std::size_t i = 0; i < nvox; ++i)
    mask[i] = (std::isfinite(m.data[i]) && m.data[i] != 0.0 && std::isfinite(cube.data[i])) ? 1 : 0;
  mask_json["file"] = m.path;
  return mask;
}

// The noise again, from the emission-free voxels (outside the mask), so
// that emission filling much of a channel does not inflate it. Channels with
// fewer than kMinFreeVoxels unmasked finite voxels (pixels with fewer than 8
// free channels) keep the first estimate.
void remeasure_noise_outside_mask(const Cube& cube, const std::vector<unsigned char>& mask, const MomentOptions& opt,
                                  NoiseModel& noise) {
  if (opt.mask == MaskMethod::None) return;
  constexpr std::size_t kMinFreeVoxels = 30;
  const int nz = cube.nz;
  const std::size_t plane = static_cast<std::size_t>(cube.nx) * cube.ny;
  std::vector<double> buf;
  auto update = [&](double& target) {
    bool hit = false;
    const double s = robust_sigma(buf, opt.noise, &hit);
    noise.at_bound += hit;
    if (std::isfinite(s) && s > 0.0) target = s;
  };
  for (int z = 0; z < nz; ++z) {
    buf.clear();
    for (std::size_t p = 0; p < plane; ++p) {
      const double x = cube.data[p + plane * z];
      if (!mask[p + plane * z] && std::isfinite(x)) buf.push_back(x);
    }
    if (buf.size() >= kMinFreeVoxels) update(noise.chan[z]);
  }
  if (!opt.noise.per_pixel) return;
  for (std::size_t p = 0; p < plane; ++p) {
    buf.clear();
    for (int z = 0; z < nz; ++z) {
      const double x = cube.data[p + plane * z];
      if (!mask[p + plane * z] && std::isfinite(x)) buf.push_back(x);
    }
    if (buf.size() >= 8) update(noise.pixel[p]);
  }
}

// The moment planes of the masked cube and their errors (formulas in
// moment_maps.hpp).
struct MomentPlanes {
  std::vector<double> m0, e0, m1, e1, m2, peak, nchan;
  std::size_t mask_voxels = 0;
};

MomentPlanes moment_planes(const Cube& cube, const SpectralAxis& axis, const NoiseModel& noise,
                           const std::vector<unsigned char>& mask, const MomentOptions& opt) {
  const int nz = cube.nz;
  const std::size_t plane = static_cast<std::size_t>(cube.nx) * cube.ny;
  const auto& v = axis.velocity_kms;
  const auto& dv = axis.width_kms;
  MomentPlanes mp;
  for (auto* m : {&mp.m0, &mp.e0, &mp.m1, &mp.e1, &mp.m2, &mp.peak}) m->assign(plane, NAN);
  mp.nchan.assign(plane, 0.0);
  std::vector<double> w = dv;
  const double dv_med = median_of(w);
  for (std::size_t p = 0; p < plane; ++p) {
    bool any_finite = false;
    double s0 = 0.0, s1 = 0.0, var0 = 0.0, peak = -INFINITY;
    int n = 0;
    double floor_sigma = NAN;
    for (int z = 0; z < nz; ++z) {
      const double x = cube.data[p + plane * z];
      if (!std::isfinite(x)) continue;
      any_finite = true;
      const double s = noise.at(p, z);
      if (std::isfinite(s) && !std::isfinite(floor_sigma)) floor_sigma = s;
      if (!mask[p + plane * z]) continue;
      ++n;
      s0 += x * dv[z];
      s1 += x * v[z] * dv[z];
      if (std::isfinite(s)) var0 += s * s * dv[z] * dv[z];
      peak = std::max(peak, x);
    }
    if (!any_finite) continue;
    mp.mask_voxels += static_cast<std::size_t>(n);
    mp.nchan[p] = n;
    if (n == 0) {
      mp.m0[p] = 0.0;
      mp.e0[p] = std::isfinite(floor_sigma) ? floor_sigma * dv_med : NAN;
      continue;
    }
    mp.m0[p] = s0;
    mp.e0[p] = std::sqrt(var0);
    mp.peak[p] = peak;
    if (n >= opt.min_channels_velocity && s0 > 0.0) {
      const double mean = s1 / s0;
      double var1 = 0.0, s2 = 0.0;
      for (int z = 0; z < nz; ++z) {
        const double x = cube.data[p + plane * z];
        if (!std::isfinite(x) || !mask[p + plane * z]) continue;
        const double s = noise.at(p, z);
        const double d = v[z] - mean;
        if (std::isfinite(s)) var1 += s * s * dv[z] * dv[z] * d * d;
        s2 += x * d * d * dv[z];
      }
      mp.m1[p] = mean;
      mp.e1[p] = std::sqrt(var1) / s0;
      if (n >= opt.min_channels_dispersion && s2 > 0.0) mp.m2[p] = std::sqrt(s2 / s0);
    }
  }
  return mp;
}

// Total line flux of the moment-0 map and its error, in Jy km/s when the
// cube is in Jy/beam with a beam, else summed over pixels.
void set_total_flux(const Cube& cube, const MomentPlanes& mp, const std::string& m0_unit, MomentProducts& out) {
  const std::size_t plane = static_cast<std::size_t>(cube.nx) * cube.ny;
  PixelOffsets off(cube.nx, cube.ny, cube.wcs, cube.wcs.pixel_to_world({0.5 * (cube.nx - 1), 0.5 * (cube.ny - 1)}));
  const double pixel_area = off.pixel_area_arcsec2();
  double sum = 0.0, var = 0.0;
  for (std::size_t p = 0; p < plane; ++p)
    if (std::isfinite(mp.m0[p]) && mp.nchan[p] > 0) {
      sum += mp.m0[p];
      var += mp.e0[p] * mp.e0[p];
    }
  if (cube.beam && is_jy_per_beam(cube.unit)) {
    const double ppb = cube.beam->solid_angle_arcsec2() / pixel_area;
    out.total_flux = sum / ppb;
    // Beam-correlated noise: one independent value per beam area (approximate, common practice).
    out.total_flux_err = std::sqrt(var * ppb) / ppb;
    out.flux_unit = "Jy km/s";
  } else {
    out.total_flux = sum;
    out.total_flux_err = std::sqrt(var);
    out.flux_unit = m0_unit + " (summed over pixels)";
  }
}

nlohmann::json moment_summary(const Cube& cube, const MomentOptions& opt, const MomentProducts& out,
                              const NoiseModel& noise, const nlohmann::json& mask_json, const MomentPlanes& mp,
                              const std::string& m0_unit) {
  nlohmann::json j;
  j["cube"] = {{"path", cube.path}, {"nx", cube.nx}, {"ny", cube.ny}, {"nchan", cube.nz}, {"unit", cube.unit}};
  j["spectral_axis"] = {{"ctype", out.axis.axis_ctype},
                        {"velocity_ctype", out.axis.velocity_ctype},
                        {"convention", convention_name(out.axis.convention)},
                        {"rest_frequency_hz", out.axis.rest_frequency_hz},
                        {"channel_velocity_kms", out.axis.velocity_kms},
                        {"channel_width_kms", out.axis.width_kms}};
  std::vector<double> rms_json;
  for (double s : noise.chan) rms_json.push_back(std::isfinite(s) ? s : -1.0);
  std::vector<double> finite;
  for (double s : noise.chan)
    if (std::isfinite(s)) finite.push_back(s);
  j["noise"] = {{"method", "1.4826 x median absolute deviation, iterated with clipping"},
                {"clip_sigma", opt.noise.clip_sigma},
                {"max_iterations", opt.noise.max_iterations},
                {"estimates_stopped_at_iteration_bound", noise.at_bound},
                {"per_pixel", opt.noise.per_pixel},
                {"unit", cube.unit},
                {"channel_rms", rms_json},
                {"channel_rms_note", "-1 marks a channel with fewer than three finite pixels"},
                {"median_channel_rms", median_of(finite)}};
  j["mask"] = mask_json;
  j["mask"]["voxels"] = mp.mask_voxels;
  std::size_t nvel = 0;
  for (double x : mp.m1) nvel += std::isfinite(x) ? 1 : 0;
  j["maps"] = {{"mom0_unit", m0_unit}, {"pixels_with_velocity", nvel},
               {"min_channels_velocity", opt.min_channels_velocity},
               {"min_channels_dispersion", opt.min_channels_dispersion}};
  j["total_flux"] = {{"value", out.total_flux}, {"error", out.total_flux_err}, {"unit", out.flux_unit}};
  return j;
}

}  // namespace

const char* mask_method_name(MaskMethod m) {
  switch (m) {
    case MaskMethod::SmoothAndMask: return "smooth-and-mask";
    case MaskMethod::MomentMasking: return "moment-masking";
    case MaskMethod::External: return "external";
    case MaskMethod::None: return "none";
  }
  return "?";
}

MaskMethod parse_mask_method(const std::string& s) {
  if (s == "smooth-and-mask" || s == "smooth") return MaskMethod::SmoothAndMask;
  if (s == "moment-masking" || s == "dame") return MaskMethod::MomentMasking;
  if (s == "external") return MaskMethod::External;
  if (s == "none") return MaskMethod::None;
  throw InputError("", "unknown mask method '" + s + "' (use smooth-and-mask, moment-masking, external or none)");
}

double robust_sigma(std::vector<double> v, const NoiseOptions& opt, bool* hit_bound) {
  if (hit_bound) *hit_bound = false;
  v.erase(std::remove_if(v.begin(), v.end(), [](double x) { return !std::isfinite(x); }), v.end());
  if (v.size() < 3) return NAN;
  double sigma = NAN;
  std::vector<double> dev;
  const int passes = std::max(1, opt.max_iterations);
  for (int it = 0; it < passes; ++it) {
    std::vector<double> w = v;
    const double med = median_of(w);
    dev.resize(v.size());
    for (std::size_t i = 0; i < v.size(); ++i) dev[i] = std::abs(v[i] - med);
    const double s = kMadToSigma * median_of(dev);
    std::vector<double> kept;
    kept.reserve(v.size());
    for (double x : v)
      if (std::abs(x - med) <= opt.clip_sigma * s) kept.push_back(x);
    sigma = s;
    if (kept.size() == v.size() || kept.size() < 3 || s == 0.0) break;
    // The last pass still dropped values: the bound, not convergence, stopped it.
    if (it == passes - 1 && hit_bound) *hit_bound = true;
    v.swap(kept);
  }
  return sigma;
}

MomentProducts make_moment_maps(const Cube& cube, const MomentOptions& opt) {
  const std::string src = cube.path.empty() ? std::string("cube") : cube.path;
  const int nx = cube.nx, ny = cube.ny, nz = cube.nz;
  const std::size_t plane = static_cast<std::size_t>(nx) * ny;
  FULCRUM_CHECK(cube.data.size() == plane * static_cast<std::size_t>(nz), plane * nz, cube.data.size());
  if (std::none_of(cube.data.begin(), cube.data.end(), [](double v) { return std::isfinite(v); }))
    throw InputError(src, "all channels are blank (every voxel is NaN or BLANK)");
  if (opt.smooth_factor <= 1.0) throw InputError("", "the smoothing factor must be > 1");
  if (opt.smooth_channels < 1 || opt.smooth_channels % 2 == 0)
    throw InputError("", "the spectral smoothing width must be an odd number of channels >= 1");
  if (opt.noise.clip_sigma <= 0.0) throw InputError("", "the clipping threshold must be > 0");

  MomentProducts out;
  out.axis = spectral_axis_of(cube, opt.spectral);
  out.spectral_cards = spectral_cards_as_axis3(cube.header, cube.spectral_axis);

  // ---- noise of the cube, the mask, then the noise outside the mask
  NoiseModel noise = measure_noise(cube.data, nx, ny, nz, opt.noise);
  if (std::none_of(noise.chan.begin(), noise.chan.end(), [](double s) { return std::isfinite(s); }))
    throw InputError(src, "cannot measure the noise: no channel has three finite pixels");
  nlohmann::json mask_json;
  const std::vector<unsigned char> mask = voxel_mask(cube, opt, src, mask_json);
  remeasure_noise_outside_mask(cube, mask, opt, noise);
  out.channel_rms = noise.chan;
  if (opt.noise.per_pixel) out.pixel_rms = plane_image(cube, noise.pixel, cube.unit);

  // ---- moments
  const std::string m0_unit = cube.unit.empty() ? "km/s" : cube.unit + ".km/s";
  const MomentPlanes mp = moment_planes(cube, out.axis, noise, mask, opt);
  out.mask_voxels = mp.mask_voxels;
  out.mom0 = plane_image(cube, mp.m0, m0_unit);
  out.mom0_err = plane_image(cube, mp.e0, m0_unit);
  out.mom1 = plane_image(cube, mp.m1, "km/s");
  out.mom1_err = plane_image(cube, mp.e1, "km/s");
  out.mom2 = plane_image(cube, mp.m2, "km/s");
  out.peak = plane_image(cube, mp.peak, cube.unit);
  out.nchan = plane_image(cube, mp.nchan, "");
  out.mask.nx = nx;
  out.mask.ny = ny;
  out.mask.nz = nz;
  out.mask.wcs = cube.wcs;
  out.mask.beam = cube.beam;
  out.mask.header = cube.header;
  out.mask.spectral_axis = cube.spectral_axis;
  out.mask.data.assign(mask.begin(), mask.end());

  set_total_flux(cube, mp, m0_unit, out);
  out.summary = moment_summary(cube, opt, out, noise, mask_json, mp, m0_unit);
  return out;
}

std::vector<std::string> write_moment_maps(const std::string& dir, const MomentProducts& p,
                                           const std::string& input_path) {
  namespace fs = std::filesystem;
  std::error_code ec;
  fs::create_directories(dir, ec);
  if (ec) throw InputError(dir, "cannot create the output folder: " + ec.message());
  std::vector<std::string> files;
  auto img = [&](const char* name, const Image& im, const char* what) {
    std::vector<HeaderCard> extra = {{"BTYPE", what, "", false}, {"ORIGIN", "fulcrum moments", "", false}};
    write_image((fs::path(dir) / name).string(), im, extra);
    files.push_back(name);
  };
  img("mom0.fits", p.mom0, "integrated intensity");
  img("mom0_err.fits", p.mom0_err, "integrated intensity error");
  img("mom1.fits", p.mom1, "intensity-weighted velocity");
  img("mom1_err.fits", p.mom1_err, "velocity error");
  img("mom2.fits", p.mom2, "velocity dispersion");
  img("peak.fits", p.peak, "peak intensity");
  img("nchan.fits", p.nchan, "channels in the mask");
  write_cube((fs::path(dir) / "mask.fits").string(), p.mask, p.spectral_cards,
             {{"BTYPE", "mask", "1 = in the mask", false}, {"ORIGIN", "fulcrum moments", "", false}});
  files.push_back("mask.fits");
  nlohmann::json j = p.summary;
  if (!input_path.empty()) j["cube"]["path"] = input_path;
  j["files"] = files;
  write_text_file((fs::path(dir) / "moments.json").string(), j.dump(2) + "\n");
  files.push_back("moments.json");
  return files;
}

}  // namespace fulcrum
