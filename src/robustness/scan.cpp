// Scan of A over centre offsets x split angles through the projection engine,
// and its FITS cube (see the header).
#include "fulcrum/robustness/scan.hpp"

#include <chrono>
#include <cmath>
#include <cstdio>
#include <optional>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/settings_check.hpp"
#include "fulcrum/core/work_limit.hpp"
#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/robustness/flip_distance.hpp"
#include "fulcrum/split/profile_table.hpp"

namespace fulcrum::robustness {

using split::ProjectionEngine;

namespace {
// Kept pixels per grid read up to which an angle's reads go through a profile
// table: tools/bench_scan (101^2 reads per angle) found the table faster at
// 7 kept pixels per read (1024^2 map), slower at 14 (2048^2), even near 9
// (docs/performance.md, "The scan"). The scan compares it with the tiles'
// estimate (ProfileTable::expected_pixels), before building either.
constexpr double kTabulatedPixelsPerRead = 8.0;

std::vector<double> axis(double centre, double half, double step) {
  const long long m = static_cast<long long>(std::floor(half / step + 1e-9));
  std::vector<double> v;
  for (long long k = -m; k <= m; ++k) v.push_back(centre + k * step);
  return v;
}
// Points along one axis of half-width `half` and spacing `step`, as a double
// (never overflows): what axis() would make.
double axis_length(double half, double step) { return 2.0 * std::floor(half / step + 1e-9) + 1.0; }

}  // namespace

void check_scan_size(const ScanOptions& o) {
  check_positive("step_arcsec", o.step_arcsec, "arcsec");
  check_non_negative("half_width_arcsec", o.half_width_arcsec, "arcsec");
  check_finite_in_range("angle_half_width_deg", o.angle_half_width_deg, 0.0, 180.0, "degrees");
  if (o.angle_half_width_deg > 0.0) check_positive("angle_step_deg", o.angle_step_deg, "degrees");
  const double n_side = axis_length(o.half_width_arcsec, o.step_arcsec);
  const double offsets = n_side * n_side;
  const double angles = o.angle_half_width_deg > 0.0 ? axis_length(o.angle_half_width_deg, o.angle_step_deg) : 1.0;
  const double points = offsets * angles;
  if (points <= kMaxScanPoints) return;
  // Name the setting that makes the grid big: the angle step when the
  // angles outnumber the centre offsets, else the centre step.
  const bool angle_heavy = angles > offsets;
  const std::string detail = estimate_text(offsets) + " centre offsets x " + estimate_text(angles) + " angles";
  const std::string what = "the scan grid (" + estimate_text(8.0 * kMaxScanPoints) + " bytes)";
  if (angle_heavy)
    check_work_limit("angle_step_deg", setting_value_text(o.angle_step_deg), what, points, kMaxScanPoints, "points",
                     detail);
  check_work_limit("step_arcsec", setting_value_text(o.step_arcsec), what, points, kMaxScanPoints, "points", detail);
}

ScanSummary scan(const split::SplitProblem& pr, const ScanOptions& o) {
  check_scan_size(o);
  const auto t0 = std::chrono::steady_clock::now();
  ScanSummary S;
  S.reference = pr.reference;
  S.centre = o.centre;
  S.step_arcsec = o.step_arcsec;
  S.angle_step_deg = o.angle_half_width_deg > 0.0 ? o.angle_step_deg : 0.0;
  S.east = axis(o.centre.east, o.half_width_arcsec, o.step_arcsec);
  S.north = axis(o.centre.north, o.half_width_arcsec, o.step_arcsec);
  S.angles = o.angle_half_width_deg > 0.0 ? axis(o.tail_pa_deg, o.angle_half_width_deg, o.angle_step_deg)
                                          : std::vector<double>{o.tail_pa_deg};
  S.n_east = static_cast<int>(S.east.size());
  S.n_north = static_cast<int>(S.north.size());
  S.n_angle = static_cast<int>(S.angles.size());
  const std::size_t plane = static_cast<std::size_t>(S.n_east) * S.n_north;
  S.asymmetry.assign(plane * S.n_angle, 0.0);
  S.per_angle.resize(S.n_angle);
  const long long na = S.n_angle;
  std::vector<std::size_t> positive(S.n_angle, 0);
  // One engine for the grid's window and one for the widened search per
  // thread, rebuilt in place for every angle (with the thread's scratch), so
  // that buffers are allocated once per thread instead of once per angle.
#pragma omp parallel
  {
    ProjectionEngine e, e2;
    split::EngineScratch scratch;
    split::ProfileTable table;
    std::vector<double> s_grid(plane), t_grid(plane);  // s and F(s) of one angle's grid
#pragma omp for schedule(dynamic, 1)
    for (long long ia = 0; ia < na; ++ia) {
      // The s-range of this angle's grid: the window of the engine.
      const SkyOffset n = split::leading_normal(S.angles[ia] * degrees);
      double smin = 1e300, smax = -1e300;
      for (double ce : {S.east.front(), S.east.back()})
        for (double cn : {S.north.front(), S.north.back()}) {
          const double sc = n.east * ce + n.north * cn;
          smin = std::min(smin, sc);
          smax = std::max(smax, sc);
        }
      // The grid's reads: through a profile table when the window keeps few
      // pixels per read (tabulating costs a few operations per kept pixel,
      // then saves half of every read), else through a windowed engine.
      const Angle pa = S.angles[ia] * degrees;
      const bool tabulate =
          split::ProfileTable::expected_pixels(pr.pixels, pa, smin, smax) <= kTabulatedPixelsPerRead * double(plane);
      if (tabulate) {
        table.rebuild(pr.pixels, pa, smin, smax, 0);
      } else {
        split::EngineOptions eo;
        eo.with_variance = false;
        eo.window_lo = smin;
        eo.window_hi = smax;
        e.rebuild(pr.pixels, pa, eo, &scratch);
      }
      const double Stot = tabulate ? table.total() : e.total(0);
      double* out = &S.asymmetry[plane * ia];
      for (int in = 0; in < S.n_north; ++in)
        for (int ie = 0; ie < S.n_east; ++ie)
          s_grid[ie + static_cast<std::size_t>(S.n_east) * in] = n.east * S.east[ie] + n.north * S.north[in];
      if (tabulate)
        table.trailing_many(s_grid, t_grid);
      else
        for (std::size_t q = 0; q < plane; ++q) t_grid[q] = e.trailing(s_grid[q], 0);
      std::size_t pos = 0;
      for (std::size_t q = 0; q < plane; ++q) {
        const double a = (Stot - 2.0 * t_grid[q]) / Stot;
        out[q] = a;
        pos += a > 0.0 ? 1 : 0;
      }
      positive[ia] = pos;
      ScanAngleSummary& as = S.per_angle[ia];
      as.tail_pa_deg = wrap_pa_deg(S.angles[ia]);
      as.fraction_positive = double(pos) / double(plane);
      as.line_pa_deg = std::fmod(wrap_pa_deg(S.angles[ia] + 90.0), 180.0);
      const double s0 = n.east * o.centre.east + n.north * o.centre.north;
      std::optional<double> z = tabulate ? nearest_zero(table, s0) : nearest_zero(e, s0);
      const double w1 = tabulate ? table.shape().w1 : e.shape().w1;
      const double s_lo = tabulate ? table.s_min() : e.s_min(), s_hi = tabulate ? table.s_max() : e.s_max();
      as.zero_exact = true;
      // Outside the grid: widen the window about s0 (doubling) until a zero
      // is found or the window covers the whole map; exact every time.
      for (double X = 2.0 * std::max(smax - s0, s0 - smin) + 4.0 * w1; !z && (s0 - X / 2 > s_lo || s0 + X / 2 < s_hi);
           X *= 2.0) {
        split::EngineOptions wide;
        wide.with_variance = false;
        wide.window_lo = s0 - X;
        wide.window_hi = s0 + X;
        e2.rebuild(pr.pixels, S.angles[ia] * degrees, wide, &scratch);
        z = nearest_zero(e2, s0);
      }
      if (z) {
        as.zero_found = true;
        as.s_zero = *z;
        as.line_distance_arcsec = std::abs(*z - s0);
        as.line_direction_pa_deg = wrap_pa_deg(S.angles[ia] + (*z >= s0 ? 180.0 : 0.0));
        as.line_inside_grid = *z >= smin && *z <= smax;
      }
    }
  }
  std::size_t pos = 0;
  for (auto p : positive) pos += p;
  S.fraction_positive = double(pos) / double(plane * S.n_angle);
  S.evaluations = plane * S.n_angle;
  S.engine_builds = S.n_angle;
  S.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
  return S;
}

namespace {
std::string card(const std::string& key, const std::string& value, const std::string& comment) {
  char buf[81];
  std::snprintf(buf, sizeof buf, "%-8.8s= %20s / %-47.47s", key.c_str(), value.c_str(),
                comment.c_str());
  std::string c(buf);
  c.resize(80, ' ');
  return c;
}
std::string num_card(const std::string& key, double v, const std::string& comment) {
  char b[32];
  std::snprintf(b, sizeof b, "%.15G", v);
  return card(key, b, comment);
}
std::string str_card(const std::string& key, const std::string& v, const std::string& comment) {
  std::string q = "'" + v + "'";
  char buf[81];
  std::snprintf(buf, sizeof buf, "%-8.8s= %-20s / %-47.47s", key.c_str(), q.c_str(), comment.c_str());
  std::string c(buf);
  c.resize(80, ' ');
  return c;
}
}  // namespace

void write_scan_cube(const std::string& path, const ScanSummary& S, const std::string& note) {
  Cube c;
  c.nx = S.n_east;
  c.ny = S.n_north;
  c.nz = S.n_angle;
  c.data = S.asymmetry;
  c.unit = "";
  // TAN about the reference: pixel (ie, in) -> intermediate (east, north) offset.
  const double step_deg = S.step_arcsec / 3600.0;
  const double cd[2][2] = {{step_deg, 0.0}, {0.0, step_deg}};
  const PixelCoord crpix{-S.east.front() / S.step_arcsec, -S.north.front() / S.step_arcsec};
  c.wcs = CelestialWcs::from_cd("TAN", crpix, S.reference, cd);
  std::string third;
  third += str_card("CTYPE3", "TAILPA", "trial tail position angle, north through east");
  third += str_card("CUNIT3", "deg", "");
  third += num_card("CRPIX3", 1.0, "");
  third += num_card("CRVAL3", S.angles.front(), "");
  third += num_card("CDELT3", S.n_angle > 1 ? S.angles[1] - S.angles[0] : 1.0, "");
  std::vector<HeaderCard> extra = {
      {"BTYPE", "asymmetry", "A = (L - T)/(L + T), leading minus trailing", false},
      {"SCANSTEP", std::to_string(S.step_arcsec), "centre offset step (arcsec)", true},
      {"FRACPOS", std::to_string(S.fraction_positive), "fraction of the cube with A > 0", true},
      {"AXIS1", "east offset of the trial centre (TAN WCS)", "", false},
      {"AXIS2", "north offset of the trial centre (TAN WCS)", "", false}};
  if (!note.empty()) extra.push_back({"SRCMAP", note, "map that was split", false});
  write_cube(path, c, third, extra);
}

nlohmann::json to_json(const ScanSummary& S) {
  nlohmann::json per = nlohmann::json::array();
  for (const auto& a : S.per_angle)
    per.push_back({{"tail_pa_deg", a.tail_pa_deg},
                   {"fraction_positive", a.fraction_positive},
                   {"zero_found", a.zero_found},
                   {"zero_line_distance_arcsec", a.zero_found ? nlohmann::json(a.line_distance_arcsec) : nlohmann::json()},
                   {"zero_line_direction_pa_deg", a.zero_found ? nlohmann::json(a.line_direction_pa_deg) : nlohmann::json()},
                   {"zero_line_pa_deg", a.line_pa_deg},
                   {"zero_line_inside_grid", a.line_inside_grid},
                   {"zero_exact", a.zero_exact},
                   {"zero_s_arcsec", a.zero_found ? nlohmann::json(a.s_zero) : nlohmann::json()}});
  return {{"n_east", S.n_east},
          {"n_north", S.n_north},
          {"n_angle", S.n_angle},
          {"step_arcsec", S.step_arcsec},
          {"angle_step_deg", S.angle_step_deg},
          {"east_min_arcsec", S.east.front()},
          {"east_max_arcsec", S.east.back()},
          {"north_min_arcsec", S.north.front()},
          {"north_max_arcsec", S.north.back()},
          {"angle_min_deg", S.angles.front()},
          {"angle_max_deg", S.angles.back()},
          {"reference_ra_deg", S.reference.ra_deg},
          {"reference_dec_deg", S.reference.dec_deg},
          {"fraction_positive", S.fraction_positive},
          {"evaluations", S.evaluations},
          {"engine_builds", S.engine_builds},
          {"seconds", S.seconds},
          {"per_angle", per}};
}

}  // namespace fulcrum::robustness
