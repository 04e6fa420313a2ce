// The adopted-centre rule (pipeline/adopted_centre.hpp, DESIGN.md section 5):
// one check per branch. Invented positions; the rule is a choice, not a
// number, so the checks are exact.
#include <catch2/catch.hpp>

#include "fulcrum/pipeline/adopted_centre.hpp"

using namespace fulcrum;
using pipeline::adopt_centre;

namespace {
Centre ok(CentreMethod m) { return measured_centre(m, {150.0, 20.0}, Eigen::Matrix2d::Identity(), "test"); }
Centre bad(CentreMethod m) { return failed_centre(m, "did not converge", "test"); }
}  // namespace

TEST_CASE("adopted centre: tilted rings when that fit succeeded", "[pipeline][centre]") {
  const std::vector<Centre> v{ok(CentreMethod::photometric_peak), ok(CentreMethod::kinematic_harmonic),
                              ok(CentreMethod::kinematic_rings)};
  const auto a = adopt_centre(v, false);
  REQUIRE(a.index);
  CHECK(*a.index == 2);
}

TEST_CASE("adopted centre: the harmonic centre when the rings failed", "[pipeline][centre]") {
  const std::vector<Centre> v{bad(CentreMethod::kinematic_rings), ok(CentreMethod::kinematic_harmonic),
                              ok(CentreMethod::photometric_profile)};
  const auto a = adopt_centre(v, false);
  REQUIRE(a.index);
  CHECK(v[*a.index].method == CentreMethod::kinematic_harmonic);
}

TEST_CASE("adopted centre: the first successful photometric centre by preference when both kinematic ones failed",
          "[pipeline][centre]") {
  // Listed peak first, but the profile fit is preferred; a failed profile
  // fit passes the choice to the centroid.
  std::vector<Centre> v{bad(CentreMethod::kinematic_rings), bad(CentreMethod::kinematic_harmonic),
                        ok(CentreMethod::photometric_peak), ok(CentreMethod::photometric_profile),
                        ok(CentreMethod::photometric_centroid)};
  auto a = adopt_centre(v, false);
  REQUIRE(a.index);
  CHECK(v[*a.index].method == CentreMethod::photometric_profile);
  v[3] = bad(CentreMethod::photometric_profile);
  a = adopt_centre(v, false);
  REQUIRE(a.index);
  CHECK(v[*a.index].method == CentreMethod::photometric_centroid);
  CHECK(a.reason.find("photometric-centroid") != std::string::npos);
}

TEST_CASE("adopted centre: none, with the reason, when nothing succeeded, an external centre is never adopted",
          "[pipeline][centre]") {
  Centre ext = ok(CentreMethod::external);
  ext.label = "given";
  const std::vector<Centre> v{bad(CentreMethod::kinematic_rings), bad(CentreMethod::kinematic_harmonic), ext};
  auto a = adopt_centre(v, true);
  CHECK_FALSE(a.index);
  CHECK(a.reason == "no centre estimate succeeded (the kinematic fit failed; no optical image given)");
  a = adopt_centre({}, false);
  CHECK_FALSE(a.index);
  CHECK(a.reason == "no centre estimate succeeded (the kinematic fit failed)");
}

TEST_CASE("centre method names round-trip", "[pipeline][centre]") {
  for (auto m : {CentreMethod::kinematic_rings, CentreMethod::kinematic_harmonic, CentreMethod::photometric_profile,
                 CentreMethod::photometric_centroid, CentreMethod::photometric_isophote,
                 CentreMethod::photometric_symmetry, CentreMethod::photometric_peak})
    CHECK(centre_method_from_name(centre_method_name(m)) == m);
  CHECK_FALSE(centre_method_from_name("photometric-guess"));
}
