#include "fulcrum/core/version.hpp"

#include <ceres/version.h>
#include <fitsio.h>
#include <wcslib/wcs.h>

#include <Eigen/Core>
#include <nlohmann/json.hpp>
#include <toml++/toml.h>

namespace fulcrum {

std::string version_string() { return FULCRUM_VERSION; }

nlohmann::json software_info() {
  float cfitsio_version = 0;
  fits_get_version(&cfitsio_version);
  const char* wv = wcslib_version(nullptr);
  nlohmann::json j;
  j["name"] = "fulcrum";
  j["version"] = FULCRUM_VERSION;
  j["build_type"] = FULCRUM_BUILD_TYPE;
#if defined(__clang__)
  j["compiler"] = std::string("clang ") + __clang_version__;
#elif defined(__GNUC__)
  j["compiler"] = std::string("gcc ") + __VERSION__;
#endif
  char buf[32];
  std::snprintf(buf, sizeof buf, "%.3f", cfitsio_version);
  j["libraries"] = {
      {"cfitsio", buf},
      {"wcslib", wv ? wv : "unknown"},
      {"ceres", CERES_VERSION_STRING},
      {"eigen", std::to_string(EIGEN_WORLD_VERSION) + "." + std::to_string(EIGEN_MAJOR_VERSION) +
                    "." + std::to_string(EIGEN_MINOR_VERSION)},
      {"nlohmann_json", std::to_string(NLOHMANN_JSON_VERSION_MAJOR) + "." +
                            std::to_string(NLOHMANN_JSON_VERSION_MINOR) + "." +
                            std::to_string(NLOHMANN_JSON_VERSION_PATCH)},
      {"tomlplusplus", std::to_string(TOML_LIB_MAJOR) + "." + std::to_string(TOML_LIB_MINOR) + "." +
                           std::to_string(TOML_LIB_PATCH)},
  };
  return j;
}

}  // namespace fulcrum
