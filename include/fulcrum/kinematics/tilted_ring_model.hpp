// The tilted-ring model of a rotating thin disc, as small templated functions
// and Ceres residual functors.
//
// The model (Rogstad, Lockhart & Wright 1974, ApJ 193, 309; Begeman 1989,
// A&A 223, 47): the gas moves on thin circular rings; a ring of radius R,
// centred at sky offset c, with kinematic position angle pa (of the receding
// half of the major axis, north through east) and inclination i, has the
// line-of-sight velocity
//
//     v = vsys + vrot(R) sin(i) cos(theta) + vrad(R) sin(i) sin(theta),
//
// where theta is the azimuth in the disc plane measured from the receding
// major axis towards the side at PA = pa + 90 deg. A sky point p (east, north
// offsets in arcsec from the map's reference) maps to the disc plane as
//
//     d      = p - c
//     x      = d . (sin pa, cos pa)          along the receding major axis
//     y      = d . (cos pa, -sin pa)         along PA = pa + 90 deg
//     X = x,  Y = y / cos(i)                 deprojected
//     R = sqrt(X^2 + Y^2),  cos(theta) = X / R,  sin(theta) = Y / R.
//
// The sign of the radial term depends on which half of the minor axis is the
// near side, which a velocity field alone does not tell; vrad is reported as
// fitted with the sign convention above.
//
// Units: offsets and radii in arcsec, angles in radians inside the functors
// (degrees at every interface people see), velocities in km/s.
//
// The global fit describes vrot(R) as piecewise linear between ring nodes
// R_k (node 0 is R = 0 with vrot = vrad = 0). Each pixel uses the two nodes
// that bracket its radius at the start of a fitting pass; within the pass the
// interpolation weight follows R continuously, so the residual is smooth in
// every parameter. Pixels are grouped by bracket, one Ceres residual block per
// group with as many residuals as pixels: a few dozen blocks instead of a
// hundred thousand, which keeps a 400x400 map fast.
#pragma once

#include <ceres/ceres.h>

#include <cmath>
#include <cstddef>
#include <vector>

namespace fulcrum::kinematics {

// Disc-plane coordinates of a sky offset (east, north) for a disc centred at
// (ce, cn) with position angle pa and inclination inc (radians), as above.
// Uses cos/sin of pa and cos of inc precomputed by the caller.
template <typename T>
inline void disc_plane(const T& east, const T& north, const T& ce, const T& cn, const T& cos_pa,
                       const T& sin_pa, const T& cos_inc, T* X, T* Y) {
  const T de = east - ce;
  const T dn = north - cn;
  *X = de * sin_pa + dn * cos_pa;
  *Y = (de * cos_pa - dn * sin_pa) / cos_inc;
}

// The tilted-ring line-of-sight velocity at one sky point for one ring
// (vrot and vrad already evaluated at that radius). Returns vsys at R = 0.
template <typename T>
inline T tilted_ring_velocity(const T& X, const T& Y, const T& R, const T& sin_inc, const T& vsys,
                              const T& vrot, const T& vrad) {
  using std::abs;
  if (R < T(1e-12)) return vsys;
  return vsys + sin_inc * (vrot * X + vrad * Y) / R;
}

// Plain-double evaluation of the model for one point and one ring (used by
// model maps, tests and the Python cross-check). Angles in degrees.
double model_velocity_kms(double east, double north, double centre_east, double centre_north,
                          double pa_deg, double inc_deg, double vsys, double vrot, double vrad);

// The pixels of one residual block: sky offsets (arcsec), observed velocity
// (km/s) and the factor that multiplies (observed - model) to give the
// residual: sqrt(weight) / sigma, with weight = |cos theta|^k times the
// robust weight of the pass.
struct PixelGroup {
  std::vector<double> east, north, velocity, scale;
  std::vector<std::size_t> index;  // position in the input sample list
  std::size_t size() const { return east.size(); }
};

// Global-fit residuals of the pixels bracketed by nodes (r0, r1) with
// rotation speeds v0, v1. Parameter blocks: centre[2] = (east, north)
// arcsec, pa[1] (rad), inc[1] (rad), vsys[1] (km/s), v0[1], v1[1] (km/s).
// Separate one-value blocks let a caller hold any of them fixed or bound the
// inclination.
struct RingPairResidual {
  RingPairResidual(const PixelGroup* group, double r0, double r1)
      : group_(group), r0_(r0), inv_dr_(1.0 / (r1 - r0)) {}

