// The per-ring table of a kinematic fit: its columns, and the CSV whose
// header row carries the unit of each column ("name [unit]"). The ECSV
// (astropy's Enhanced Character-Separated Values 1.0, with units and
// descriptions) is written by the project's one table writer:
// report::write_ecsv(path, report::ring_table(fit)) (report/ring_table.hpp).
//
// One row per ring node of the global fit: radius, the global rotation (and
// radial) speed, the ring-by-ring geometry (centre offsets east/north in
// arcsec from the reference and as RA/Dec, PA, inclination, their errors)
// and the harmonic coefficients c0..s3 with errors. Missing values (a ring
// that could not be fitted) are written as "nan" in ECSV and left empty in
// CSV. Files are written atomically.
#pragma once

#include <string>
#include <vector>

#include "fulcrum/kinematics/kinematic_fit.hpp"

namespace fulcrum::kinematics {

struct RingColumn {
  std::string name, unit, description;
  bool integer = false;
  std::vector<double> values;
};

std::vector<RingColumn> ring_table_columns(const KinematicFit& fit);

void write_ring_table_csv(const std::string& path, const KinematicFit& fit);

}  // namespace fulcrum::kinematics
