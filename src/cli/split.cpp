// `fulcrum split`: leading and trailing flux of a line map about one centre,
// split perpendicular to the tail PA, with exact pixel fractions.
#include <cstdio>
#include <iostream>
#include <memory>

#include "fulcrum/io/distinct_paths.hpp"
#include "fulcrum/core/log.hpp"
#include "fulcrum/io/atomic_file.hpp"
#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/split/half_split.hpp"
#include "fulcrum/pipeline/input_settings.hpp"
#include "split_args.hpp"
#include "subcommand.hpp"

namespace {
struct SplitArgs {
  std::string intensity, intensity_error, centre, json;
  double rms = 0.0;
  double tail_pa = 0.0;
  fulcrum::cli::ApertureArgs aperture;
};

void run_split(const SplitArgs& a, CLI::App* cmd) {
  using namespace fulcrum;
  check_distinct_paths({{"intensity", a.intensity}, {"intensity_error", a.intensity_error}}, {{"json", a.json}});
  cli::check_output(a.json);
  split::SplitOptions so;
  so.centre = cli::parse_centre(a.centre);
  so.tail_pa_deg = pipeline::setting::tail_pa_deg(a.tail_pa);
  so.aperture = a.aperture.spec();
  if (cmd->count("--rms")) so.rms = pipeline::setting::rms(a.rms);
  const Image map = read_image(a.intensity);
  cli::check_centre_on_map(map, so.centre, a.centre);
  std::optional<Image> err;
  if (!a.intensity_error.empty()) {
    err = read_image(a.intensity_error);
    so.error_map = &*err;
  }
  const split::SplitSummary s = split::split_halves(map, so);
  char line[512];
  std::snprintf(line, sizeof line,
                "leading  (PA %5.1f): %.6g +- %.3g %s\ntrailing (PA %5.1f): %.6g +- %.3g %s\n"
                "L/T = %.4f   A = (L-T)/(L+T) = %+.4f +- %.4f   (%zu pixels, %.2f pixels/beam, "
                "noise: %s)\n",
                s.leading_pa_deg, s.leading_flux, s.leading_err, s.flux_unit.c_str(), s.tail_pa_deg,
                s.trailing_flux, s.trailing_err, s.flux_unit.c_str(), s.ratio, s.asymmetry,
                s.asymmetry_err, s.n_pixels, s.pixels_per_beam, s.noise_source.c_str());
  std::cout << line;
  if (!a.json.empty()) {
    nlohmann::json j = split::to_json(s);
    j["intensity"] = a.intensity;
    write_text_file(a.json, j.dump(2) + "\n");
  }
}
}  // namespace

FULCRUM_SUBCOMMAND(split, 40, [](CLI::App& app) {
  auto a = std::make_shared<SplitArgs>();
  auto* cmd = app.add_subcommand(
      "split",
      "Leading and trailing line flux about a centre, split perpendicular to the tail PA, with "
      "exact pixel fractions; A = (L - T)/(L + T)");
  cmd->add_option("--intensity", a->intensity, "Integrated-intensity map (FITS)")->required();
  auto* e = cmd->add_option("--intensity-error", a->intensity_error,
                            "Per-pixel 1-sigma error map (FITS, same grid)");
  cmd->add_option("--rms", a->rms, "One 1-sigma noise for every pixel (map units)")->excludes(e);
  cmd->add_option("--centre", a->centre, "Split centre RA_DEG,DEC_DEG")->required();
  cmd->add_option("--tail-pa", a->tail_pa, "Tail PA (deg, north through east)")->required();
  a->aperture.add(cmd);
  cmd->add_option("--json", a->json, "Write the result as JSON to this file");
  cmd->callback([a, cmd] { run_split(*a, cmd); });
});