  template <typename T>
  bool operator()(const T* centre, const T* pa, const T* inc, const T* vsys, const T* v0,
                  const T* v1, T* residual) const {
    using std::cos;
    using std::sin;
    using std::sqrt;
    const T cos_pa = cos(pa[0]), sin_pa = sin(pa[0]);
    const T cos_inc = cos(inc[0]), sin_inc = sin(inc[0]);
    const T zero(0.0);
    for (std::size_t i = 0; i < group_->size(); ++i) {
      T X, Y;
      disc_plane(T(group_->east[i]), T(group_->north[i]), centre[0], centre[1], cos_pa, sin_pa,
                 cos_inc, &X, &Y);
      const T R = sqrt(X * X + Y * Y);
      const T f = (R - r0_) * inv_dr_;
      const T vrot = v0[0] + (v1[0] - v0[0]) * f;
      const T model = tilted_ring_velocity(X, Y, R, sin_inc, vsys[0], vrot, zero);
      residual[i] = (group_->velocity[i] - model) * group_->scale[i];
    }
    return true;
  }

 private:
  const PixelGroup* group_;
  double r0_, inv_dr_;
};

// As RingPairResidual with a radial term: extra blocks u0[1], u1[1] for vrad.
struct RingPairRadialResidual {
  RingPairRadialResidual(const PixelGroup* group, double r0, double r1)
      : group_(group), r0_(r0), inv_dr_(1.0 / (r1 - r0)) {}

  template <typename T>
  bool operator()(const T* centre, const T* pa, const T* inc, const T* vsys, const T* v0,
                  const T* v1, const T* u0, const T* u1, T* residual) const {
    using std::cos;
    using std::sin;
    using std::sqrt;
    const T cos_pa = cos(pa[0]), sin_pa = sin(pa[0]);
    const T cos_inc = cos(inc[0]), sin_inc = sin(inc[0]);
    for (std::size_t i = 0; i < group_->size(); ++i) {
      T X, Y;
      disc_plane(T(group_->east[i]), T(group_->north[i]), centre[0], centre[1], cos_pa, sin_pa,
                 cos_inc, &X, &Y);
      const T R = sqrt(X * X + Y * Y);
      const T f = (R - r0_) * inv_dr_;
      const T vrot = v0[0] + (v1[0] - v0[0]) * f;
      const T vrad = u0[0] + (u1[0] - u0[0]) * f;
      const T model = tilted_ring_velocity(X, Y, R, sin_inc, vsys[0], vrot, vrad);
      residual[i] = (group_->velocity[i] - model) * group_->scale[i];
    }
    return true;
  }

 private:
  const PixelGroup* group_;
  double r0_, inv_dr_;
};

// The global-fit residuals of RingPairResidual / RingPairRadialResidual
// with hand-written derivatives: the hot loop of the global fit (a 400x400
// map has ~1e5 pixels). tests/kinematics/test_tilted_ring_model.cpp checks
// it against Ceres' automatic differentiation of the functors above.
//
// With q one of (ce, cn, pa, inc), and y = X-rotated coordinate before the
// deprojection (Y = y / cos i):
//   dX/d(ce, cn, pa, inc) = (-sin pa, -cos pa,  y, 0)
//   dy/d(ce, cn, pa, inc) = (-cos pa,  sin pa, -X, 0)
//   dY = dy / cos i  (+ Y tan i for q = inc)
//   dR = (X dX + Y dY) / R,  d(X/R) = (dX - (X/R) dR) / R,  d(Y/R) likewise
//   dvrot = (v1 - v0)/(r1 - r0) dR  (vrad likewise)
//   dm = sin i [dvrot X/R + vrot d(X/R) + dvrad Y/R + vrad d(Y/R)]
//        (+ cos i (vrot X/R + vrad Y/R) for q = inc)
//   dm/dvsys = 1, dm/dv0 = sin i (X/R)(1 - f), dm/dv1 = sin i (X/R) f, ...
// and residual = scale (v - m), so d(residual) = -scale dm.
class RingPairCostFunction : public ceres::CostFunction {
 public:
  RingPairCostFunction(const PixelGroup* group, double r0, double r1, bool radial)
      : group_(group), r0_(r0), inv_dr_(1.0 / (r1 - r0)), radial_(radial) {
    set_num_residuals(static_cast<int>(group->size()));
    auto* sizes = mutable_parameter_block_sizes();
    *sizes = {2, 1, 1, 1, 1, 1};
    if (radial) {
      sizes->push_back(1);
      sizes->push_back(1);
    }
  }

