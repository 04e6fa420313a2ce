// The tilted-ring model (kinematics/tilted_ring_model.hpp) against
//  * an independent numpy evaluation of the published formula at 1000 random
//    points (tests/python/kinematics_model_reference.py, 1e-9 km/s);
//  * sky/ellipse.hpp's disc_coordinates (a separate implementation of the
//    disc-plane mapping in the foundation);
//  * Ceres' automatic differentiation, for the hand-written Jacobian of the
//    global-fit cost function.
//
// tilted_ring_model.hpp includes Ceres, whose logging library defines a
// CHECK macro of its own; it is included first and its CHECK removed so that
// Catch's CHECK (which counts and reports) is the one used below.
#include "fulcrum/kinematics/tilted_ring_model.hpp"
#undef CHECK

#include <catch2/catch.hpp>

#include <cstdio>
#include <fstream>
#include <random>

#include "../support/test_support.hpp"
#include "fulcrum/sky/ellipse.hpp"

using namespace fulcrum;
using namespace fulcrum::kinematics;

TEST_CASE("tilted-ring model agrees with numpy at 1000 random points", "[kinematics][python]") {
  const auto dir = test::temp_dir("kin-model");
  const auto path = (dir / "points.csv").string();
  std::mt19937_64 rng(20261201);
  std::uniform_real_distribution<double> pos(-40, 40), cen(-3, 3), pa(0, 360), inc(5, 85),
      vs(-500, 12000), vr(-50, 300), vd(-40, 40);
  std::ofstream out(path);
  out << "east,north,ce,cn,pa,inc,vsys,vrot,vrad,model\n";
  char buf[512];
  for (int i = 0; i < 1000; ++i) {
    const double e = pos(rng), n = pos(rng), ce = cen(rng), cn = cen(rng), p = pa(rng),
                 q = inc(rng), v0 = vs(rng), v1 = vr(rng), v2 = vd(rng);
    const double m = model_velocity_kms(e, n, ce, cn, p, q, v0, v1, v2);
    std::snprintf(buf, sizeof buf, "%.17g,%.17g,%.17g,%.17g,%.17g,%.17g,%.17g,%.17g,%.17g,%.17g\n",
                  e, n, ce, cn, p, q, v0, v1, v2, m);
    out << buf;
  }
  out.close();
  const auto r = test::run_python("kinematics_model_reference.py", path);
  INFO(r.out << r.err);
  CHECK(r.exit_code == 0);
}

TEST_CASE("disc-plane mapping matches sky/ellipse disc_coordinates", "[kinematics]") {
  std::mt19937_64 rng(7);
  std::uniform_real_distribution<double> pos(-30, 30), pa(0, 360), inc(1, 89);
  for (int i = 0; i < 500; ++i) {
    const SkyOffset p{pos(rng), pos(rng)}, c{pos(rng) / 10, pos(rng) / 10};
    const Angle a = pa(rng) * degrees, b = inc(rng) * degrees;
    const DiscPoint d = disc_coordinates(p, c, a, b);
    double X, Y;
    disc_plane(p.east, p.north, c.east, c.north, a.cos(), a.sin(), b.cos(), &X, &Y);
    const double R = std::hypot(X, Y);
    // Tolerance: both are a handful of floating-point operations (1e-12 relative).
    CHECK(R == Approx(d.radius_arcsec).epsilon(1e-12));
    CHECK(X / R == Approx(d.cos_theta).margin(1e-12));
    CHECK(Y / R == Approx(d.sin_theta).margin(1e-12));
  }
}

TEST_CASE("hand-written global-fit Jacobian equals Ceres autodiff", "[kinematics]") {
  std::mt19937_64 rng(11);
  std::uniform_real_distribution<double> pos(-20, 20), u(0, 1);
  PixelGroup g;
  for (int i = 0; i < 200; ++i) {
    g.east.push_back(pos(rng));
    g.north.push_back(pos(rng));
    g.velocity.push_back(7000 + 200 * (u(rng) - 0.5));
    g.scale.push_back(0.5 + u(rng));
  }
  for (bool radial : {false, true}) {
    RingPairCostFunction analytic(&g, 6.0, 8.0, radial);
    std::unique_ptr<ceres::CostFunction> automatic;
    if (radial)
      automatic.reset(new ceres::AutoDiffCostFunction<RingPairRadialResidual, ceres::DYNAMIC, 2, 1,
                                                      1, 1, 1, 1, 1, 1>(
          new RingPairRadialResidual(&g, 6.0, 8.0), 200));
    else
      automatic.reset(new ceres::AutoDiffCostFunction<RingPairResidual, ceres::DYNAMIC, 2, 1, 1, 1,
                                                      1, 1>(new RingPairResidual(&g, 6.0, 8.0), 200));
    double centre[2] = {0.4, -0.7}, pa = 1.1, inc = 0.9, vsys = 7003, v0 = 150, v1 = 170, u0 = 5,
           u1 = -3;
    std::vector<double*> params = {centre, &pa, &inc, &vsys, &v0, &v1};
    if (radial) {
      params.push_back(&u0);
      params.push_back(&u1);
    }
    const int nb = static_cast<int>(params.size());
    std::vector<std::vector<double>> ja(nb), jb(nb);
    std::vector<double*> pa_ptr(nb), pb_ptr(nb);
    for (int b = 0; b < nb; ++b) {
      const int w = b == 0 ? 2 : 1;
      ja[b].assign(200 * w, 0.0);
      jb[b].assign(200 * w, 0.0);
      pa_ptr[b] = ja[b].data();
      pb_ptr[b] = jb[b].data();
    }
    std::vector<double> ra(200), rb(200);
    REQUIRE(analytic.Evaluate(params.data(), ra.data(), pa_ptr.data()));
    REQUIRE(automatic->Evaluate(params.data(), rb.data(), pb_ptr.data()));
    for (int i = 0; i < 200; ++i) CHECK(ra[i] == Approx(rb[i]).epsilon(1e-12).margin(1e-9));
    // Tolerance: analytic vs forward-mode autodiff derivatives of the same
    // expression agree to rounding (1e-9 absolute on O(1..100) values).
    for (int b = 0; b < nb; ++b)
      for (std::size_t k = 0; k < ja[b].size(); ++k)
        CHECK(ja[b][k] == Approx(jb[b][k]).epsilon(1e-10).margin(1e-9));
  }
}
