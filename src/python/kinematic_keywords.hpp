// The kinematic-fit settings (kinematics/kinematic_settings.hpp) from Python
// keyword arguments or a dict, by the names a sample manifest's `kinematics`
// table uses; checked by kinematic_settings_problem, as the manifest is.
#pragma once

#include <pybind11/pybind11.h>

#include <string>

#include "fulcrum/kinematics/kinematic_settings.hpp"

namespace fulcrum::python {

// Unknown names are a TypeError listing the known ones; a value of the
// wrong type is a SettingError; a combination the fit cannot take is an
// InputError with the library's problem text.
kinematics::KinematicSettings kinematic_settings_from(const pybind11::handle& settings);

// How settings are named in the library's messages for Python: 'pa_err'.
std::string quoted_setting(const std::string& name);

}  // namespace fulcrum::python