  bool Evaluate(double const* const* p, double* residuals, double** jac) const override {
    const double ce = p[0][0], cn = p[0][1], pa = p[1][0], inc = p[2][0], vsys = p[3][0];
    const double v0 = p[4][0], v1 = p[5][0];
    const double u0 = radial_ ? p[6][0] : 0.0, u1 = radial_ ? p[7][0] : 0.0;
    const double cp = std::cos(pa), sp = std::sin(pa), ci = std::cos(inc), si = std::sin(inc);
    const double dvr_dR = (v1 - v0) * inv_dr_, dvd_dR = (u1 - u0) * inv_dr_;
    const std::size_t n = group_->size();
    for (std::size_t i = 0; i < n; ++i) {
      const double de = group_->east[i] - ce, dn = group_->north[i] - cn;
      const double X = de * sp + dn * cp;
      const double y = de * cp - dn * sp;
      const double Y = y / ci;
      const double R = std::sqrt(X * X + Y * Y);
      const double s = group_->scale[i];
      if (R < 1e-12) {
        residuals[i] = (group_->velocity[i] - vsys) * s;
        if (jac)
          for (int b = 0; b < (radial_ ? 8 : 6); ++b)
            if (jac[b]) {
              const int w = b == 0 ? 2 : 1;
              for (int k = 0; k < w; ++k) jac[b][i * w + k] = (b == 3) ? -s : 0.0;
            }
        continue;
      }
      const double c = X / R, sn = Y / R;
      const double f = (R - r0_) * inv_dr_;
      const double vr = v0 + (v1 - v0) * f, vd = u0 + (u1 - u0) * f;
      const double m = vsys + si * (vr * c + vd * sn);
      residuals[i] = (group_->velocity[i] - m) * s;
      if (!jac) continue;
      // Derivative of m along (dX, dY) plus an extra term.
      auto dm = [&](double dX, double dY, double extra) {
        const double dR = (X * dX + Y * dY) / R;
        const double dc = (dX - c * dR) / R, dsn = (dY - sn * dR) / R;
        return si * (dvr_dR * dR * c + vr * dc + dvd_dR * dR * sn + vd * dsn) + extra;
      };
      if (jac[0]) {
        jac[0][2 * i] = -s * dm(-sp, -cp / ci, 0.0);
        jac[0][2 * i + 1] = -s * dm(-cp, sp / ci, 0.0);
      }
      if (jac[1]) jac[1][i] = -s * dm(y, -X / ci, 0.0);
      if (jac[2]) jac[2][i] = -s * dm(0.0, Y * si / ci, ci * (vr * c + vd * sn));
      if (jac[3]) jac[3][i] = -s;
      if (jac[4]) jac[4][i] = -s * si * c * (1.0 - f);
      if (jac[5]) jac[5][i] = -s * si * c * f;
      if (radial_) {
        if (jac[6]) jac[6][i] = -s * si * sn * (1.0 - f);
        if (jac[7]) jac[7][i] = -s * si * sn * f;
      }
    }
    return true;
  }

 private:
  const PixelGroup* group_;
  double r0_, inv_dr_;
  bool radial_;
};

// One ring with its own geometry (the ring-by-ring fit): constant vrot (and
// vrad) over the ring. Blocks: centre[2], pa[1], inc[1], vsys[1], vrot[1],
// vrad[1]; the caller holds vrad (and usually vsys) constant.
struct SingleRingResidual {
  explicit SingleRingResidual(const PixelGroup* group) : group_(group) {}

  template <typename T>
  bool operator()(const T* centre, const T* pa, const T* inc, const T* vsys, const T* vrot,
                  const T* vrad, T* residual) const {
    using std::cos;
    using std::sin;
    using std::sqrt;
    const T cos_pa = cos(pa[0]), sin_pa = sin(pa[0]);
    const T cos_inc = cos(inc[0]), sin_inc = sin(inc[0]);
    for (std::size_t i = 0; i < group_->size(); ++i) {
      T X, Y;
      disc_plane(T(group_->east[i]), T(group_->north[i]), centre[0], centre[1], cos_pa, sin_pa,
                 cos_inc, &X, &Y);
      const T R = sqrt(X * X + Y * Y);
      const T model = tilted_ring_velocity(X, Y, R, sin_inc, vsys[0], vrot[0], vrad[0]);
      residual[i] = (group_->velocity[i] - model) * group_->scale[i];
    }
    return true;
  }

 private:
  const PixelGroup* group_;
};

}  // namespace fulcrum::kinematics
