// `fulcrum kinematics`: the dynamical centre of a disc from its velocity map
// (tilted-ring and harmonic fits; kinematics/kinematic_fit.hpp).
//
//   fulcrum kinematics --velocity VEL.fits [--velocity-error ERR.fits]
//                      [--intensity MOM0.fits] [--method rings|harmonic|both]
//                      [first-guess overrides] --json OUT.json [--out DIR]
//
// The beam-smearing correction (on when a beam is known; --no-smearing-
// correction turns it off) is weighted by the --intensity map when given,
// else uniformly over the velocity map's footprint.
// OUT.json holds centre (ra_deg, dec_deg, x_pix, y_pix [FITS, 1-based],
// cov_arcsec2 [(east, north) arcsec^2]), pa_deg, inc_deg, vsys_kms, rings,
// method, status and, with `both`, harmonic_centre. With --out, DIR receives
// the model and residual velocity maps (km/s, input WCS; with the
// beam-smearing correction also the model as the beam sees it, and the
// residual is observed minus that) and the per-ring table as ECSV and CSV. When the data cannot constrain a centre the JSON is
// still written (status "refused" and the reason) and the command exits with
// status 2 and a one-line message.
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <iostream>
#include <memory>
#include <optional>

#include "fulcrum/core/work_limit.hpp"
#include "fulcrum/io/distinct_paths.hpp"
#include "fulcrum/core/error.hpp"
#include "fulcrum/core/number_text.hpp"
#include "fulcrum/core/settings_check.hpp"
#include "fulcrum/pipeline/galaxy_stages.hpp"
#include "fulcrum/pipeline/input_settings.hpp"
#include "fulcrum/core/log.hpp"
#include "fulcrum/core/version.hpp"
#include "fulcrum/io/atomic_file.hpp"
#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/kinematics/kinematic_fit.hpp"
#include "fulcrum/kinematics/ring_table.hpp"
#include "kinematic_args.hpp"
#include "fulcrum/report/ring_table.hpp"
#include "subcommand.hpp"

