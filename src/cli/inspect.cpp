// `fulcrum inspect FILE...`: what is in a FITS file and what fulcrum can do with it.
#include <iostream>
#include <memory>

#include "fulcrum/imaging/inspect.hpp"
#include "subcommand.hpp"

namespace {
struct InspectArgs {
  std::vector<std::string> files;
  bool json = false;
};
}  // namespace

FULCRUM_SUBCOMMAND(inspect, 15, [](CLI::App& app) {
  auto args = std::make_shared<InspectArgs>();
  auto* cmd = app.add_subcommand(
      "inspect",
      "Describe FITS files: axes, pixel scale (arcsec), where north points, beam, unit, finite "
      "pixels, value range, and what fulcrum can use each file for");
  cmd->add_option("files", args->files, "FITS files to describe")->required();
  cmd->add_flag("--json", args->json, "Print the description as JSON instead of text");
  cmd->callback([args] {
    nlohmann::json all = nlohmann::json::array();
    for (const auto& f : args->files) {
      auto info = fulcrum::inspect_fits(f);
      if (args->json)
        all.push_back(info);
      else
        std::cout << fulcrum::format_inspection(info);
    }
    if (args->json) std::cout << (all.size() == 1 ? all[0] : all).dump(2) << "\n";
  });
});
