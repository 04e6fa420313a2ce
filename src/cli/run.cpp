// `fulcrum run SAMPLE.toml --out DIR`: every galaxy of a manifest, in
// parallel, plus the sample products (pipeline/sample_run.hpp).
#include <iostream>
#include <memory>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/log.hpp"
#include "fulcrum/pipeline/input_settings.hpp"
#include "fulcrum/pipeline/sample_run.hpp"
#include "fulcrum/pipeline/slurm_script.hpp"
#include "subcommand.hpp"

namespace {
struct RunArgs {
  std::string manifest, out, shard;
  std::string slurm_script, slurm_partition, slurm_account;
  int shards = 0;
  std::vector<std::string> only;
  int threads = 0;
  std::int64_t draws = 0, seed = 0, calibrate = 0;
  std::string bootstrap_centres = "adopted";
  bool no_figures = false;
};
}  // namespace

FULCRUM_SUBCOMMAND(run, 80, [](CLI::App& app) {
  auto a = std::make_shared<RunArgs>();
  auto* cmd = app.add_subcommand("run", "Analyse every galaxy of a sample manifest (TOML) in parallel and write the "
                                        "sample tables, sample.json and report.html");
  cmd->add_option("manifest", a->manifest, "Sample manifest (TOML)")->required()->check(CLI::ExistingFile);
  cmd->add_option("--out", a->out, "Output folder")->required();
  cmd->add_option("--only", a->only, "Run only these galaxies (repeatable)");
  cmd->add_option("--shard", a->shard, "Run shard I of N (every N-th galaxy), e.g. 3/8; combine with `fulcrum merge`");
  cmd->add_option("--threads", a->threads, "Galaxies analysed at once (default: all cores)");
  cmd->add_option("--draws", a->draws, "Bootstrap draws per galaxy (overrides the manifest)");
  cmd->add_option("--seed", a->seed, "Sample seed (overrides the manifest)");
  cmd->add_option("--calibrate", a->calibrate,
                  "Matched mocks per set for each galaxy's calibration (overrides the manifest's `calibrate`, "
                  "whose default is " + std::to_string(fulcrum::calibration::kDefaultCalibrationMocks) +
                      "; 0 turns it off)");
  cmd->add_option("--bootstrap-centres", a->bootstrap_centres,
                  "Where bootstrap centres come from: adopted (default) or all-estimates");
  cmd->add_flag("--no-figures", a->no_figures, "Skip the figures");
  auto* slurm = cmd->add_option("--slurm-script", a->slurm_script,
                                "Run nothing; write a bash script that submits the sample to Slurm as a job array "
                                "of shards plus the merge (docs/cluster.md)");
  slurm->excludes(cmd->get_option("--shard"))->excludes(cmd->get_option("--only"))
      ->excludes(cmd->get_option("--threads"));
  cmd->add_option("--shards", a->shards, "With --slurm-script: number of shards (default: one per 4 galaxies)")
      ->needs(slurm);
  cmd->add_option("--slurm-partition", a->slurm_partition, "With --slurm-script: the Slurm partition to use")
      ->needs(slurm);
  cmd->add_option("--slurm-account", a->slurm_account, "With --slurm-script: the Slurm account to charge")
      ->needs(slurm);
  cmd->callback([a, cmd] {
    using namespace fulcrum;
    set_quiet(cli::global_flags().quiet);
    auto m = pipeline::read_manifest(a->manifest);
    if (!a->slurm_script.empty()) {
      pipeline::SlurmJobOptions j;
      j.out_dir = a->out;
      j.shards = a->shards;
      j.partition = a->slurm_partition;
      j.account = a->slurm_account;
      if (cmd->count("--draws")) j.draws = pipeline::setting::draws(a->draws);
      if (cmd->count("--seed")) j.seed = pipeline::setting::seed(a->seed);
      if (cmd->count("--calibrate")) j.calibrate = pipeline::setting::calibrate(a->calibrate);
      j.figures = !a->no_figures;
      j.bootstrap_from_estimates = pipeline::bootstrap_centres_from_estimates(a->bootstrap_centres);
      auto set = pipeline::write_slurm_script(m, j, a->slurm_script, cli::global_flags().force);
      std::cout << pipeline::resources_text(set.resources) << "\nsubmit with: bash " << a->slurm_script << "\n";
      return;
    }
    pipeline::RunOptions o;
    o.out_dir = a->out;
    if (!a->shard.empty()) {
      o.selection = pipeline::parse_shard(a->shard);
      o.record_shard = true;
    }
    o.selection.only = a->only;
    o.threads = a->threads;
    o.figures = !a->no_figures;
    o.overwrite = cli::global_flags().force;
    if (cmd->count("--draws")) o.draws = pipeline::setting::draws(a->draws);
    if (cmd->count("--seed")) o.seed = pipeline::setting::seed(a->seed);
    if (cmd->count("--calibrate")) o.calibrate = pipeline::setting::calibrate(a->calibrate);
    o.bootstrap_from_estimates = pipeline::bootstrap_centres_from_estimates(a->bootstrap_centres);
    auto s = pipeline::run_sample(m, o);
    std::cout << pipeline::summary_text(s.galaxies) << "\nreport: " << s.html_path << "\n";
  });
});
