// The single-galaxy analysis and the calibration's per-mock step run the same
// robustness chain (robustness/analysis.hpp): one invented disc (the tiny
// pipeline disc, tests/pipeline/pipeline_fixtures.hpp) through
// pipeline::analyse_galaxy and through calibration::analyse_mock with the
// same centres, options and seed gives identical numbers, bit for bit
// (exact: both are the same deterministic code path; no tolerance).
// Also: report.json read back by the one reader gives the same numbers.
#include <catch2/catch.hpp>

#include "../pipeline/pipeline_fixtures.hpp"
#include "../support/test_support.hpp"
#include "fulcrum/calibration/calibration.hpp"
#include "fulcrum/pipeline/galaxy_analysis.hpp"
#include "fulcrum/pipeline/galaxy_stages.hpp"
#include "fulcrum/pipeline/report_reader.hpp"

using namespace fulcrum;

namespace {

pipeline::GalaxyInput tiny_input(const std::filesystem::path& dir) {
  test::TinyDisc d;
  d.name = "chain-disc";
  test::write_tiny_disc(dir, d);
  pipeline::GalaxyInput in;
  in.name = d.name;
  in.velocity = (dir / "vel.fits").string();
  in.intensity = (dir / "mom0.fits").string();
  in.intensity_error = (dir / "mom0_err.fits").string();
  in.tail_pa_deg = d.tail_pa;
  in.tail_pa_err_deg = 8.0;
  return in;
}

void same_numbers(const robustness::AnalysisSummary& a, const robustness::AnalysisSummary& b) {
  CHECK(a.split.asymmetry == b.split.asymmetry);
  CHECK(a.split.asymmetry_err == b.split.asymmetry_err);
  CHECK(a.split.leading_flux == b.split.leading_flux);
  CHECK(a.bootstrap.p_positive == b.bootstrap.p_positive);
  CHECK(a.bootstrap.lo68 == b.bootstrap.lo68);
  CHECK(a.bootstrap.hi68 == b.bootstrap.hi68);
  CHECK(a.bootstrap.lo95 == b.bootstrap.lo95);
  CHECK(a.bootstrap.hi95 == b.bootstrap.hi95);
  CHECK(a.bootstrap.n_draws == b.bootstrap.n_draws);
  CHECK(a.flip.nominal.found == b.flip.nominal.found);
  CHECK(a.flip.nominal.distance_arcsec == b.flip.nominal.distance_arcsec);
  CHECK(a.flip.worst.distance_arcsec == b.flip.worst.distance_arcsec);
  CHECK(a.verdict.verdict == b.verdict.verdict);
  CHECK(a.verdict.plausible.farthest_plausible_arcsec == b.verdict.plausible.farthest_plausible_arcsec);
}

}  // namespace

TEST_CASE("one mock through the single-galaxy analysis and the calibration's per-mock step gives identical numbers",
          "[calibration][robustness][pipeline]") {
  const auto dir = test::temp_dir("one_chain");
  const auto in = tiny_input(dir);
  pipeline::AnalysisOptions opt;
  opt.seed = 11;
  opt.draws = 1500;
  opt.figures = false;
  opt.calibrate = 0;  // the chain itself; calibration would re-apply the verdict afterwards
  const auto r = pipeline::analyse_galaxy(in, opt);
  const auto& s = r.summary;
  INFO(s.statement);
  REQUIRE(s.robustness);
  REQUIRE(s.adopted_centre());
  CHECK(s.adopted_centre()->method == CentreMethod::kinematic_rings);

  const auto maps = pipeline::load_galaxy_maps(in);
  const auto mi = pipeline::matched_inputs(s, maps);
  // No velocity error map: the mocks' velocity noise is the data fit's
  // residual rms (not a fixed guess).
  REQUIRE(s.kinematics);
  CHECK(s.kinematics->fit.diagnostics.residual_rms_kms > 0.0);
  CHECK(mi.velocity_noise_kms == s.kinematics->fit.diagnostics.residual_rms_kms);
  calibration::CalibrationOptions co;
  co.seed = opt.seed;
  co.n_draws = static_cast<std::size_t>(opt.draws);
  co.chain = pipeline::chain_settings(opt);
  calibration::MockCentres mc;
  mc.adopted = *s.adopted_centre();
  for (std::size_t i = 0; i < s.centres.size(); ++i)
    if (i != *s.adopted && s.centres[i].ok()) mc.estimates.push_back(s.centres[i]);
  mc.failures = s.failures;
  const auto b = calibration::analyse_mock(*maps.intensity, mi, mc, co, opt.seed);
  same_numbers(*s.robustness, b);
  CHECK(b.tail_pa_deg == s.robustness->tail_pa_deg);
  CHECK(b.settings.seed == s.robustness->settings.seed);

  SECTION("report.json read back by the one reader says the same") {
    const auto g = pipeline::read_report(r.report, "report.json");
    CHECK(g.verdict == s.verdict);
    CHECK(g.robustness->split.asymmetry == s.robustness->split.asymmetry);
    CHECK(g.robustness->bootstrap.lo95 == s.robustness->bootstrap.lo95);
    CHECK(g.robustness->bootstrap.p_positive == s.robustness->bootstrap.p_positive);
    CHECK(g.robustness->flip.nominal.distance_arcsec == s.robustness->flip.nominal.distance_arcsec);
    REQUIRE(g.adopted_centre());
    CHECK(g.adopted_centre()->position.ra_deg == s.adopted_centre()->position.ra_deg);
    CHECK(g.adopted_centre()->covariance == s.adopted_centre()->covariance);
    REQUIRE(g.kinematics);
    CHECK(g.kinematics->rings.size() == s.kinematics->rings.size());
    // calibrate --from builds the same matched inputs from the read summary.
    const auto mi2 = pipeline::matched_inputs(g, maps);
    CHECK(mi2.measured_asymmetry == mi.measured_asymmetry);
    CHECK(mi2.ring_vrot_kms == mi.ring_vrot_kms);
    CHECK(mi2.centre.position.dec_deg == mi.centre.position.dec_deg);
    CHECK(mi2.velocity_scatter_kms == mi.velocity_scatter_kms);
    CHECK(mi2.velocity_noise_kms == mi.velocity_noise_kms);
  }
}
