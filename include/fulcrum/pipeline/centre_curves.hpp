// A as curves, for replotting: for every successful centre estimate,
//   * A against the split angle: the tail PA stepped over +-90 deg about the
//     nominal one (every 2 deg), the halves split about that centre;
//   * A against the offset of the centre along the leading direction (the
//     direction opposite the tail), from -3 to +3 beam FWHM in steps of
//     0.1 beam, at the nominal tail PA.
// Each point has A and its 1-sigma map-noise error (split/half_split.hpp).
// Written beside the figures as ECSV tables (one row per point, units in the
// header): figures/asymmetry_vs_angle.ecsv and
// figures/asymmetry_vs_offset.ecsv.
#pragma once

#include "fulcrum/pipeline/galaxy_summary.hpp"
#include "fulcrum/report/table.hpp"

namespace fulcrum::pipeline {

struct CentreCurves {
  report::Table versus_angle, versus_offset;
};

// Empty tables (no rows) when the galaxy has no robustness result.
CentreCurves centre_curves(const GalaxySummary& s);

}  // namespace fulcrum::pipeline
