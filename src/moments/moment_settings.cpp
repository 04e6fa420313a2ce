// The settings of the moment maps as a person gives them (see
// include/fulcrum/moments/moment_settings.hpp).
#include "fulcrum/moments/moment_settings.hpp"

#include <cmath>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/number_text.hpp"
#include "fulcrum/core/work_limit.hpp"
#include "fulcrum/io/fits_image.hpp"

namespace fulcrum {

std::vector<MomentSetting> moment_settings(MomentSettings& s) {
  auto& o = s.options;
  return {
      {"mask", "Mask method: smooth-and-mask, moment-masking (Dame 2011), external, none", &s.mask},
      {"mask_cube", "Mask cube of the same shape (non-zero = use the voxel); implies the external mask",
       &s.mask_cube, true},
      {"threshold", "Smooth-and-mask threshold in sigma of the smoothed cube", &o.threshold_sigma},
      {"grow_channels", "Grow the smooth-and-mask mask by this many channels", &o.grow_channels},
      {"grow_pixels", "Grow the smooth-and-mask mask by this many pixels", &o.grow_pixels},
      {"moment_mask_threshold", "Moment-masking threshold in sigma of the smoothed cube", &o.dame_threshold_sigma},
      {"smooth_factor", "Smooth to this many times the beam to build the mask (> 1)", &o.smooth_factor},
      {"smooth_channels", "Spectral boxcar width for the mask (odd)", &o.smooth_channels},
      {"clip", "Clipping threshold (sigma) of the noise estimate", &o.noise.clip_sigma},
      {"noise_per_pixel", "Measure the noise from each pixel's spectrum", &o.noise.per_pixel},
      {"rest_frequency", "Rest frequency in Hz (overrides RESTFRQ/RESTFREQ)", &s.rest_frequency_hz},
      {"convention", "Velocity convention of the outputs: radio or optical (default: the cube's axis)",
       &s.convention},
      {"min_channels", "Fewest masked channels for a velocity", &o.min_channels_velocity},
  };
}

std::string option_name(const std::string& name) {
  std::string s = "--" + name;
  for (char& c : s)
    if (c == '_') c = '-';
  return s;
}

namespace {
// Mask growth allowed (moment_settings_problem): generous, a mask is grown
// by a beam or a few channels.
constexpr int kMaxGrowPixels = 1000;
constexpr int kMaxGrowChannels = 10000;
}  // namespace

std::string moment_settings_problem(const MomentSettings& s,
                                    const std::function<std::string(const std::string&)>& name_of) {
  const auto& o = s.options;
  // The wording of core/settings_check.hpp, with the caller's name for the setting.
  auto bad = [&](const std::string& key, const std::string& value, const std::string& rule) {
    return name_of(key) + " = " + value + " is not allowed: must be " + rule;
  };
  const bool known_mask =
      s.mask == "smooth-and-mask" || s.mask == "smooth" || s.mask == "moment-masking" || s.mask == "dame" ||
      s.mask == "external" || s.mask == "none";
  if (!known_mask)
    return name_of("mask") + " '" + s.mask + "' is unknown (use smooth-and-mask, moment-masking, external or none)";
  if (!s.mask_cube.empty() && s.mask != "external" && s.mask != "smooth-and-mask")
    return name_of("mask_cube") + " goes with " + name_of("mask") + " external (got '" + s.mask + "')";
  if (s.mask_cube.empty() && s.mask == "external") return name_of("mask") + " external needs " + name_of("mask_cube");
  if (!s.convention.empty() && s.convention != "radio" && s.convention != "optical")
    return name_of("convention") + " must be radio or optical (got '" + s.convention + "')";
  if (!std::isfinite(s.rest_frequency_hz) || s.rest_frequency_hz < 0.0)
    return bad("rest_frequency", shortest_text(s.rest_frequency_hz), "a positive frequency in Hz");
  if (!(o.threshold_sigma > 0.0) || !std::isfinite(o.threshold_sigma))
    return bad("threshold", shortest_text(o.threshold_sigma), "a finite number > 0 sigma");
  if (!(o.dame_threshold_sigma > 0.0) || !std::isfinite(o.dame_threshold_sigma))
    return bad("moment_mask_threshold", shortest_text(o.dame_threshold_sigma), "a finite number > 0 sigma");
  // Upper bounds: the growth's work is the footprint's area times the masked
  // voxels; a growth wider than any map is a typing error, refused before
  // the cube is read (a million pixels once took 4.2 GB).
  // Scaled by `limit_scale` like every work limit (core/work_limit.hpp).
  if (auto r = count_limit_rule(o.grow_channels, 0, kMaxGrowChannels, "the mask growth", "channels"); !r.empty())
    return bad("grow_channels", std::to_string(o.grow_channels), r);
  if (auto r = count_limit_rule(o.grow_pixels, 0, kMaxGrowPixels, "the mask growth", "pixels"); !r.empty())
    return bad("grow_pixels", std::to_string(o.grow_pixels), r);
  if (!(o.smooth_factor > 1.0) || !std::isfinite(o.smooth_factor)) 
    return bad("smooth_factor", shortest_text(o.smooth_factor), "a finite number > 1");
  if (o.smooth_channels < 1 || o.smooth_channels % 2 == 0)
    return bad("smooth_channels", std::to_string(o.smooth_channels), "an odd number of channels >= 1");
  if (!(o.noise.clip_sigma > 0.0) || !std::isfinite(o.noise.clip_sigma)) 
    return bad("clip", shortest_text(o.noise.clip_sigma), "a finite number > 0 sigma");
  if (o.min_channels_velocity < 1)
    return bad("min_channels", std::to_string(o.min_channels_velocity), "at least 1 channel");
  return "";
}

MomentOptions resolve_moment_settings(const MomentSettings& s,
                                      const std::function<std::string(const std::string&)>& name_of) {
  if (auto problem = moment_settings_problem(s, name_of); !problem.empty()) throw InputError("", problem);
  MomentOptions o = s.options;
  o.mask = s.mask_cube.empty() ? parse_mask_method(s.mask) : MaskMethod::External;
  if (!s.mask_cube.empty()) o.external_mask = read_cube(s.mask_cube);
  if (s.rest_frequency_hz != 0.0) o.spectral.rest_frequency_hz = s.rest_frequency_hz;
  if (s.convention == "radio") o.spectral.convention = VelocityConvention::Radio;
  if (s.convention == "optical") o.spectral.convention = VelocityConvention::Optical;
  return o;
}

nlohmann::json to_json(const MomentSettings& s) {
  MomentSettings copy = s;
  nlohmann::json j = nlohmann::json::object();
  for (const auto& setting : moment_settings(copy))
    std::visit([&](auto* p) { j[setting.name] = *p; }, setting.target);
  // Not given: null (the cube's header decides).
  for (const char* k : {"mask_cube", "convention"})
    if (j[k] == "") j[k] = nullptr;
  if (s.rest_frequency_hz == 0.0) j["rest_frequency"] = nullptr;
  return j;
}

}  // namespace fulcrum
