// Shared argument parsing for `fulcrum split` and `fulcrum scan`: centre
// "RA_DEG,DEC_DEG", the aperture options, and output-path checks.
#pragma once

#include <CLI/CLI.hpp>
#include <filesystem>
#include <optional>
#include <string>

#include "fulcrum/core/error.hpp"
#include "fulcrum/split/centre_on_map.hpp"
#include "fulcrum/split/half_split.hpp"
#include "subcommand.hpp"

namespace fulcrum::cli {

inline WorldCoord parse_centre(const std::string& s) {
  const auto comma = s.find(',');
  if (comma == std::string::npos)
    throw InputError("", "--centre must be RA_DEG,DEC_DEG (got '" + s + "')");
  try {
    std::size_t p1 = 0, p2 = 0;
    const std::string a = s.substr(0, comma), b = s.substr(comma + 1);
    const double ra = std::stod(a, &p1), dec = std::stod(b, &p2);
    if (p1 != a.size() || p2 != b.size()) throw std::invalid_argument("trailing text");
    if (!(dec >= -90.0 && dec <= 90.0) || !std::isfinite(ra))
      throw InputError("", "--centre declination must be in [-90, 90] (got '" + s + "')");
    return {ra, dec};
  } catch (const std::logic_error&) {
    throw InputError("", "--centre must be RA_DEG,DEC_DEG in degrees (got '" + s + "')");
  }
}

// The centre must fall on the map (within half a pixel of its edge).
inline void check_centre_on_map(const Image& map, WorldCoord c, const std::string& text) {
  if (!split::centre_on_map(map, c)) throw InputError("", "--centre " + text + " is outside the map " + map.path);
}

struct ApertureArgs {
  double radius = 0.0;
  double pa = 0.0;
  double q = 1.0;
  void add(CLI::App* cmd) {
    cmd->add_option("--aperture-radius", radius,
                    "Analysis aperture semi-major axis (arcsec), centred on --centre; default: "
                    "all finite pixels");
    cmd->add_option("--aperture-pa", pa, "Aperture major-axis PA (deg, north through east)");
    cmd->add_option("--aperture-axis-ratio", q, "Aperture axis ratio b/a in (0, 1]");
  }
  std::optional<split::ApertureSpec> spec() const {
    if (radius == 0.0) return std::nullopt;
    return split::ApertureSpec{radius, pa, q, std::nullopt};
  }
};

// Refuse to overwrite an existing output unless --force.
inline void check_output(const std::string& path) {
  if (path.empty()) return;
  if (std::filesystem::exists(path) && !global_flags().force)
    throw InputError(path, "exists; use --force to overwrite it");
}

}  // namespace fulcrum::cli
