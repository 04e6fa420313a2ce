// `fulcrum moments`: masked moment maps and their error maps from a
// spectral-line cube (library: moments/moment_maps.hpp).
#include <filesystem>
#include <iostream>
#include <memory>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/log.hpp"
#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/io/output_folder.hpp"
#include "fulcrum/moments/moment_maps.hpp"
#include "subcommand.hpp"

namespace {

struct MomentsCli {
  std::string cube;
  std::string out;
  std::string mask = "smooth-and-mask";
  std::string mask_cube;
  std::string convention;
  double rest_frequency = 0.0;
  fulcrum::MomentOptions options;
};

void run_moments(MomentsCli& cli) {
  using namespace fulcrum;
  namespace fs = std::filesystem;
  auto& o = cli.options;
  o.mask = parse_mask_method(cli.mask);
  if (!cli.mask_cube.empty()) {
    if (o.mask != MaskMethod::External && cli.mask != "smooth-and-mask")
      throw InputError("", "--mask-cube goes with --mask external");
    o.mask = MaskMethod::External;
    o.external_mask = read_cube(cli.mask_cube);
  } else if (o.mask == MaskMethod::External) {
    throw InputError("", "--mask external needs --mask-cube FILE");
  }
  if (cli.rest_frequency != 0.0) o.spectral.rest_frequency_hz = cli.rest_frequency;
  if (cli.convention == "radio") o.spectral.convention = VelocityConvention::Radio;
  else if (cli.convention == "optical") o.spectral.convention = VelocityConvention::Optical;
  else if (!cli.convention.empty())
    throw InputError("", "--convention must be radio or optical (got '" + cli.convention + "')");
  Cube cube = read_cube(cli.cube);
  MomentProducts p = make_moment_maps(cube, o);
  OutputFolder folder(cli.out, cli::global_flags().force);
  auto files = write_moment_maps(folder.path().string(), p, cli.cube);
  folder.keep();
  std::cout << "total flux " << p.total_flux << " +/- " << p.total_flux_err << " " << p.flux_unit << "  ("
            << mask_method_name(o.mask) << " mask, " << p.mask_voxels << " voxels, "
            << convention_name(p.axis.convention) << " velocities)\n";
  for (const auto& f : files) std::cout << (fs::path(cli.out) / f).string() << "\n";
}

}  // namespace

FULCRUM_SUBCOMMAND(moments, 30, [](CLI::App& app) {
  auto* cmd = app.add_subcommand("moments", "Masked moment maps (intensity, velocity, dispersion, peak) "
                                            "and their error maps from a line cube");
  auto cli = std::make_shared<MomentsCli>();
  auto& o = cli->options;
  cmd->add_option("--cube", cli->cube, "Spectral-line cube (FITS; frequency or velocity axis)")
      ->required()->check(CLI::ExistingFile);
  cmd->add_option("--out", cli->out, "Output folder")->required();
  cmd->add_option("--mask", cli->mask, "Mask method: smooth-and-mask, moment-masking (Dame 2011), external, none")
      ->capture_default_str();
  cmd->add_option("--mask-cube", cli->mask_cube, "Mask cube of the same shape (non-zero = use the voxel)")
      ->check(CLI::ExistingFile);
  cmd->add_option("--threshold", o.threshold_sigma, "Smooth-and-mask threshold in sigma of the smoothed cube")
      ->capture_default_str();
  cmd->add_option("--grow-channels", o.grow_channels, "Grow the smooth-and-mask mask by this many channels")
      ->capture_default_str();
  cmd->add_option("--grow-pixels", o.grow_pixels, "Grow the smooth-and-mask mask by this many pixels")
      ->capture_default_str();
  cmd->add_option("--moment-mask-threshold", o.dame_threshold_sigma,
                  "Moment-masking threshold in sigma of the smoothed cube")->capture_default_str();
  cmd->add_option("--smooth-factor", o.smooth_factor, "Smooth to this many times the beam to build the mask")
      ->capture_default_str();
  cmd->add_option("--smooth-channels", o.smooth_channels, "Spectral boxcar width for the mask (odd)")
      ->capture_default_str();
  cmd->add_option("--clip", o.noise.clip_sigma, "Clipping threshold (sigma) of the noise estimate")
      ->capture_default_str();
  cmd->add_flag("--noise-per-pixel", o.noise.per_pixel, "Measure the noise from each pixel's spectrum");
  cmd->add_option("--rest-frequency", cli->rest_frequency, "Rest frequency in Hz (overrides RESTFRQ/RESTFREQ)");
  cmd->add_option("--convention", cli->convention,
                  "Velocity convention of the outputs: radio or optical (default: the cube's axis)");
  cmd->add_option("--min-channels", o.min_channels_velocity, "Fewest masked channels for a velocity")
      ->capture_default_str();
  cmd->callback([cli] { run_moments(*cli); });
});