namespace {

struct KinematicsArgs {
  std::string velocity, velocity_error, intensity, method = "both", json, out;
  fulcrum::kinematics::KinematicSettings settings;  // guesses, priors, holds, radius, switches
  int smearing_refits = 4;
  std::int64_t centre_refits = static_cast<std::int64_t>(fulcrum::calibration::kDefaultCentreRefits), seed = 1;
  std::optional<double> ring_width;
  double ring_width_beams = 0.5;
  double weight_power = 1.0;
  double wedge = 15.0;
  bool radial = false;
  std::string loss = "none";
  double loss_scale = 2.0;
  bool ring_vsys = false;
  int min_pixels = 60;
  double min_inc = 15.0;
};

void check_new(const std::string& path) {
  if (!fulcrum::cli::global_flags().force && std::filesystem::exists(path))
    throw fulcrum::InputError(path, "exists already (use --force to overwrite)");
}

void run(const KinematicsArgs& a) {
  using namespace fulcrum;
  using namespace fulcrum::kinematics;
  kinematics::KinematicOptions opt;
  opt.method = parse_method(a.method);
  apply_kinematic_settings(a.settings, opt, [](const std::string& n) { return fulcrum::option_name(n); });
  if (a.ring_width && !(*a.ring_width > 0)) throw InputError("", "--ring-width must be positive");
  opt.ring_width_arcsec = a.ring_width;
  if (!(a.ring_width_beams > 0)) throw InputError("", "--ring-width-beams must be positive");
  opt.ring_width_beams = a.ring_width_beams;
  if (a.weight_power < 0) throw InputError("", "--weight-power must be >= 0");
  opt.weight_power = a.weight_power;
  if (a.wedge < 0 || a.wedge >= 90) throw InputError("", "--wedge must lie in [0, 90) deg");
  opt.wedge_deg = a.wedge;
  opt.fit_radial = a.radial;
  if (a.loss == "none") opt.loss = RobustLoss::none;
  else if (a.loss == "huber") opt.loss = RobustLoss::huber;
  else if (a.loss == "cauchy") opt.loss = RobustLoss::cauchy;
  else throw InputError("", "--loss must be none, huber or cauchy (got '" + a.loss + "')");
  if (!(a.loss_scale > 0)) throw InputError("", "--loss-scale must be positive");
  opt.loss_scale = a.loss_scale;
  opt.ring_free_vsys = a.ring_vsys;
  opt.min_pixels = a.min_pixels;
  opt.min_inc_deg = a.min_inc;
  if (a.smearing_refits < 1) throw InputError("", "--smearing-refits must be at least 1");
  opt.smearing_max_refits = a.smearing_refits;

  check_distinct_paths({{"velocity", a.velocity}, {"velocity_error", a.velocity_error}, {"intensity", a.intensity}},
                       {{"json", a.json}, {"out", a.out}});
  check_new(a.json);
  const Image vel = read_image(a.velocity);
  std::optional<Image> err;
  if (!a.velocity_error.empty()) err = read_image(a.velocity_error);
  if (err && (err->nx != vel.nx || err->ny != vel.ny))
    throw InputError(a.velocity_error, "the error map is " + std::to_string(err->nx) + "x" +
                                           std::to_string(err->ny) +
                                           " pixels but the velocity map is " +
                                           std::to_string(vel.nx) + "x" + std::to_string(vel.ny));
  std::optional<Image> inten;
  if (!a.intensity.empty()) inten = read_image(a.intensity);
  std::string model_path, resid_path, smeared_path, ecsv_path, csv_path;
  if (!a.out.empty()) {
    std::filesystem::create_directories(a.out);
    const std::filesystem::path d(a.out);
    model_path = (d / "kinematics_model.fits").string();
    resid_path = (d / "kinematics_residual.fits").string();
    smeared_path = (d / "kinematics_model_smeared.fits").string();
    ecsv_path = (d / "kinematics_rings.ecsv").string();
    csv_path = (d / "kinematics_rings.csv").string();
    for (const auto& p : {model_path, resid_path, smeared_path, ecsv_path, csv_path}) check_new(p);
  }

  const auto centre_refits = check_count_limit("centre_refits", a.centre_refits, 0, 1e4, "the centre bootstrap", "re-fits");
  const std::uint64_t seed = pipeline::setting::seed(a.seed);
  KinematicFit fit = fit_kinematics(vel, err ? &*err : nullptr, opt, inten ? &*inten : nullptr);
  // The re-fit bootstrap widens the tilted-ring centre's covariance as the
  // analysis does (same seed, same result); it needs the line map's profile.
  std::optional<calibration::CentreBootstrap> widened;
  if (centre_refits > 0 && inten && fit.status == "ok")
    widened = pipeline::widen_centre_covariance(fit, vel, err ? &*err : nullptr, *inten, seed,
                                                static_cast<std::size_t>(centre_refits));
  nlohmann::json j = to_json(fit);
  if (widened) j["centre_bootstrap"] = calibration::to_json(*widened);
  j["software"] = software_info();
  j["inputs"] = {{"velocity", a.velocity}, {"velocity_error", a.velocity_error},
                 {"intensity", a.intensity}};

  if (!a.out.empty() && fit.status == "ok") {
    Image model = model_velocity_map(fit, vel);
    Image resid = residual_velocity_map(fit, vel, model);
    std::vector<HeaderCard> cards = {
        {"CONTENT", "tilted-ring model velocity", "fulcrum kinematics", false},
        {"VSYS", std::to_string(fit.vsys_kms), "[km/s] systemic velocity", true},
        {"KINPA", std::to_string(fit.pa_deg), "[deg] PA of receding half, N through E", true},
        {"KININC", std::to_string(fit.inc_deg), "[deg] inclination", true}};
    write_image(model_path, model, cards);
    cards[0].value = "observed minus model velocity";
    write_image(resid_path, resid, cards);
    if (fit.beam_smearing.applied) {
      cards[0].value = "beam-smeared tilted-ring model velocity";
      write_image(smeared_path, smeared_model_velocity_map(fit, model), cards);
    }
    report::write_ecsv(ecsv_path, report::ring_table(fit));
    write_ring_table_csv(csv_path, fit);
    j["outputs"] = {{"model", model_path}, {"residual", resid_path}, {"rings_ecsv", ecsv_path},
                    {"rings_csv", csv_path}};
    if (fit.beam_smearing.applied) j["outputs"]["model_smeared"] = smeared_path;
  }
  write_text_file(a.json, j.dump(2) + "\n");

  if (fit.status != "ok") throw InputError(a.velocity, fit.reason);
  const auto& c = *fit.centre;
  std::printf("dynamical centre (%s): RA %.7f  Dec %.7f deg  pixel (%.2f, %.2f)\n",
              method_name(fit.method) == "harmonic" ? "harmonic" : "tilted rings", c.position.ra_deg,
              c.position.dec_deg, c.pixel_fits ? c.pixel_fits->x : std::nan(""),
              c.pixel_fits ? c.pixel_fits->y : std::nan(""));
  std::printf("  error (1 sigma): east %.3f  north %.3f arcsec\n", std::sqrt(c.covariance(0, 0)),
              std::sqrt(c.covariance(1, 1)));
  if (widened && widened->applied)
    std::printf("  centre re-fits: %zu mocks of the fitted disc, mean m^2 %.2f (2 expected): error %s\n",
                widened->refits, widened->mean_m2,
                widened->scale2 > 1.0 ? ("widened by x" + fixed_text(std::sqrt(widened->scale2), 2)).c_str()
                                      : "kept (the re-fits scatter no more than it says)");
  if (widened && widened->applied && (widened->pa_scale2 > 1.0 || widened->inc_scale2 > 1.0))
    std::printf("  the same re-fits: PA error x%.2f, inclination error x%.2f (mean squared pulls %.2f, %.2f; 1 "
                "expected)\n",
                std::sqrt(widened->pa_scale2), std::sqrt(widened->inc_scale2), widened->mean_pa_pull2,
                widened->mean_inc_pull2);
  else if (widened && !widened->applied)
    std::printf("  centre re-fits: not used (%s)\n", widened->reason.c_str());
  std::printf("  PA %.2f +- %.2f deg   inclination %.2f +- %.2f deg   vsys %.2f +- %.2f km/s\n",
              fit.pa_deg, fit.pa_err_deg, fit.inc_deg, fit.inc_err_deg, fit.vsys_kms,
              fit.vsys_err_kms);
  if (fit.harmonic_centre && fit.method == Method::both) {
    const auto& h = *fit.harmonic_centre;
    const SkyOffset d = OffsetFrame(c.position).to_offset(h.position);
    std::printf("harmonic centre: RA %.7f  Dec %.7f deg  (%.3f, %.3f arcsec east, north of the "
                "tilted-ring centre)\n",
                h.position.ra_deg, h.position.dec_deg, d.east, d.north);
  } else if (fit.method == Method::both) {
    std::printf("harmonic centre: not found (%s)\n", fit.harmonic_status.c_str());
  }
  const auto& bs = fit.beam_smearing;
  if (bs.applied)
    std::printf("  beam smearing corrected (%s): max |correction| %.2f km/s, %d refit%s, inclination "
                "%.2f deg before\n",
                bs.weighting.c_str(), bs.max_abs_correction_kms, bs.refits, bs.refits == 1 ? "" : "s",
                bs.uncorrected.inc_deg);
  else
    std::printf("  beam smearing not corrected: %s\n", bs.reason.c_str());
  const auto& fp = fit.footprint;
  if (fp.enabled)
    std::printf("  footprint: %d velocity outliers, %d isolated pixels, %d pixels in %d islands "
                "smaller than %d pixels removed; %d of %d kept\n",
                fp.velocity_outliers, fp.isolated_pixels, fp.small_island_pixels, fp.small_islands,
                fp.min_island_pixels, fp.pixels_kept, fp.pixels_in);
  if (fit.ambiguity.ambiguous) std::printf("  %s\n", fit.ambiguity.note.c_str());
  std::printf("  %d of %d pixels, %d rings, reduced chi2 %.3f, %s\n", fit.diagnostics.pixels_used,
              fit.diagnostics.pixels_input, fit.diagnostics.rings_used,
              fit.diagnostics.reduced_chi2, fit.diagnostics.converged ? "converged" : "not converged");
}

}  // namespace

