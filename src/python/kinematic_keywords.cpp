// Kinematic-fit settings from Python keywords (src/python/kinematic_keywords.hpp).
#include "kinematic_keywords.hpp"

#include "convert.hpp"
#include "fulcrum/core/error.hpp"
#include "fulcrum/core/settings_check.hpp"

namespace fulcrum::python {

std::string quoted_setting(const std::string& name) { return "'" + name + "'"; }

kinematics::KinematicSettings kinematic_settings_from(const py::handle& given) {
  kinematics::KinematicSettings s;
  if (given.is_none()) return s;
  if (!py::isinstance<py::dict>(given))
    throw SettingError("kinematics", std::string(py::repr(given)), "a dict of kinematic settings, e.g. {'pa': 36.0}");
  auto settings = kinematics::kinematic_settings(s);
  for (auto item : py::reinterpret_borrow<py::dict>(given)) {
    const std::string key = py::str(item.first);
    kinematics::KinematicSetting* found = nullptr;
    for (auto& k : settings)
      if (k.name == key) found = &k;
    if (!found) {
      std::string known;
      for (const auto& k : settings) known += (known.empty() ? "" : ", ") + k.name;
      throw py::type_error("unknown kinematic setting '" + key + "' (known: " + known + ")");
    }
    if (auto* flag = std::get_if<bool*>(&found->target)) {
      if (!py::isinstance<py::bool_>(item.second))
        throw SettingError(key, std::string(py::repr(item.second)), "True or False");
      **flag = item.second.cast<bool>();
    } else if (auto* number = std::get_if<std::optional<double>*>(&found->target)) {
      if (!item.second.is_none()) **number = number_argument(item.second, key);
    } else if (auto* text = std::get_if<std::string*>(&found->target)) {
      **text = text_argument(item.second, key);
    }
  }
  if (const std::string problem = kinematics::kinematic_settings_problem(s, quoted_setting); !problem.empty())
    throw InputError("", problem);
  return s;
}

}  // namespace fulcrum::python
