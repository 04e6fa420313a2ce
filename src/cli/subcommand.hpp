// How a subcommand plugs into the `fulcrum` executable.
//
// Each file src/cli/<name>.cpp defines one subcommand and registers it with
//
//   FULCRUM_SUBCOMMAND(split, 40, [](CLI::App& app) {
//     auto* cmd = app.add_subcommand("split", "one-line purpose");
//     auto opt = std::make_shared<SplitOptions>();
//     cmd->add_option("--intensity", opt->intensity, "...")->required();
//     cmd->callback([opt] { run_split(*opt); });
//   });
//
// The number orders the subcommands in `fulcrum --help`. The callback only
// converts options and calls the library; errors are thrown as InputError
// and printed by main as one line with a non-zero exit status.
#pragma once

#include <CLI/CLI.hpp>
#include <functional>
#include <string>
#include <vector>

namespace fulcrum::cli {

struct SubcommandEntry {
  const char* name;
  int order;
  std::function<void(CLI::App&)> setup;
};

std::vector<SubcommandEntry>& subcommand_registry();
int register_subcommand(SubcommandEntry entry);

// Global flags every subcommand can read (set by main before callbacks run).
struct GlobalFlags {
  bool quiet = false;
  bool force = false;   // overwrite existing outputs
};
GlobalFlags& global_flags();

}  // namespace fulcrum::cli

#define FULCRUM_SUBCOMMAND(ident, order, ...)                                      \
  namespace {                                                                      \
  const int fulcrum_subcommand_##ident =                                           \
      ::fulcrum::cli::register_subcommand({#ident, order, __VA_ARGS__});           \
  }
