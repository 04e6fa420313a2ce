// The functions of the Python module, by group (src/python/module.cpp).
#pragma once

#include <pybind11/pybind11.h>

namespace fulcrum::python {

// kinematics, photometry, split, scan: one map (or two) in, one result out.
void bind_map_functions(pybind11::module_& m);
// analyse, calibrate, read_results and the Summary they return.
void bind_galaxy_functions(pybind11::module_& m);

}  // namespace fulcrum::python
