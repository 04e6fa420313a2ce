// Shared command-line options: the moment-map settings (`moments`, and
// `analyse`/`calibrate` with --cube) and the inputs of one galaxy
// (`analyse`, `calibrate`), with their checks, defined once.
//
// A galaxy comes either as maps (--velocity and --intensity, with their
// error maps or --rms) or as a line cube (--cube), from which the maps are
// made with the moment-map settings. Giving both is an error: the cube makes
// the velocity and intensity maps and their error maps.
#pragma once

#include <CLI/CLI.hpp>
#include <cmath>
#include <filesystem>
#include <string>
#include <vector>

#include "fulcrum/core/error.hpp"
#include "fulcrum/moments/moment_settings.hpp"
#include "fulcrum/pipeline/input_settings.hpp"
#include "fulcrum/pipeline/manifest.hpp"
#include "kinematic_args.hpp"
#include "subcommand.hpp"

namespace fulcrum::cli {

// The moment-map settings as options of `cmd` (in option group `group`, none
// when empty). Returns the options, to tell whether any was given.
inline std::vector<CLI::Option*> add_moment_options(CLI::App* cmd, MomentSettings& s, const std::string& group = "") {
  std::vector<CLI::Option*> out;
  for (auto& m : moment_settings(s)) {
    const std::string name = option_name(m.name);
    CLI::Option* o = nullptr;
    if (auto* flag = std::get_if<bool*>(&m.target)) {
      o = cmd->add_flag(name, **flag, m.help);
    } else {
      std::visit(
          [&](auto* p) {
            if constexpr (!std::is_same_v<decltype(p), bool*>) o = cmd->add_option(name, *p, m.help);
          },
          m.target);
      if (m.is_path) o->check(CLI::ExistingFile);
      else if (m.name != "rest_frequency" && m.name != "convention") o->capture_default_str();
    }
    if (!group.empty()) o->group(group);
    out.push_back(o);
  }
  return out;
}

// The files a galaxy is read from, with their settings (for the checks of
// io/distinct_paths.hpp).
inline std::vector<std::pair<std::string, std::string>> galaxy_input_paths(const pipeline::GalaxyInput& in) {
  return {{"cube", in.cube},         {"velocity", in.velocity}, {"velocity_error", in.velocity_error},
          {"intensity", in.intensity}, {"intensity_error", in.intensity_error}, {"optical", in.optical},
          {"optical_mask", in.optical_mask}, {"tail_image", in.tail_image}};
}

// The inputs of one galaxy, as `analyse` and `calibrate` take them.
struct GalaxyArgs {
  pipeline::GalaxyInput in;
  double rms = 0.0, clip_snr = 0.0, tail_pa = 0.0, tail_pa_err = 10.0, psf = 0.0;
  std::vector<std::string> centre_from;
  std::vector<CLI::Option*> moment_options;

