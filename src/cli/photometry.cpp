// `fulcrum photometry`: photometric centres of the galaxy on an optical
// image, and (optionally) how they compare with a dynamical centre.
//
//   fulcrum photometry --image OPT.fits [--mask MASK.fits] [--psf-fwhm ARCSEC]
//                      [--dynamical-centre RA_DEG,DEC_DEG --dynamical-cov EE,EN,NN]
//                      [--beam BMAJ,BMIN,BPA] [--distance-mpc D] --json OUT.json
//
// Units: RA/Dec in degrees; covariances in arcsec^2 on (east, north); beam
// axes in arcsec and BPA in degrees north through east; distance in Mpc.
// The mask file is on the image's grid; pixels that are non-zero or NaN are
// left out. Everything is computed by photometry/; this file only parses.
#include <filesystem>
#include <memory>
#include <sstream>

#include "fulcrum/core/work_limit.hpp"
#include "fulcrum/io/distinct_paths.hpp"
#include "fulcrum/core/error.hpp"
#include "fulcrum/core/log.hpp"
#include "fulcrum/core/version.hpp"
#include "fulcrum/io/atomic_file.hpp"
#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/photometry/dynamical_comparison.hpp"
#include "fulcrum/photometry/photometric_centres.hpp"
#include "fulcrum/core/settings_check.hpp"
#include "fulcrum/pipeline/input_settings.hpp"
#include "subcommand.hpp"

namespace {

struct PhotometryArgs {
  std::string image, mask, json;
  double psf_fwhm = 0.0;
  std::string dynamical_centre, dynamical_cov, beam;
  double distance_mpc = 0.0;
  std::int64_t bootstrap = 100, seed = 1;
  double isophote_level = 0.0;
};

std::vector<double> parse_list(const std::string& text, std::size_t count, const std::string& what) {
  std::vector<double> v;
  std::stringstream ss(text);
  std::string item;
  while (std::getline(ss, item, ',')) {
    try {
      std::size_t used = 0;
      const double x = std::stod(item, &used);
      if (item.find_first_not_of(" \t", used) != std::string::npos) throw std::invalid_argument(item);
      if (!std::isfinite(x)) throw std::invalid_argument(item);
      v.push_back(x);
    } catch (const std::exception&) {
      throw fulcrum::InputError("", what + ": '" + item + "' is not a number (expected " +
                                        std::to_string(count) + " comma-separated numbers)");
    }
  }
  if (v.size() != count)
    throw fulcrum::InputError("", what + ": expected " + std::to_string(count) +
                                      " comma-separated numbers, got '" + text + "'");
  return v;
}

void run_photometry(const PhotometryArgs& a, CLI::App* cmd) {
  using namespace fulcrum;
  using namespace fulcrum::photometry;
  check_distinct_paths({{"image", a.image}, {"mask", a.mask}}, {{"json", a.json}});
  if (std::filesystem::exists(a.json) && !cli::global_flags().force)
    throw InputError(a.json, "the output file exists (use --force to overwrite it)");
  const int bootstrap = static_cast<int>(check_count_limit("bootstrap", a.bootstrap, 3, 1e6, "the centre bootstrap", "draws"));
  const std::uint64_t seed = pipeline::setting::seed(a.seed);
  // Given: must be usable (never silently replaced by the header's beam).
  if (cmd->count("--psf-fwhm")) pipeline::setting::psf_fwhm_arcsec(a.psf_fwhm);

  std::optional<Centre> dyn;
  if (!a.dynamical_centre.empty() || !a.dynamical_cov.empty()) {
    if (a.dynamical_centre.empty() || a.dynamical_cov.empty())
      throw InputError("", "--dynamical-centre and --dynamical-cov go together");
    const auto c = parse_list(a.dynamical_centre, 2, "--dynamical-centre");
    const auto v = parse_list(a.dynamical_cov, 3, "--dynamical-cov");
    if (c[1] < -90 || c[1] > 90) throw InputError("", "--dynamical-centre: Dec must be in [-90, 90]");
    Eigen::Matrix2d cov;
    cov << v[0], v[1], v[1], v[2];
    Centre d = measured_centre(CentreMethod::external, {c[0], c[1]}, cov, "given");
    d.label = "dynamical";
    if (v[0] < 0 || v[2] < 0 || v[0] * v[2] - v[1] * v[1] < 0)
      throw InputError("", "--dynamical-cov: EE,EN,NN is not a covariance (it must be positive "
                           "semi-definite)");
    dyn = d;
  }
  ComparisonOptions copt;
  if (!a.beam.empty()) {
    const auto b = parse_list(a.beam, 3, "--beam");
    if (!(b[0] > 0 && b[1] > 0)) throw InputError("", "--beam: the axes must be positive");
    copt.beam = Beam{std::max(b[0], b[1]), std::min(b[0], b[1]), b[2]};
  }
  if (cmd->count("--distance-mpc")) copt.distance_mpc = pipeline::setting::distance_mpc(a.distance_mpc);

  const Image image = read_image(a.image);
  std::optional<Image> mask;
  if (!a.mask.empty()) mask = read_image(a.mask);

  PhotometryOptions o;
  o.psf_fwhm_arcsec = a.psf_fwhm;
  o.bootstrap.draws = bootstrap;
  o.bootstrap.seed = seed;
  if (a.isophote_level > 0) o.isophote.level = a.isophote_level;
  const PhotometrySummary s = measure_photometric_centres(image, mask ? &*mask : nullptr, o);
  if (s.psf.known && s.psf.source != "given")
    note("photometry: PSF FWHM " + std::to_string(s.psf.fwhm_arcsec) + " arcsec (" + s.psf.source + ": " +
         s.psf.detail + ")");
  for (const auto& st : s.stars_near_centre)
    note("photometry: masked a point source " + std::to_string(st.offset_arcsec) +
         " arcsec from the centre of the outer isophotes (FITS pixel " + std::to_string(st.pixel_fits.x) + ", " +
         std::to_string(st.pixel_fits.y) + ")");
  if (!s.ok) warn(a.image + ": no photometric centre: " + s.reason);
  for (const auto& c : s.centres)
    if (s.ok && !c.ok()) warn(a.image + ": " + c.id() + " failed: " + c.centre.reason);

  nlohmann::json j = to_json(s);
  if (!a.mask.empty()) j["mask"] = a.mask;
  if (dyn) {
    const ComparisonSummary cmp = compare_with_dynamical(s, *dyn, copt);
    for (std::size_t i = 0; i < s.centres.size(); ++i) {
      const auto& off = cmp.offsets[i];
      j["centres"][i]["offset"] = to_json(off);
    }
    j["comparison"] = to_json(cmp);
  }
  j["software"] = software_info();
  write_text_file(a.json, j.dump(2) + "\n");
  note("photometry: " + std::to_string(s.spread.count) + " of " + std::to_string(s.centres.size()) +
       " centres measured; written " + a.json);
}

}  // namespace

