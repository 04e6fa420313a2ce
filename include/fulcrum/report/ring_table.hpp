// The per-ring table of a kinematic fit as a report Table, written by the
// project's one ECSV/CSV/FITS table writer (report/table.hpp: exact
// round-trip numbers, units and descriptions per column).
//
// Columns are kinematics::ring_table_columns (radius, rotation speed,
// ring-by-ring centre, PA, inclination, harmonic coefficients, with errors;
// units in astropy spelling, "km / s"); whole-number columns (pixel counts,
// the ring-fit flag) are int64. Missing values are NaN ("nan" in ECSV).
// The table meta carries the fit's source map, method, status, reference
// position (deg, shortest round-trip text) and the sign conventions.
#pragma once

#include "fulcrum/kinematics/kinematic_fit.hpp"
#include "fulcrum/report/table.hpp"

namespace fulcrum::report {

Table ring_table(const kinematics::KinematicFit& fit);

}  // namespace fulcrum::report
