// `fulcrum calibrate`: matched-mock calibration of one galaxy's verdict. Takes
// the inputs of `analyse` (and runs that analysis first), or a finished
// analyse folder (--from DIR, its report.json) plus the maps (or the cube:
// --cube makes them into OUT/moments/); writes OUT/calibration.json. The
// library does the work (calibration/); the galaxy's inputs are read as for
// analyse (galaxy_args.hpp).
#include <filesystem>
#include <fstream>
#include <iostream>
#include <memory>
#include <optional>
#include <sstream>

#include "fulcrum/calibration/calibration.hpp"
#include "fulcrum/core/error.hpp"
#include "fulcrum/core/log.hpp"
#include "fulcrum/io/atomic_file.hpp"
#include "fulcrum/io/distinct_paths.hpp"
#include "fulcrum/io/staged_folder.hpp"
#include "fulcrum/pipeline/cube_maps.hpp"
#include "fulcrum/pipeline/galaxy_analysis.hpp"
#include "fulcrum/pipeline/galaxy_stages.hpp"
#include "fulcrum/pipeline/report_json.hpp"
#include "fulcrum/pipeline/report_reader.hpp"
#include "fulcrum/core/settings_check.hpp"
#include "fulcrum/pipeline/input_settings.hpp"
#include "galaxy_args.hpp"
#include "subcommand.hpp"

namespace {

struct CalibrateArgs {
  fulcrum::cli::GalaxyArgs galaxy;
  std::int64_t seed = 1, draws = 20000, mocks = 100, mock_draws = 2000, refit_every = 1;
  bool no_refit = false, per_mock = false;
  std::string from, out;
};

void run_calibrate(CalibrateArgs& a, CLI::App* cmd) {
  using namespace fulcrum;
  namespace fs = std::filesystem;
  set_quiet(cli::global_flags().quiet);
  a.galaxy.finish(cmd, a.from.empty());
  auto& in = a.galaxy.in;
  const std::uint64_t seed = pipeline::setting::seed(a.seed);
  const int draws = pipeline::setting::draws(a.draws);
  calibration::check_mock_work("mocks", a.mocks, a.mock_draws);  // before the analysis
  const auto mocks = static_cast<std::size_t>(a.mocks);
  const auto mock_draws = static_cast<std::size_t>(a.mock_draws);
  const auto refit_every = static_cast<std::size_t>(check_integer_in_range("refit_every", a.refit_every, 1, 100000));
  const fs::path out_file = fs::path(a.out) / "calibration.json";
  auto inputs = cli::galaxy_input_paths(in);
  inputs.emplace_back("from", a.from);
  check_inputs_outside_folder(inputs, {"out", a.out});
  // Inputs first: the maps and a --from report are read and checked before
  // any output folder is taken (a cube is checked as its moments are made).
  std::optional<pipeline::GalaxyMaps> maps;
  if (in.cube.empty()) maps = pipeline::load_galaxy_maps(in);
  // The analysis: a finished one read through the one reader of report.json,
  // or run now. Either way the typed summary gives the matched inputs.
  pipeline::GalaxySummary summary;
  const std::string report_path = (fs::path(a.from) / "report.json").string();
  if (!a.from.empty()) summary = pipeline::read_report_file(report_path);
  // One writer: a staging folder beside --out, renamed into place at the end
  // (io/staged_folder.hpp).
  StagedFolder out(a.out, cli::global_flags().force);
  try {
    if (!in.cube.empty()) {
      note("making the moment maps of " + in.cube);
      in = pipeline::make_maps_from_cube(in, out.path());
      maps = pipeline::load_galaxy_maps(in);
    }
    if (a.from.empty()) {
      pipeline::AnalysisOptions o;
      o.seed = seed;
      o.draws = draws;
      o.figures = false;
      note("analysing " + in.name);
      summary = pipeline::analyse_galaxy(in, o).summary;
    }
    calibration::MatchedInputs mi;
    try {
      mi = pipeline::matched_inputs(summary, *maps);
    } catch (const InputError& e) {
      if (a.from.empty()) throw;
      throw InputError(report_path, e.problem());  // name the report the summary came from
    }
    calibration::CalibrationOptions co;
    co.n_mocks = mocks;
    // The galaxy seed of the analysis unless --seed is given.
    co.seed = summary.robustness && !cmd->count("--seed") ? summary.seed : seed;
    co.n_draws = mock_draws;
    co.refit_centre = !a.no_refit;
    co.refit_every = refit_every;
    pipeline::take_summary_settings(summary, co);
    auto s = calibration::calibrate(mi, co);
    nlohmann::json j = calibration::to_json(s, a.per_mock);
    j["galaxy"] = s.galaxy;
    j["verdict"] = robustness::verdict_name(summary.verdict);
    j["mock_draws"] = co.n_draws;
    j["refit_every"] = co.refit_centre ? nlohmann::json(co.refit_every) : nlohmann::json(nullptr);
    j["seconds"] = s.seconds;
    write_text_file(out.file("calibration.json"), pipeline::dump_json(j));
    out.commit();
    std::cout << s.galaxy << ": " << s.statement << ".\n"
              << "bias of A " << s.bias << " +- " << s.bias_err << "; 68%/95% interval coverage "
              << s.coverage68.rate << " / " << s.coverage95.rate << "; centre within 2 sigma "
              << s.centre_coverage.rate << " of " << s.centre_coverage.n << " re-fits\n"
              << "calibration: " << out_file.string() << "\n";
  } catch (const InputError& e) {
    out.rethrow_in_target(e);
  }
}

}  // namespace

FULCRUM_SUBCOMMAND(calibrate, 75, [](CLI::App& app) {
  auto a = std::make_shared<CalibrateArgs>();
  auto* cmd = app.add_subcommand(
      "calibrate",
      "Matched-mock calibration: how often the analysis calls a symmetric disc with this galaxy's beam, noise, "
      "masking and centre errors robust, and how well it recovers the measured asymmetry");
  a->galaxy.add(cmd);
  cmd->add_option("--seed", a->seed, "Galaxy seed (default: the analysis seed, 1)");
  cmd->add_option("--draws", a->draws, "Bootstrap draws of the real analysis (default 20000)");
  cmd->add_option("--from", a->from, "A finished analyse output folder: use its report.json instead of re-running")
      ->check(CLI::ExistingDirectory);
  cmd->add_option("--mocks", a->mocks, "Mocks per set, symmetric and lopsided (default 100)");
  cmd->add_option("--mock-draws", a->mock_draws, "Bootstrap draws per mock analysis (default 2000)");
  cmd->add_option("--refit-every", a->refit_every, "Re-fit the kinematic centre on every k-th mock (default 1: all)");
  cmd->add_flag("--no-refit", a->no_refit, "Do not re-fit the kinematic centre (use the truth with the real covariance)");
  cmd->add_flag("--per-mock", a->per_mock, "List every mock's outcome in calibration.json");
  cmd->add_option("--out", a->out, "Output folder")->required();
  cmd->callback([a, cmd] { run_calibrate(*a, cmd); });
});
