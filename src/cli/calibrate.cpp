// `fulcrum calibrate`: matched-mock calibration of one galaxy's verdict. Takes
// the inputs of `analyse` (and runs that analysis first), or a finished
// analyse folder (--from DIR, its report.json) plus the maps; writes
// OUT/calibration.json. The library does the work (calibration/).
#include <filesystem>
#include <fstream>
#include <iostream>
#include <memory>
#include <sstream>

#include "fulcrum/calibration/from_report.hpp"
#include "fulcrum/core/error.hpp"
#include "fulcrum/core/log.hpp"
#include "fulcrum/io/atomic_file.hpp"
#include "fulcrum/pipeline/galaxy_analysis.hpp"
#include "subcommand.hpp"

namespace {

struct CalibrateArgs {
  fulcrum::pipeline::GalaxyInput in;
  double rms = 0, tail_pa = 0;
  std::uint64_t seed = 1;
  int draws = 20000;
  std::size_t mocks = 100, mock_draws = 2000, refit_every = 1;
  bool no_refit = false, per_mock = false;
  std::string from, out;
};

void run_calibrate(CalibrateArgs& a, CLI::App* cmd) {
  using namespace fulcrum;
  namespace fs = std::filesystem;
  set_quiet(cli::global_flags().quiet);
  auto& in = a.in;
  if (in.name.empty()) in.name = fs::path(in.intensity).parent_path().filename().string();
  if (in.name.empty() || in.name == "." || in.name == "..") in.name = "galaxy";
  if (cmd->count("--rms")) {
    if (!(a.rms > 0)) throw InputError("", "--rms must be positive");
    in.rms = a.rms;
  }
  if (cmd->count("--tail-pa")) in.tail_pa_deg = a.tail_pa;
  if (a.mocks < 1) throw InputError("", "--mocks must be at least 1");
  if (a.mock_draws < 100) throw InputError("", "--mock-draws must be at least 100");
  const fs::path out_file = fs::path(a.out) / "calibration.json";
  if (fs::exists(out_file) && !cli::global_flags().force)
    throw InputError(a.out, "already holds a calibration.json (use --force to overwrite)");

  nlohmann::json report;
  std::string where;
  if (!a.from.empty()) {
    where = (fs::path(a.from) / "report.json").string();
    std::ifstream f(where);
    if (!f) throw InputError(where, "cannot be read");
    try {
      report = nlohmann::json::parse(f);
    } catch (const std::exception& e) {
      throw InputError(where, std::string("is not JSON: ") + e.what());
    }
  } else {
    if (!in.tail_pa_deg && in.tail_image.empty()) throw InputError("", "give --tail-pa DEG or --tail-image IMG.fits");
    pipeline::AnalysisOptions o;
    o.seed = a.seed;
    o.draws = a.draws;
    o.figures = false;
    note("analysing " + in.name);
    report = pipeline::analyse_galaxy(in, o).report;
    where = in.name + " (analysis)";
  }
  auto maps = calibration::load_maps(in);
  auto mi = calibration::matched_inputs_from_report(report, in, maps, where);
  calibration::CalibrationOptions co;
  co.n_mocks = a.mocks;
  co.seed = report.contains("robustness") && report["robustness"].contains("seed") &&
                    report["robustness"]["seed"].is_number_unsigned() && !cmd->count("--seed")
                ? report["robustness"]["seed"].get<std::uint64_t>()
                : a.seed;
  co.n_draws = a.mock_draws;
  co.refit_centre = !a.no_refit;
  co.refit_every = a.refit_every;
  co.bootstrap_from_estimates = report.contains("robustness") && report["robustness"].is_object() &&
                                report["robustness"].value("centre_draws", "adopted") == "all-estimates";
  auto s = calibration::calibrate(mi, co);
  nlohmann::json j = calibration::to_json(s, a.per_mock);
  j["galaxy"] = s.galaxy;
  j["verdict"] = report.value("verdict", "undetermined");
  j["mock_draws"] = co.n_draws;
  j["refit_every"] = co.refit_centre ? nlohmann::json(co.refit_every) : nlohmann::json(nullptr);
  j["seconds"] = s.seconds;
  fs::create_directories(a.out);
  write_text_file(out_file.string(), pipeline::dump_json(j));
  std::cout << s.galaxy << ": " << s.statement << ".\n"
            << "bias of A " << s.bias << " +- " << s.bias_err << "; 68%/95% interval coverage "
            << s.coverage68.rate << " / " << s.coverage95.rate << "; centre within 2 sigma "
            << s.centre_coverage.rate << " of " << s.centre_coverage.n << " re-fits\n"
            << "calibration: " << out_file.string() << "\n";
}

}  // namespace

FULCRUM_SUBCOMMAND(calibrate, 75, [](CLI::App& app) {
  auto a = std::make_shared<CalibrateArgs>();
  auto* cmd = app.add_subcommand(
      "calibrate",
      "Matched-mock calibration: how often the analysis calls a symmetric disc with this galaxy's beam, noise, "
      "masking and centre errors robust, and how well it recovers the measured asymmetry");
  cmd->add_option("--velocity", a->in.velocity, "Velocity field (FITS, km/s or m/s)")->required()->check(CLI::ExistingFile);
  cmd->add_option("--velocity-error", a->in.velocity_error, "Velocity error map (FITS)")->check(CLI::ExistingFile);
  cmd->add_option("--intensity", a->in.intensity, "Integrated line intensity map (FITS)")->required()->check(CLI::ExistingFile);
  auto* err = cmd->add_option("--intensity-error", a->in.intensity_error, "Per-pixel error of the intensity map (FITS)")
                  ->check(CLI::ExistingFile);
  cmd->add_option("--rms", a->rms, "One rms for every intensity pixel (map units), instead of an error map")->excludes(err);
  cmd->add_option("--optical", a->in.optical, "Optical image for the photometric centres (FITS)")->check(CLI::ExistingFile);
  cmd->add_option("--optical-mask", a->in.optical_mask, "Mask of the optical image (non-zero: masked)")->check(CLI::ExistingFile);
  auto* tp = cmd->add_option("--tail-pa", a->tail_pa, "Direction of the gas tail from the centre, deg north through east");
  cmd->add_option("--tail-pa-err", a->in.tail_pa_err_deg, "Error of the tail direction, deg (default 10)");
  cmd->add_option("--tail-image", a->in.tail_image, "Image of the tail to measure its direction from")
      ->check(CLI::ExistingFile)->excludes(tp);
  cmd->add_option("--name", a->in.name, "Galaxy name (default: the intensity map's folder)");
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
