// The `fulcrum` executable: parses the command line and hands over to the
// subcommand registered for it (see subcommand.hpp). All errors the user can
// cause arrive here as fulcrum::InputError and are printed as one line.
#include <csignal>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <iostream>
#include <map>

#include <glog/logging.h>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/work_limit.hpp"
#include "fulcrum/core/log.hpp"
#include "fulcrum/core/settings_check.hpp"
#include "fulcrum/core/version.hpp"
#include "fulcrum/io/atomic_file.hpp"
#include "fulcrum/io/fits_image.hpp"
#include "setting_flags.hpp"
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

namespace {

// What to lower when a command runs out of memory: the settings that size its
// work (docs/reliability.md), then the input size.
std::string memory_hint(const CLI::App& app) {
  static const std::map<std::string, std::string> hints = {
      {"analyse", "--draws or --calibrate"},
      {"calibrate", "--mocks, --mock-draws or --draws"},
      {"run", "--threads, --draws or --calibrate"},
      {"demo", "--threads or --draws"},
      {"scan", "the grid: a larger --step or --angle-step, a smaller --half-width or --angle-half-width"},
      {"kinematics", "--max-radius or raise --ring-width"},
      {"moments", "--grow-pixels or --grow-channels"},
      {"photometry", "--bootstrap"},
      {"synth", "--grid-nx/--grid-ny or --cube-n-channels"},
  };
  std::string hint;
  for (const auto* sub : app.get_subcommands())
    if (auto it = hints.find(sub->get_name()); it != hints.end()) hint = it->second;
  return hint.empty() ? " (give smaller inputs, or refuse larger ones with --max-pixels)"
                      : " (lower " + hint + ", or give smaller inputs: --max-pixels refuses larger ones)";
}

// "PATH: reason", naming a dangling link on the way when there is one (the
// system says only "File exists" for it).
std::string filesystem_problem(const std::filesystem::filesystem_error& e) {
  namespace fs = std::filesystem;
  if (e.path1().empty()) return e.code().message();
  std::error_code ec;
  for (fs::path p = e.path1(); !p.empty() && p != p.root_path(); p = p.parent_path())
    if (fs::is_symlink(fs::symlink_status(p, ec)) && !fs::exists(p, ec))
      return p.string() + ": is a symbolic link to " + fs::read_symlink(p, ec).string() + ", which does not exist";
  return e.path1().string() + ": " + e.code().message();
}

}  // namespace

int main(int argc, char** argv) {
  using namespace fulcrum;
  // Ceres logs through glog; its warnings (e.g. a rank-deficient covariance,
  // which fulcrum reports itself) must not break the one-line error rule.
  FLAGS_minloglevel = google::GLOG_ERROR;
  std::signal(SIGINT, on_termination_signal);
  std::signal(SIGTERM, on_termination_signal);

  CLI::App app{
      "fulcrum: is the leading-side gas excess of a stripped galaxy robust to where its centre "
      "is?\n\nFits the dynamical centre from the velocity field, measures photometric centres, "
      "splits the line map into leading and trailing halves, and tests how far the centre and "
      "split angle must move to reverse the result.\nRun `fulcrum demo` for a worked example, "
      "`fulcrum <command> --help` for each step."};
  app.require_subcommand(1);
  // Library messages name settings; on the command line they are flags.
  set_message_wording([](const std::string& m) { return cli::with_flags(m); });
  app.set_version_flag("--version", std::string("fulcrum ") + version_string());
  auto& flags = cli::global_flags();
  app.add_flag("-q,--quiet", flags.quiet, "No progress lines; warnings and errors only")
      ->configurable(false);
  app.add_flag("--force", flags.force, "Overwrite existing output files and folders");
  app.add_option_function<std::size_t>(
         "--max-pixels", [](std::size_t n) { set_default_max_pixels(n); },
         "Refuse input images with more pixels than this (default 200000000, or the "
         "FULCRUM_MAX_PIXELS environment variable)")
      ->check(CLI::Validator(
          [](std::string& text) {
            const bool digits = !text.empty() && text.find_first_not_of("0123456789") == std::string::npos;
            return digits && text.find_first_not_of('0') != std::string::npos
                       ? std::string()
                       : "must be a positive whole number, got '" + text + "'";
          },
          "POSITIVE"));
  app.add_option_function<double>(
         "--limit-scale", [](double f) { set_work_limit_scale(f); },
         "Multiply every work limit (scan grid points, tilted rings, bootstrap draws, mocks, mask growth, "
         "centre re-fits, manifest size) by this factor, 1 to 1e6 (default 1, or the FULCRUM_LIMIT_SCALE "
         "environment variable); images: --max-pixels")
      ->configurable(false);
  app.fallthrough();

  auto entries = cli::subcommand_registry();
  std::stable_sort(entries.begin(), entries.end(),
                   [](const auto& a, const auto& b) { return a.order < b.order; });
  for (auto& e : entries) e.setup(app);

  try {
    app.parse(argc, argv);
  } catch (const CLI::CallForHelp& e) {
    return app.exit(e);
  } catch (const CLI::CallForAllHelp& e) {
    return app.exit(e);
  } catch (const CLI::CallForVersion& e) {
    return app.exit(e);
  } catch (const CLI::ParseError& e) {
    // A usage error is bad input too: one line, status 2.
    if (e.get_exit_code() == 0) return app.exit(e);
    std::cerr << "fulcrum: " << e.what() << " (see `fulcrum --help`)\n";
    return 2;
  } catch (const SettingError& e) {
    // A setting given on the command line: name its flag, not its manifest key.
    std::cerr << "fulcrum: " << cli::with_flags(e.message_as(cli::setting_flag(e.setting()))) << "\n";
    return 2;
  } catch (const InputError& e) {
    std::cerr << "fulcrum: " << cli::with_flags(e.what()) << "\n";
    return 2;
  } catch (const InternalError& e) {
    std::cerr << "fulcrum: " << e.what() << " (please report this)\n";
    return 3;
  } catch (const std::filesystem::filesystem_error& e) {
    // A folder or file that cannot be made (a dangling link, a read-only
    // folder): one line with the path and the reason, as for bad input.
    std::cerr << "fulcrum: " << filesystem_problem(e) << "\n";
    return 2;
  } catch (const std::bad_alloc&) {
    std::cerr << "fulcrum: out of memory" << memory_hint(app) << "\n";
    return 3;
  } catch (const std::exception& e) {
    std::cerr << "fulcrum: " << e.what() << "\n";
    return 3;
  }
  return 0;
}