FULCRUM_SUBCOMMAND(photometry, 60, [](CLI::App& app) {
  auto a = std::make_shared<PhotometryArgs>();
  auto* cmd = app.add_subcommand(
      "photometry",
      "Photometric centres of the galaxy on an optical image (peak, light-weighted centroid, "
      "Sersic profile fit, isophote, symmetry), each with its covariance, and their offsets "
      "from a dynamical centre");
  cmd->add_option("--image", a->image, "Optical image (FITS with a celestial WCS)")->required();
  cmd->add_option("--mask", a->mask, "Mask on the image's grid: non-zero or NaN pixels are left out");
  cmd->add_option("--psf-fwhm", a->psf_fwhm,
                  "PSF (seeing) FWHM in arcsec; default: the header's BMAJ/BMIN, a seeing card "
                  "(PSF_FWHM, SEEING, FWHM), or measured from the image's stars");
  cmd->add_option("--dynamical-centre", a->dynamical_centre,
                  "Dynamical centre RA_DEG,DEC_DEG to compare with");
  cmd->add_option("--dynamical-cov", a->dynamical_cov,
                  "Covariance of the dynamical centre EE,EN,NN in arcsec^2 (east, north)");
  cmd->add_option("--beam", a->beam,
                  "Beam of the line map BMAJ,BMIN,BPA (arcsec, arcsec, deg) for offsets in beams");
  cmd->add_option("--distance-mpc", a->distance_mpc, "Distance in Mpc for offsets in kpc");
  cmd->add_option("--bootstrap", a->bootstrap,
                  "Noise realisations for the bootstrap uncertainties (default 100)");
  cmd->add_option("--seed", a->seed, "Seed of the bootstrap's random draws (default 1)");
  cmd->add_option("--isophote-level", a->isophote_level,
                  "Isophote level above the sky, image units (default: at two half-light radii)");
  cmd->add_option("--json", a->json, "Output JSON file")->required();
  cmd->callback([a, cmd] { run_photometry(*a, cmd); });
});
