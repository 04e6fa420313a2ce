// `fulcrum synth`: write a mock galaxy (velocity field, line map, optical
// image, optional cube and truth.json) or the whole built-in demo sample.
//
// Every mock parameter is an option named after its TOML key
// (--pa-deg, --grid-rotation-deg, --optical-sersic-n, --cube-enabled, ...);
// with --config the TOML file is read first and options given on the
// command line override it.
#include <filesystem>
#include <functional>
#include <iostream>
#include <memory>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/log.hpp"
#include "fulcrum/io/staged_folder.hpp"
#include "fulcrum/synth/mock_field_table.hpp"
#include "fulcrum/synth/mock_galaxy.hpp"
#include "subcommand.hpp"

namespace {

using fulcrum::synth::Field;
using fulcrum::synth::MockGalaxy;

struct SynthCli {
  std::string config;
  std::string out;
  bool demo_sample = false;
  MockGalaxy values;  // what the command line set
  std::vector<std::pair<CLI::Option*, std::function<void(MockGalaxy&)>>> setters;
};

std::string option_name(const std::string& prefix, const char* name) {
  std::string s = prefix + name;
  for (char& c : s)
    if (c == '_') c = '-';
  return "--" + s;
}

// Add one option per field of a struct reached from MockGalaxy by `part`.
template <class S>
void add_fields(CLI::App* cmd, SynthCli& cli, const std::string& prefix, const std::vector<Field<S>>& fields,
                std::function<S&(MockGalaxy&)> part, const std::string& group) {
  for (const auto& f : fields) {
    std::visit(
        [&](auto member) {
          using T = std::remove_reference_t<decltype(std::declval<S&>().*member)>;
          T& target = part(cli.values).*member;
          CLI::Option* opt;
          if constexpr (std::is_same_v<T, bool>)
            opt = cmd->add_flag(option_name(prefix, f.name), target, f.help);
          else
            opt = cmd->add_option(option_name(prefix, f.name), target, f.help);
          opt->group(group);
          SynthCli* c = &cli;
          cli.setters.emplace_back(opt, [c, part, member](MockGalaxy& g) { part(g).*member = part(c->values).*member; });
        },
        f.member);
  }
}

void run_synth(const SynthCli& cli) {
  namespace fs = std::filesystem;
  using namespace fulcrum;
  if (cli.out.empty()) throw InputError("", "--out DIR is required");
  const bool force = cli::global_flags().force;
  if (cli.demo_sample) {
    if (!cli.config.empty()) throw InputError("", "--demo-sample and --config cannot be used together");
    for (const auto& [opt, set] : cli.setters)
      if (opt->count() > 0)
        throw InputError("", "--demo-sample takes no mock parameters (got " + opt->get_name() + ")");
    StagedFolder folder(cli.out, force);
    auto sample = synth::demo_sample();
    note("writing " + std::to_string(sample.size()) + " demo galaxies into " + cli.out);
    synth::write_sample(folder.path(), sample, "Orrin cluster (invented demo sample)", 7);
    folder.commit();
    for (const auto& g : sample)
      std::cout << (fs::path(cli.out) / g.name).string() << "/  (" << g.expected_verdict << ")\n";
    std::cout << (fs::path(cli.out) / "sample.toml").string() << "\n";
    return;
  }
  MockGalaxy g = cli.config.empty() ? MockGalaxy{} : synth::mock_from_toml(cli.config);
  for (const auto& [opt, set] : cli.setters)
    if (opt->count() > 0) set(g);
  synth::validate_mock(g);
  auto products = synth::make_mock(g);
  StagedFolder folder(cli.out, force);
  auto files = synth::write_mock(folder.path(), products);
  folder.commit();
  for (const auto& f : files) std::cout << (fs::path(cli.out) / f).string() << "\n";
}

}  // namespace

FULCRUM_SUBCOMMAND(synth, 20, [](CLI::App& app) {
  using namespace fulcrum::synth;
  auto* cmd = app.add_subcommand("synth", "Write a mock galaxy with known truth, or the built-in demo sample");
  auto cli = std::make_shared<SynthCli>();
  cmd->add_option("--config", cli->config, "TOML file with a [galaxy] table of mock parameters")
      ->check(CLI::ExistingFile);
  cmd->add_option("--out", cli->out, "Output folder")->required();
  cmd->add_flag("--demo-sample", cli->demo_sample,
                "Write every built-in demo galaxy into OUT/<name>/ and a sample manifest OUT/sample.toml");
  add_fields<MockGalaxy>(cmd, *cli, "", galaxy_fields(), [](MockGalaxy& g) -> MockGalaxy& { return g; },
                         "Galaxy");
  add_fields<GridSpec>(cmd, *cli, "grid-", grid_fields(), [](MockGalaxy& g) -> GridSpec& { return g.grid; },
                       "Line-map grid");
  add_fields<OpticalSpec>(cmd, *cli, "optical-", optical_fields(),
                          [](MockGalaxy& g) -> OpticalSpec& { return g.optical; }, "Optical image");
  add_fields<GridSpec>(cmd, *cli, "optical-grid-", grid_fields(),
                       [](MockGalaxy& g) -> GridSpec& { return g.optical.grid; }, "Optical grid");
  add_fields<CubeSpec>(cmd, *cli, "cube-", cube_fields(), [](MockGalaxy& g) -> CubeSpec& { return g.cube; },
                       "Cube");
  add_fields<DeliveredSpec>(cmd, *cli, "delivered-", delivered_fields(),
                            [](MockGalaxy& g) -> DeliveredSpec& { return g.delivered; }, "As delivered");
  {
    CLI::Option* opt = cmd->add_flag("--as-delivered", cli->values.delivered.enabled,
                                     "Same as --delivered-enabled: line maps with BLANK = -999 on floats, +inf and "
                                     "1e38 errors, scattered single pixels and long HISTORY (docs/synth.md)");
    opt->group("As delivered");
    SynthCli* c = cli.get();
    cli->setters.emplace_back(opt, [c](MockGalaxy& g) { g.delivered.enabled = c->values.delivered.enabled; });
  }
  cmd->callback([cli] { run_synth(*cli); });
});
