// `fulcrum scan`: the asymmetry over a grid of centre offsets x split angles,
// as a FITS cube and a summary.
#include <cstdio>
#include <iostream>
#include <memory>

#include "fulcrum/io/atomic_file.hpp"
#include "fulcrum/io/distinct_paths.hpp"
#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/robustness/scan.hpp"
#include "fulcrum/pipeline/input_settings.hpp"
#include "split_args.hpp"
#include "subcommand.hpp"

namespace {
struct ScanArgs {
  std::string intensity, centre, out, json;
  double tail_pa = 0.0, half_width = 0.0, step = 0.0, angle_half_width = 0.0, angle_step = 1.0;
  fulcrum::cli::ApertureArgs aperture;
};

void run_scan(const ScanArgs& a) {
  using namespace fulcrum;
  check_distinct_paths({{"intensity", a.intensity}}, {{"out", a.out}, {"json", a.json}});
  cli::check_output(a.out);
  cli::check_output(a.json);
  split::SplitOptions so;
  so.centre = cli::parse_centre(a.centre);
  so.tail_pa_deg = pipeline::setting::tail_pa_deg(a.tail_pa);
  so.aperture = a.aperture.spec();
  robustness::ScanOptions o;
  o.tail_pa_deg = so.tail_pa_deg;
  o.half_width_arcsec = a.half_width;
  o.step_arcsec = a.step;
  o.angle_half_width_deg = a.angle_half_width;
  o.angle_step_deg = a.angle_step;
  robustness::check_scan_size(o);  // before the map is read
  // The map is not needed once its pixels are collected: let it go before the scan.
  const split::SplitProblem pr = split::prepare_split(read_image(a.intensity), so);
  const robustness::ScanSummary s = robustness::scan(pr, o);
  robustness::write_scan_cube(a.out, s, a.intensity);
  char line[256];
  std::snprintf(line, sizeof line,
                "%zu evaluations (%d x %d offsets x %d angles, %zu engine builds over %zu pixels) "
                "in %.3f s (%.3g per second)\n",
                s.evaluations, s.n_east, s.n_north, s.n_angle, s.engine_builds, pr.pixels.size(),
                s.seconds, s.seconds > 0 ? double(s.evaluations) / s.seconds : 0.0);
  std::cout << line;
  std::snprintf(line, sizeof line, "fraction of the grid with A > 0: %.4f\n", s.fraction_positive);
  std::cout << line;
  for (const auto& pa : s.per_angle) {
    if (s.n_angle > 9 && &pa != &s.per_angle.front() && &pa != &s.per_angle.back() &&
        &pa != &s.per_angle[s.per_angle.size() / 2])
      continue;
    if (pa.zero_found)
      std::snprintf(line, sizeof line,
                    "  tail PA %6.1f: A > 0 on %.3f of offsets; A = 0 on the line along PA %.1f, "
                    "%.3f arcsec from the centre towards PA %.1f%s\n",
                    pa.tail_pa_deg, pa.fraction_positive, pa.line_pa_deg, pa.line_distance_arcsec,
                    pa.line_direction_pa_deg, pa.line_inside_grid ? " (inside the grid)" : "");
    else
      std::snprintf(line, sizeof line, "  tail PA %6.1f: A > 0 on %.3f of offsets; no zero\n",
                    pa.tail_pa_deg, pa.fraction_positive);
    std::cout << line;
  }
  std::cout << "cube written to " << a.out << "\n";
  if (!a.json.empty()) {
    nlohmann::json j = robustness::to_json(s);
    j["intensity"] = a.intensity;
    j["cube"] = a.out;
    write_text_file(a.json, j.dump(2) + "\n");
  }
}
}  // namespace

FULCRUM_SUBCOMMAND(scan, 45, [](CLI::App& app) {
  auto a = std::make_shared<ScanArgs>();
  auto* cmd = app.add_subcommand(
      "scan",
      "Asymmetry A over a grid of centre offsets x split angles about a centre and tail PA, "
      "written as a FITS cube with the zero-crossing line per angle");
  cmd->add_option("--intensity", a->intensity, "Integrated-intensity map (FITS)")->required();
  cmd->add_option("--centre", a->centre, "Grid centre RA_DEG,DEC_DEG")->required();
  cmd->add_option("--tail-pa", a->tail_pa, "Nominal tail PA (deg, north through east)")->required();
  cmd->add_option("--half-width", a->half_width, "Half-width of the offset grid (arcsec)")->required();
  cmd->add_option("--step", a->step, "Offset grid step (arcsec)")->required();
  cmd->add_option("--angle-half-width", a->angle_half_width,
                  "Half-width of the angle range (deg)")->required();
  cmd->add_option("--angle-step", a->angle_step, "Angle step (deg)")->required();
  a->aperture.add(cmd);
  cmd->add_option("--out", a->out, "Output FITS cube (east offset x north offset x tail PA)")->required();
  cmd->add_option("--json", a->json, "Write the summary as JSON to this file");
  cmd->callback([a] { run_scan(*a); });
});
