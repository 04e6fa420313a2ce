// The `fulcrum` executable: parses the command line and hands over to the
// subcommand registered for it (see subcommand.hpp). All errors the user can
// cause arrive here as fulcrum::InputError and are printed as one line.
#include <csignal>
#include <cstdio>
#include <cstdlib>
#include <iostream>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/version.hpp"
#include "fulcrum/io/atomic_file.hpp"
#include "subcommand.hpp"

namespace fulcrum::cli {

std::vector<SubcommandEntry>& subcommand_registry() {
  static std::vector<SubcommandEntry> registry;
  return registry;
}

int register_subcommand(SubcommandEntry entry) {
  subcommand_registry().push_back(std::move(entry));
  return static_cast<int>(subcommand_registry().size());
}

GlobalFlags& global_flags() {
  static GlobalFlags flags;
  return flags;
}

}  // namespace fulcrum::cli

namespace {
extern "C" void on_termination_signal(int sig) {
  fulcrum::remove_pending_temporaries();
  std::signal(sig, SIG_DFL);
  std::raise(sig);
}
}  // namespace

int main(int argc, char** argv) {
  using namespace fulcrum;
  std::signal(SIGINT, on_termination_signal);
  std::signal(SIGTERM, on_termination_signal);

  CLI::App app{
      "fulcrum: is the leading-side gas excess of a stripped galaxy robust to where its centre "
      "is?\n\nFits the dynamical centre from the velocity field, measures photometric centres, "
      "splits the line map into leading and trailing halves, and tests how far the centre and "
      "split angle must move to reverse the result.\nRun `fulcrum demo` for a worked example, "
      "`fulcrum <command> --help` for each step."};
  app.require_subcommand(1);
  app.set_version_flag("--version", std::string("fulcrum ") + version_string());
  auto& flags = cli::global_flags();
  app.add_flag("-q,--quiet", flags.quiet, "No progress lines; warnings and errors only")
      ->configurable(false);
  app.add_flag("--force", flags.force, "Overwrite existing output files and folders");
  app.fallthrough();

  auto entries = cli::subcommand_registry();
  std::stable_sort(entries.begin(), entries.end(),
                   [](const auto& a, const auto& b) { return a.order < b.order; });
  for (auto& e : entries) e.setup(app);

  try {
    app.parse(argc, argv);
  } catch (const CLI::ParseError& e) {
    return app.exit(e);
  } catch (const InputError& e) {
    std::cerr << "fulcrum: " << e.what() << "\n";
    return 2;
  } catch (const InternalError& e) {
    std::cerr << "fulcrum: " << e.what() << " (please report this)\n";
    return 3;
  } catch (const std::bad_alloc&) {
    std::cerr << "fulcrum: out of memory (try a smaller input or --max-pixels)\n";
    return 3;
  } catch (const std::exception& e) {
    std::cerr << "fulcrum: " << e.what() << "\n";
    return 3;
  }
  return 0;
}
