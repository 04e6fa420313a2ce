// Iteration bounds: every data-driven iteration stops at its bound and says
// so (a failure reason or a status flag), never returning an unconverged
// number as if it had converged. Each case sets the bound far below what the
// data need and checks the statement. docs/reliability.md lists every loop.
#include <catch2/catch.hpp>

#include <random>

#include "../photometry/sersic_test_image.hpp"
#include "fulcrum/moments/moment_maps.hpp"
#include "fulcrum/photometry/background.hpp"
#include "fulcrum/photometry/centroid.hpp"
#include "fulcrum/photometry/isophote.hpp"
#include "fulcrum/photometry/prepared_image.hpp"
#include "fulcrum/photometry/profile_fit.hpp"
#include "fulcrum/photometry/symmetry.hpp"

using namespace fulcrum;
using namespace fulcrum::photometry;

namespace {
PreparedImage prepared_galaxy() {
  test::TestGalaxy g;
  g.rotation_deg = 20.0;
  g.q = 0.6;
  g.pa_deg = 50.0;
  g.n = 1.5;
  g.noise = 2.0;
  const Image im = test::make_test_image(g);
  PreparationOptions po;
  po.psf_fwhm_arcsec = g.psf_fwhm_arcsec;
  return prepare_image(im, nullptr, po);
}
}  // namespace

TEST_CASE("photometric fits stopped by their iteration bound say so", "[reliability][bounds]") {
  const PreparedImage p = prepared_galaxy();
  REQUIRE(p.ok);

  ProfileFitOptions pf;
  pf.max_iterations = 1;
  const PixelEstimate prof = fit_sersic_profile(p, p.data, p.background.rms, pf);
  CHECK_FALSE(prof.ok);
  CHECK(prof.reason == "the profile fit did not converge in 1 iterations");
  // With the default bound the same fit converges.
  CHECK(fit_sersic_profile(p, p.data, p.background.rms).ok);

  IsophoteOptions io;
  io.max_iterations = 1;
  const PixelEstimate iso = estimate_isophote_centre(p, p.data, p.background.rms, io);
  CHECK_FALSE(iso.ok);
  CHECK(iso.reason == "the isophote ellipse did not converge in 1 iterations");

  SymmetryOptions so;
  so.max_evaluations = 5;
  const PixelEstimate sym = estimate_symmetry_centre(p, p.data, so);
  CHECK_FALSE(sym.ok);
  CHECK(sym.reason == "the asymmetry minimisation did not converge in 5 evaluations");

  // The centroid's bound: either it says it did not converge, or it refuses
  // when the last step still moved the centre by more than 0.05 pixel.
  CentroidOptions co;
  co.max_iterations = 1;
  co.tolerance_pixels = 1e-15;
  const PixelEstimate cen = estimate_centroid(p, p.data, co);
  if (cen.ok) CHECK(cen.details["converged"] == false);
  else CHECK(cen.reason.find("did not settle") != std::string::npos);
}

TEST_CASE("sigma clipping stopped by its iteration bound reports converged = false",
          "[reliability][bounds]") {
  // Heavy-tailed values (Gaussian plus a broad wing of sources): each pass
  // drops more values, so one pass cannot converge.
  std::mt19937_64 rng(8);
  std::normal_distribution<double> nd(0.0, 1.0);
  std::vector<double> v(5000);
  for (std::size_t i = 0; i < v.size(); ++i) v[i] = nd(rng) + (i % 10 == 0 ? 3.0 + 0.01 * i : 0.0);
  BackgroundOptions o;
  o.max_iterations = 1;
  const BackgroundSummary one = estimate_background(v, {}, o);
  CHECK(one.iterations == 1);
  CHECK_FALSE(one.converged);
  const BackgroundSummary full = estimate_background(v, {});
  CHECK(full.converged);
  CHECK(full.iterations > 1);

  // The cube noise (1.4826 MAD with clipping) flags the same case.
  NoiseOptions no;
  no.max_iterations = 1;
  bool hit = false;
  CHECK(std::isfinite(robust_sigma(v, no, &hit)));
  CHECK(hit);
  CHECK(std::isfinite(robust_sigma(v, NoiseOptions{}, &hit)));
  CHECK_FALSE(hit);
}
