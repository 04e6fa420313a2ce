// The Sérsic profile fit: parameters recovered from images drawn from the
// published formula, and the coverage of its error ellipse over 200 noise
// draws.
#include <catch2/catch.hpp>

#include <iostream>

#include "fulcrum/photometry/profile_fit.hpp"
#include "fulcrum/sky/offset_frame.hpp"
#include "sersic_test_image.hpp"

using namespace fulcrum;
using namespace fulcrum::photometry;

TEST_CASE("profile fit recovers the Sersic parameters", "[photometry][profile]") {
  test::TestGalaxy g;
  g.rotation_deg = 37.0;
  g.flip = true;
  g.q = 0.45;
  g.pa_deg = 140.0;
  g.n = 2.0;
  g.noise = 2.0;
  const Image im = test::make_test_image(g);
  PreparationOptions po;
  po.psf_fwhm_arcsec = g.psf_fwhm_arcsec;
  const PreparedImage p = prepare_image(im, nullptr, po);
  REQUIRE(p.ok);
  const PixelEstimate e = fit_sersic_profile(p, p.data, p.background.rms);
  REQUIRE(e.ok);
  INFO(e.details.dump());
  // Tolerances: a few per cent, far above the fit's statistical error at
  // this S/N and above the rendering error of the model (sub-pixel sampling).
  CHECK(e.details["sersic_n"].get<double>() == Approx(g.n).epsilon(0.03));
  CHECK(e.details["re_arcsec"].get<double>() == Approx(g.re_arcsec).epsilon(0.02));
  CHECK(e.details["axis_ratio"].get<double>() == Approx(g.q).epsilon(0.02));
  CHECK(e.details["pa_deg"].get<double>() == Approx(g.pa_deg).margin(1.0));
  // The sky estimate holds some of the galaxy's wings; the fitted constant
  // takes them back out: sky + fitted background = the true sky.
  CHECK(std::abs(p.background.level + e.details["background"].get<double>() - g.sky) < 0.3);
  CHECK(std::hypot(e.centre.x - g.x0, e.centre.y - g.y0) < 0.01);
}

TEST_CASE("profile fit error ellipse covers the truth at the nominal rate", "[photometry][profile][coverage]") {
  // 200 noise draws of one small image (28x28 pixels of 0.4 arcsec, rotated
  // and flipped grid, n = 1, q = 0.6, sky 100). For a correct 2-D Gaussian
  // error the Mahalanobis distance d^2 = dx^T C^-1 dx of the truth follows
  // chi-square with 2 dof: P(d^2 < 2.2958) = 0.6827, P(d^2 < 5.9915) = 0.95.
  // Acceptance: within 3 binomial sigma of those rates for 200 draws
  // (sigma = 3.3% and 1.5%).
  test::TestGalaxy g;
  g.nx = g.ny = 28;
  g.x0 = 13.2;
  g.y0 = 14.35;
  g.rotation_deg = 37.0;
  g.flip = true;
  g.n = 1.0;
  g.q = 0.6;
  g.re_arcsec = 1.2;
  g.total_flux = 2.0e3;
  g.noise = 2.0;
  const std::vector<double> model = test::test_galaxy_model(g);
  const int draws = 200;
  int in68 = 0, in95 = 0, ok = 0;
  double mean_sigma = 0, sdx = 0, sdy = 0, sdx2 = 0, sdy2 = 0, sx2 = 0, sy2 = 0, chi = 0;
  for (int k = 0; k < draws; ++k) {
    const Image im = test::make_test_image(g, &model, 1000 + k);
    PreparationOptions po;
    po.psf_fwhm_arcsec = g.psf_fwhm_arcsec;
    const PreparedImage p = prepare_image(im, nullptr, po);
    if (!p.ok) continue;
    const PixelEstimate e = fit_sersic_profile(p, p.data, p.background.rms);
    if (!e.ok) continue;
    ++ok;
    const Eigen::Vector2d d(e.centre.x - g.x0, e.centre.y - g.y0);
    const double d2 = d.dot(e.cov_pixels->inverse() * d);
    in68 += d2 < 2.2958;
    in95 += d2 < 5.9915;
    mean_sigma += std::sqrt(e.cov_pixels->trace());
    sdx += d(0); sdy += d(1); sdx2 += d(0) * d(0); sdy2 += d(1) * d(1);
    sx2 += (*e.cov_pixels)(0, 0); sy2 += (*e.cov_pixels)(1, 1);
    chi += e.details["chi2_reduced"].get<double>();
  }
  std::cout << "mean dx " << sdx / ok << " dy " << sdy / ok << " rms dx " << std::sqrt(sdx2 / ok)
            << " pred " << std::sqrt(sx2 / ok) << " rms dy " << std::sqrt(sdy2 / ok) << " pred "
            << std::sqrt(sy2 / ok) << " chi2 " << chi / ok << "\n";
  const double f68 = static_cast<double>(in68) / ok, f95 = static_cast<double>(in95) / ok;
  std::cout << "profile-fit coverage over " << ok << " draws: " << f68 << " inside the 68.27% "
            << "ellipse, " << f95 << " inside the 95% ellipse; mean sigma "
            << mean_sigma / ok * 0.4 << " arcsec\n";
  CHECK(ok == draws);
  CHECK(f68 > 0.6827 - 0.099);
  CHECK(f68 < 0.6827 + 0.099);
  CHECK(f95 > 0.95 - 0.046);
  CHECK(f95 <= 1.0);
}

