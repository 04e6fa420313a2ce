// `fulcrum merge DIR... --out OUT`: combine per-galaxy results of shard runs
// into one sample (pipeline/sample_run.hpp, merge_outputs).
#include <iostream>
#include <memory>

#include "fulcrum/core/log.hpp"
#include "fulcrum/pipeline/sample_run.hpp"
#include "subcommand.hpp"

namespace {
struct MergeArgs {
  std::vector<std::string> dirs;
  std::string out;
};
}  // namespace

FULCRUM_SUBCOMMAND(merge, 85, [](CLI::App& app) {
  auto a = std::make_shared<MergeArgs>();
  auto* cmd = app.add_subcommand("merge", "Combine the per-galaxy results of several `fulcrum run --shard` folders "
                                          "into one sample with its tables and report");
  cmd->add_option("dirs", a->dirs, "Run folders to combine")->required();
  cmd->add_option("--out", a->out, "Output folder for the combined sample")->required();
  cmd->callback([a] {
    using namespace fulcrum;
    set_quiet(cli::global_flags().quiet);
    auto s = pipeline::merge_outputs(a->dirs, a->out, cli::global_flags().force);
    std::cout << pipeline::summary_text(s.galaxies) << "\nreport: " << s.html_path << "\n";
  });
});