  void add(CLI::App* cmd) {
    cmd->add_option("--cube", in.cube,
                    "Spectral-line cube (FITS): make the velocity and intensity maps from it (instead of "
                    "--velocity/--intensity); they are written to OUT/moments/")
        ->check(CLI::ExistingFile);
    cmd->add_option("--velocity", in.velocity, "Velocity field (FITS, km/s or m/s)")->check(CLI::ExistingFile);
    cmd->add_option("--velocity-error", in.velocity_error, "Velocity error map (FITS)")->check(CLI::ExistingFile);
    cmd->add_option("--intensity", in.intensity, "Integrated line intensity map (FITS)")->check(CLI::ExistingFile);
    auto* err = cmd->add_option("--intensity-error", in.intensity_error, "Per-pixel error of the intensity map (FITS)")
                    ->check(CLI::ExistingFile);
    cmd->add_option("--rms", rms, "One rms for every intensity pixel (map units), instead of an error map")->excludes(err);
    cmd->add_option("--clip-snr", clip_snr,
                    "The intensity map was clipped: pixels below this S/N were set to 0 or blanked (errors of A "
                    "then include the clipping; default: not clipped)");
    cmd->add_option("--optical", in.optical, "Optical image for the photometric centres (FITS)")->check(CLI::ExistingFile);
    cmd->add_option("--optical-mask", in.optical_mask, "Mask of the optical image (non-zero: masked)")
        ->check(CLI::ExistingFile);
    cmd->add_option("--psf-fwhm", psf, "Optical PSF FWHM in arcsec (default: from the image header)");
    auto* tp = cmd->add_option("--tail-pa", tail_pa, "Direction of the gas tail from the centre, deg north through east");
    cmd->add_option("--tail-pa-err", tail_pa_err, "Error of the tail direction, deg (default 10)");
    cmd->add_option("--tail-image", in.tail_image, "Image of the tail to measure its direction from")
        ->check(CLI::ExistingFile)->excludes(tp);
    cmd->add_option("--centre-from", centre_from,
                    "A centre given from outside (catalogue, literature) as NAME=RA,DEC,ERR: RA and Dec in deg, "
                    "1-sigma error in arcsec; a plausible centre with its own A (repeatable)");
    cmd->add_option("--name", in.name, "Galaxy name for the report (default: the folder of the cube or intensity map)");
    moment_options = add_moment_options(cmd, in.moments, "Moment maps (with --cube; see `fulcrum moments`)");
    add_kinematic_options(cmd, in.kinematic, "Kinematic fit (see `fulcrum kinematics`)");
  }

  // Check the options given and complete `in`. `need_tail`: a tail direction
  // (--tail-pa or --tail-image) is required.
  void finish(CLI::App* cmd, bool need_tail) {
    if (!in.cube.empty()) {
      for (const char* o : {"--velocity", "--velocity-error", "--intensity", "--intensity-error", "--rms", "--clip-snr"})
        if (cmd->count(o))
          throw InputError("", std::string("--cube makes the velocity and intensity maps and their error maps: give "
                                           "either --cube or the maps, not both (got --cube and ") + o + ")");
    } else {
      if (in.velocity.empty() || in.intensity.empty())
        throw InputError("", "give the maps (--velocity and --intensity) or a line cube (--cube)");
      for (auto* o : moment_options)
        if (o->count()) throw InputError("", o->get_name() + " is a moment-map setting: it goes with --cube");
    }
    if (in.name.empty())
      in.name = std::filesystem::path(in.cube.empty() ? in.intensity : in.cube).parent_path().filename().string();
    if (in.name.empty() || in.name == "." || in.name == "..") in.name = "galaxy";
    if (cmd->count("--rms")) in.rms = pipeline::setting::rms(rms);
    if (cmd->count("--clip-snr")) in.clip_snr = pipeline::setting::clip_snr(clip_snr);
    if (cmd->count("--psf-fwhm")) in.psf_fwhm_arcsec = pipeline::setting::psf_fwhm_arcsec(psf);
    if (cmd->count("--tail-pa")) in.tail_pa_deg = pipeline::setting::tail_pa_deg(tail_pa);
    if (cmd->count("--tail-pa-err")) in.tail_pa_err_deg = pipeline::setting::tail_pa_err_deg(tail_pa_err);
    if (!centre_from.empty()) in.external_centres = pipeline::setting::centres_from(centre_from);
    if (need_tail && !in.tail_pa_deg && in.tail_image.empty())
      throw InputError("", "give --tail-pa DEG or --tail-image IMG.fits");
    if (!in.cube.empty()) {
      if (auto problem = moment_settings_problem(in.moments, option_name); !problem.empty())
        throw InputError("", problem);
    }
    if (auto problem = kinematics::kinematic_settings_problem(in.kinematic, option_name); !problem.empty())
      throw InputError("", problem);
  }
};

}  // namespace fulcrum::cli
