// Scan: the asymmetry A over a grid of centre offsets x split angles.
//
// Units and conventions: offsets (east, north) arcsec about the problem's
// reference centre (plus `centre`), angles are tail PAs in degrees. The grid
// is east_k = centre.east + (k - (n-1)/2) step, same for north, angles
// tail_pa + (m - (na-1)/2) angle_step. Every angle costs one build (one
// pass over the pixels near the grid's window); every grid point is then one
// read: through a profile table (split/profile_table.hpp, the engine's sums
// up to rounding) while the window keeps at most 8 pixels per grid point
// (estimated from the tiles), else through a windowed projection engine.
//
// The FITS cube (write_scan_cube) has axis 1 = east offset, axis 2 = north
// offset, axis 3 = split angle. Axes 1-2 carry a TAN celestial WCS with CRVAL
// at the reference and CD = diag(+step, +step)/3600: TAN intermediate
// coordinates are exactly the gnomonic (east, north) offsets used here, so each
// cube pixel's world position is the trial centre itself (the +x axis points
// east, so the grid has the mirrored parity: east to the right). Axis 3 is a
// linear axis CTYPE3 = 'TAILPA', CUNIT3 = 'deg'.
//
// Each angle's table or engine is built with the window of s covered by the
// grid (projection_engine.hpp), so only pixels near the grid's lines are
// binned.
// The zero-crossing line nearest the grid centre is found on the same reads;
// when it lies outside the grid's s-range the window is widened (doubling)
// until it is found.
#pragma once

#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "fulcrum/split/half_split.hpp"

namespace fulcrum::robustness {

struct ScanOptions {
  double tail_pa_deg = 0.0;
  double half_width_arcsec = 2.0;
  double step_arcsec = 0.2;
  double angle_half_width_deg = 0.0;
  double angle_step_deg = 1.0;
  SkyOffset centre;  // grid centre in the problem's frame
};

struct ScanAngleSummary {
  double tail_pa_deg = 0.0;
  double fraction_positive = 0.0;  // of the offset grid at this angle
  // The zero-crossing line {c : n.c = s_zero}: nearest zero to the grid centre.
  bool zero_found = false;
  double s_zero = 0.0;                 // arcsec along n from the reference
  double line_distance_arcsec = 0.0;   // from the grid centre to the line
  double line_direction_pa_deg = 0.0;  // PA from the grid centre towards the line
  double line_pa_deg = 0.0;            // PA along which the line runs (tail PA + 90, in [0,180))
  bool line_inside_grid = false;
  bool zero_exact = true;  // always true: kept for readers of the JSON
};

struct ScanSummary {
  int n_east = 0, n_north = 0, n_angle = 0;
  std::vector<double> east, north, angles;  // axis values
  std::vector<double> asymmetry;            // [ie + ne*(in + nn*ia)]
  double fraction_positive = 0.0;           // over the whole cube
  std::vector<ScanAngleSummary> per_angle;
  std::size_t evaluations = 0;              // engine reads
  std::size_t engine_builds = 0;
  double seconds = 0.0;                     // wall time of the scan
  WorldCoord reference;
  SkyOffset centre;
  double step_arcsec = 0.0, angle_step_deg = 0.0;
  double at(int ie, int in, int ia) const {
    return asymmetry[static_cast<std::size_t>(ie) +
                     static_cast<std::size_t>(n_east) * (in + static_cast<std::size_t>(n_north) * ia)];
  }
};

// The most points a scan grid may hold (centre offsets x angles): 1e8
// doubles, 0.8 GB (core/work_limit.hpp).
inline constexpr double kMaxScanPoints = 1e8;
// Checks the steps and widths and the grid's size from the settings alone,
// before anything is allocated: SettingError naming the setting, the
// estimate and the limit.
void check_scan_size(const ScanOptions& options);
// Throws SettingError as check_scan_size does.
ScanSummary scan(const split::SplitProblem& problem, const ScanOptions& options);
void write_scan_cube(const std::string& path, const ScanSummary& scan,
                     const std::string& map_unit_note = "");
nlohmann::json to_json(const ScanSummary& s);

}  // namespace fulcrum::robustness
