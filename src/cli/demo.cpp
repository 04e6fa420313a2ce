// `fulcrum demo [--out DIR]`: write the built-in invented sample (the synth
// library's demo_sample(), through write_sample) and run `fulcrum run` on
// it; print where the report is and whether each galaxy reached the verdict
// its mock was built for (truth.json).
#include <filesystem>
#include <fstream>
#include <iostream>
#include <memory>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/log.hpp"
#include "fulcrum/io/staged_folder.hpp"
#include "fulcrum/pipeline/sample_run.hpp"
#include "subcommand.hpp"

#include "fulcrum/synth/mock_galaxy.hpp"

namespace {
struct DemoArgs {
  std::string out = "fulcrum-demo";
  int threads = 0;
  int draws = 0;
};

void run_demo(const DemoArgs& a, CLI::App* cmd) {
  using namespace fulcrum;
  namespace fs = std::filesystem;
  set_quiet(cli::global_flags().quiet);
  fs::path data = fs::path(a.out) / "data";
  fs::path results = fs::path(a.out) / "results";
  // One demo run at a time into a folder; one holding anything needs --force.
  const OutputLock lock(a.out, cli::global_flags().force);
  auto sample = synth::demo_sample();
  note("writing " + std::to_string(sample.size()) + " invented demo galaxies into " + data.string());
  std::string manifest = synth::write_sample(data.string(), sample, "Orrin cluster (invented demo sample)", 7);
  auto m = pipeline::read_manifest(manifest);
  pipeline::RunOptions o;
  o.out_dir = results.string();
  o.threads = a.threads;
  o.overwrite = true;
  if (cmd->count("--draws")) o.draws = a.draws;
  auto s = pipeline::run_sample(m, o);
  std::cout << pipeline::summary_text(s.galaxies) << "\n";
  int matched = 0;
  for (const auto& g : sample) {
    std::string got;
    for (const auto& r : s.galaxies)
      if (r.input.name == g.name) got = robustness::verdict_name(r.verdict);
    bool ok = got == g.expected_verdict;
    matched += ok;
    std::cout << (ok ? "  as built:  " : "  DIFFERENT: ") << g.name << " built to be " << g.expected_verdict
              << ", found " << got << "\n";
  }
  std::cout << "\n" << matched << " of " << sample.size() << " demo galaxies reached the verdict they were built for.\n"
            << "manifest: " << manifest << "\nreport:   " << s.html_path << "\n";
}
}  // namespace

FULCRUM_SUBCOMMAND(demo, 10, [](CLI::App& app) {
  auto a = std::make_shared<DemoArgs>();
  auto* cmd = app.add_subcommand("demo", "Make the built-in invented sample of mock galaxies, analyse it and write the "
                                         "report (start here)");
  cmd->add_option("--out", a->out, "Folder for the demo data and results (default ./fulcrum-demo)");
  cmd->add_option("--threads", a->threads, "Galaxies analysed at once (default: all cores)");
  cmd->add_option("--draws", a->draws, "Bootstrap draws per galaxy (default: the manifest's)");
  cmd->callback([a, cmd] { run_demo(*a, cmd); });
});