FULCRUM_SUBCOMMAND(kinematics, 50, [](CLI::App& app) {
  auto a = std::make_shared<KinematicsArgs>();
  auto* cmd = app.add_subcommand(
      "kinematics",
      "Dynamical centre, PA, inclination and systemic velocity from a velocity map (tilted-ring "
      "and harmonic fits)");
  cmd->add_option("--velocity", a->velocity, "Velocity map (FITS, km/s or m/s)")->required();
  cmd->add_option("--velocity-error", a->velocity_error, "1-sigma velocity error map (FITS)");
  cmd->add_option("--intensity", a->intensity,
                  "Line-intensity (moment-0) map weighting the beam-smearing correction (FITS, any "
                  "grid); default: uniform over the velocity footprint");
  cmd->add_option("--smearing-refits", a->smearing_refits,
                  "Most refits of the beam-smearing correction (4)");
  cmd->add_option("--centre-refits", a->centre_refits,
                  "Mocks of the fitted disc re-fitted to check the centre error; the covariance is "
                  "widened when they scatter more than it says (needs --intensity; 0: off)")
      ->capture_default_str();
  cmd->add_option("--seed", a->seed, "Seed of the centre re-fit mocks (default 1, as analyse)");
  cmd->add_option("--method", a->method, "rings, harmonic or both (default both)");
  cmd->add_option("--json", a->json, "Write the result here (JSON)")->required();
  cmd->add_option("--out", a->out, "Folder for model/residual maps and the per-ring tables");
  fulcrum::cli::add_kinematic_options(cmd, a->settings, "Disc geometry and fit settings");
  cmd->add_option("--ring-width", a->ring_width, "Ring width (arcsec); default half a beam");
  cmd->add_option("--ring-width-beams", a->ring_width_beams, "Ring width in beam FWHM (0.5)");
  cmd->add_option("--weight-power", a->weight_power, "k in the |cos theta|^k pixel weights (1)");
  cmd->add_option("--wedge", a->wedge, "Half-angle of the excluded wedge about the minor axis (deg, 15)");
  cmd->add_flag("--radial", a->radial, "Fit a radial velocity term per ring");
  cmd->add_option("--loss", a->loss, "Robust loss: none, huber or cauchy (none)");
  cmd->add_option("--loss-scale", a->loss_scale, "Robust loss scale in residual sigmas (2)");
  cmd->add_flag("--ring-vsys", a->ring_vsys, "Fit vsys per ring in the ring-by-ring fit");
  cmd->add_option("--min-pixels", a->min_pixels, "Refuse with fewer usable pixels (60)");
  cmd->add_option("--min-inc", a->min_inc, "Refuse discs closer to face-on than this (deg, 15)");
  cmd->callback([a] {
    fulcrum::set_quiet(fulcrum::cli::global_flags().quiet);
    run(*a);
  });
});
