// `fulcrum demo [--out DIR]`: write the built-in invented sample (the synth
// library's demo_sample(), through write_sample) and run `fulcrum run` on
// it; print where the report is and whether each galaxy reached the verdict
// its mock was built for (truth.json).
#include <filesystem>
#include <fstream>
#include <iostream>
#include <memory>
#include <optional>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/log.hpp"
#include "fulcrum/io/staged_folder.hpp"
#include "fulcrum/pipeline/input_settings.hpp"
#include "fulcrum/pipeline/sample_run.hpp"
#include "subcommand.hpp"

#include "fulcrum/synth/mock_galaxy.hpp"

namespace {
struct DemoArgs {
  std::string out = "fulcrum-demo";
  int threads = 0;
  std::int64_t draws = 0;
};

void run_demo(const DemoArgs& a, CLI::App* cmd) {
  using namespace fulcrum;
  namespace fs = std::filesystem;
  set_quiet(cli::global_flags().quiet);
  auto sample = synth::demo_sample();
  std::optional<int> draws;  // checked before anything is written
  if (cmd->count("--draws")) draws = pipeline::setting::draws(a.draws);
  // One writer (io/staged_folder.hpp): data and results are written into a
  // staging folder beside --out and renamed into place at the end; one demo
  // run at a time into a folder; one holding anything needs --force, which
  // replaces it whole.
  StagedFolder out(a.out, cli::global_flags().force);
  const fs::path data = fs::path(out.path()) / "data", results = fs::path(out.path()) / "results";
  const fs::path shown = fs::path(a.out);
  try {
    note("writing " + std::to_string(sample.size()) + " invented demo galaxies into " + (shown / "data").string());
    const std::string manifest =
        synth::write_sample(data.string(), sample, "Orrin cluster (invented demo sample)", 7);
    auto m = pipeline::read_manifest(manifest);
    pipeline::RunOptions o;
    o.out_dir = results.string();
    o.threads = a.threads;
    // report.json names the data where it will be once --out is in place.
    o.shown_paths = {out.path(), a.out};
    o.draws = draws;
    auto s = pipeline::run_sample(m, o);
    out.commit();
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
    std::cout << "\n" << matched << " of " << sample.size()
              << " demo galaxies reached the verdict they were built for.\n"
              << "manifest: " << (shown / "data" / fs::path(manifest).filename()).string()
              << "\nreport:   " << (shown / "results" / "report.html").string() << "\n";
  } catch (const InputError& e) {
    out.rethrow_in_target(e);
  }
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
