// `fulcrum moments`: masked moment maps and their error maps from a
// spectral-line cube (library: moments/moment_maps.hpp; the settings are the
// shared moment-map options of galaxy_args.hpp).
#include <filesystem>
#include <iostream>
#include <memory>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/log.hpp"
#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/io/distinct_paths.hpp"
#include "fulcrum/io/staged_folder.hpp"
#include "fulcrum/moments/moment_maps.hpp"
#include "fulcrum/moments/moment_settings.hpp"
#include "galaxy_args.hpp"
#include "subcommand.hpp"

namespace {

struct MomentsCli {
  std::string cube;
  std::string out;
  fulcrum::MomentSettings settings;
};

void run_moments(MomentsCli& cli) {
  using namespace fulcrum;
  namespace fs = std::filesystem;
  const MomentOptions o = resolve_moment_settings(cli.settings, option_name);
  check_inputs_outside_folder({{"cube", cli.cube}}, {"out", cli.out});
  // One writer: a staging folder beside --out, renamed into place at the end
  // (io/staged_folder.hpp); taken before the cube is read, so that a second
  // run into the same folder is refused at once.
  StagedFolder folder(cli.out, cli::global_flags().force);
  Cube cube = read_cube(cli.cube);
  MomentProducts p = make_moment_maps(cube, o);
  std::vector<std::string> files;
  try {
    files = write_moment_maps(folder.path(), p, cli.cube);
    folder.commit();
  } catch (const InputError& e) {
    folder.rethrow_in_target(e);
  }
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
  cmd->add_option("--cube", cli->cube, "Spectral-line cube (FITS; frequency or velocity axis)")
      ->required()->check(CLI::ExistingFile);
  cmd->add_option("--out", cli->out, "Output folder")->required();
  fulcrum::cli::add_moment_options(cmd, cli->settings);
  cmd->callback([cli] { run_moments(*cli); });
});
