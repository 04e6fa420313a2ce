// `fulcrum analyse`: the whole chain for one galaxy into one output folder
// (report.json, figures/*.svg|pdf|png, report.html; with --cube also the moment maps
// made from the cube, moments/). The library does the work
// (pipeline/galaxy_analysis.hpp, pipeline/cube_maps.hpp); this file only
// reads options (the galaxy's inputs: galaxy_args.hpp).
#include <cmath>
#include <filesystem>
#include <iostream>
#include <memory>
#include <optional>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/log.hpp"
#include "fulcrum/io/distinct_paths.hpp"
#include "fulcrum/io/staged_folder.hpp"
#include "fulcrum/pipeline/cube_maps.hpp"
#include "fulcrum/pipeline/galaxy_analysis.hpp"
#include "fulcrum/pipeline/galaxy_stages.hpp"
#include "fulcrum/pipeline/report_reader.hpp"
#include "fulcrum/pipeline/input_settings.hpp"
#include "fulcrum/pipeline/sample_run.hpp"
#include "galaxy_args.hpp"
#include "subcommand.hpp"

namespace {

struct AnalyseArgs {
  fulcrum::cli::GalaxyArgs galaxy;
  double distance = 0, alpha_co = 0, ratio21 = 0, redshift = -1;
  std::string co_line;
  std::int64_t seed = 1, draws = 20000, calibrate = fulcrum::calibration::kDefaultCalibrationMocks;
  std::string bootstrap_centres = "adopted";
  bool no_figures = false;
  std::string out;
};

void run_analyse(AnalyseArgs& a, CLI::App* cmd) {
  using namespace fulcrum;
  set_quiet(cli::global_flags().quiet);
  a.galaxy.finish(cmd, true);
  auto& in = a.galaxy.in;
  namespace setting = pipeline::setting;
  if (cmd->count("--distance-mpc")) in.distance_mpc = setting::distance_mpc(a.distance);
  if (!a.co_line.empty()) in.molecular.co_line = setting::co_line(a.co_line);
  if (cmd->count("--alpha-co")) in.molecular.alpha_co = setting::alpha_co(a.alpha_co);
  if (cmd->count("--co-ratio-21")) in.molecular.co_ratio_21 = setting::co_ratio_21(a.ratio21);
  if (cmd->count("--redshift")) in.molecular.redshift = setting::redshift(a.redshift);
  const int draws = setting::draws(a.draws);
  const int calibrate = setting::calibrate(a.calibrate);
  const std::uint64_t seed = setting::seed(a.seed);
  namespace fs = std::filesystem;
  check_inputs_outside_folder(cli::galaxy_input_paths(in), {"out", a.out});
  // Every input map read and checked before the output folder is made: an
  // unusable one is a one-line refusal, exit 2 (docs/reliability.md).
  std::optional<pipeline::GalaxyMaps> maps;
  if (in.cube.empty()) maps = pipeline::load_galaxy_maps(in);
  // One writer: a private staging folder beside --out, renamed into place at
  // the end; a failed or killed run leaves --out as it was.
  StagedFolder out(a.out, cli::global_flags().force);
  const std::string dir = out.path();
  try {
    if (!in.cube.empty()) {
      note("making the moment maps of " + in.cube);
      in = pipeline::make_maps_from_cube(in, dir);
    }

    pipeline::AnalysisOptions o;
    o.seed = seed;
    o.draws = draws;
    o.figures = !a.no_figures;
    o.calibrate = calibrate;
    o.bootstrap_from_estimates = pipeline::bootstrap_centres_from_estimates(a.bootstrap_centres);
    note("analysing " + in.name);
    auto r = maps ? pipeline::analyse_galaxy(in, std::move(*maps), o) : pipeline::analyse_galaxy(in, o);
    // An input a stage found unusable (a velocity map in m/s labelled km/s, a
    // map the fit cannot use): refused like an unreadable one; nothing is
    // written (docs/reliability.md, exit codes).
    if (!r.summary.unusable_file.empty()) throw InputError(r.summary.unusable_file, r.summary.unusable_problem);
    pipeline::write_galaxy_outputs(r, dir);
    // The page and the summary say what report.json says (the one reader).
    const auto g = pipeline::read_report(r.report, (fs::path(a.out) / "report.json").string());
    pipeline::write_galaxy_html(dir, g);
    out.commit();
    for (const auto& n : r.notes) warn(in.name + ": " + n);
    std::cout << g.statement << "\n\n"
              << pipeline::summary_text({g}) << "\nreport: " << (fs::path(a.out) / "report.json").string()
              << "\nfigures and page: " << (fs::path(a.out) / "report.html").string() << "\n";
  } catch (const InputError& e) {
    out.rethrow_in_target(e);
  }
}

}  // namespace

FULCRUM_SUBCOMMAND(analyse, 70, [](CLI::App& app) {
  auto a = std::make_shared<AnalyseArgs>();
  auto* cmd = app.add_subcommand(
      "analyse",
      "One galaxy, the whole chain: kinematic and photometric centres, halves at every centre, flip distance, "
      "bootstrap, verdict and figures into one folder");
  a->galaxy.add(cmd);
  cmd->add_option("--distance-mpc", a->distance, "Distance in Mpc (offsets in kpc, molecular-gas masses)");
  cmd->add_option("--seed", a->seed, "Seed of the random generator (default 1)");
  cmd->add_option("--draws", a->draws, "Bootstrap draws (default 20000)");
  cmd->add_option("--co-line", a->co_line, "CO line of the map, 1-0 or 2-1: adds molecular-gas masses of the halves");
  cmd->add_option("--alpha-co", a->alpha_co, "CO-to-H2 factor, Msun/(K km/s pc^2) (default 4.3)");
  cmd->add_option("--co-ratio-21", a->ratio21, "CO(2-1)/CO(1-0) ratio for 2-1 maps (default 0.65)");
  cmd->add_option("--redshift", a->redshift, "Redshift for the line luminosity (default: vsys/c)");
  cmd->add_option("--calibrate", a->calibrate, "Matched mocks per set for the calibration of the verdict (default " +
                                                  std::to_string(fulcrum::calibration::kDefaultCalibrationMocks) +
                                                  "; 0 turns it off)");
  cmd->add_option("--bootstrap-centres", a->bootstrap_centres,
                  "Where bootstrap centres come from: adopted (default; the adopted centre and its covariance) or "
                  "all-estimates (also every other centre estimate)");
  cmd->add_flag("--no-figures", a->no_figures, "Skip the figures");
  cmd->add_option("--out", a->out, "Output folder")->required();
  cmd->callback([a, cmd] { run_analyse(*a, cmd); });
});