TEST_CASE("analytic derivatives of the rendered profile match central differences", "[photometry][profile]") {
  // The fit's Jacobian (render_sersic_derivatives) against central
  // differences of the rendered model, on a rotated, flipped grid; a round
  // shape (e = 0 exactly, where theta is undefined), an elongated one and one
  // whose ellipticity is clamped at 0.95. Tolerance: 1e-5 of the largest
  // derivative of each parameter (central-difference truncation ~h^2 at
  // h = 2e-5 plus rounding ~1e-12 / h).
  test::TestGalaxy g;
  g.nx = g.ny = 32;
  g.x0 = 15.3;
  g.y0 = 16.1;
  g.rotation_deg = 37.0;
  g.flip = true;
  const Image im = test::make_test_image(g);
  PreparationOptions po;
  po.psf_fwhm_arcsec = g.psf_fwhm_arcsec;
  const PreparedImage p = prepare_image(im, nullptr, po);
  REQUIRE(p.ok);
  const PixelCoord sub{15.0, 16.0};
  const double cases[3][7] = {{15.3, 16.1, 0.5, std::log(1.5), 1.7, 0.0, 0.0},
                              {15.3, 16.1, 0.5, std::log(1.5), 2.6, 0.3, -0.2},
                              {15.3, 16.1, 0.5, std::log(1.5), 0.8, 0.9, 0.6}};
  for (const auto& c : cases) {
    const auto d = render_sersic_derivatives(p, c, sub);
    for (int j = 0; j < 7; ++j) {
      const double h = 2e-5;
      double qp[7], qm[7];
      std::copy(c, c + 7, qp);
      std::copy(c, c + 7, qm);
      qp[j] += h;
      qm[j] -= h;
      const auto mp = render_sersic_model(p, qp, sub), mm = render_sersic_model(p, qm, sub);
      double scale = 0, worst = 0;
      for (std::size_t i = 0; i < mp.size(); ++i) {
        const double num = (mp[i] - mm[i]) / (2 * h);
        scale = std::max(scale, std::abs(num));
        worst = std::max(worst, std::abs(num - d[j][i]));
      }
      INFO("parameter " << j << " at e = (" << c[5] << ", " << c[6] << "): largest |derivative| " << scale
                        << ", largest difference " << worst);
      if (j == 5 || j == 6) {
        if (c[5] == 0.0 && c[6] == 0.0) continue;  // |e| has a corner at e = 0: no two-sided difference
      }
      CHECK(worst <= 1e-5 * scale);
    }
  }
}
