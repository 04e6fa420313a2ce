// Version and build information, for --version and the provenance block of
// every report.
#pragma once

#include <nlohmann/json.hpp>
#include <string>

namespace fulcrum {

std::string version_string();
// {"version", "build_type", "compiler", "libraries": {cfitsio, wcslib, ceres, eigen, ...}}
nlohmann::json software_info();

}  // namespace fulcrum
