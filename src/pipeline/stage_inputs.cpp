// The inputs stage: read every map of one galaxy once (see
// include/fulcrum/pipeline/galaxy_stages.hpp).
#include <cctype>
#include <filesystem>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/log.hpp"
#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/pipeline/galaxy_stages.hpp"

namespace fulcrum::pipeline {

namespace {

// The line map's BUNIT: a velocity unit means a velocity map was given as the
// line map (refused); none means its pixels are summed as they are, which is
// right only for per-pixel units (a warning).
void check_intensity_unit(const Image& map, const std::string& path) {
  std::string u;
  for (char c : map.unit)
    if (!std::isspace(static_cast<unsigned char>(c))) u += static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  if (u == "km/s" || u == "m/s" || u == "kms-1" || u == "ms-1" || u == "km.s-1" || u == "m.s-1" || u == "km/sec")
    throw InputError(path, "BUNIT is '" + map.unit + "', a velocity unit: this is a velocity map, not a line "
                           "intensity map (expected e.g. Jy/beam.km/s or K.km/s)");
  if (u.empty())
    warn(path + ": no BUNIT: the line map's pixels are summed as they are (per pixel); if it is in Jy/beam.km/s "
                "add BUNIT (and BMAJ/BMIN) so that fluxes are right");
}

}  // namespace

GalaxyMaps load_galaxy_maps(const GalaxyInput& in) {
  GalaxyMaps m;
  auto optional_map = [](const std::string& path, std::optional<Image>& into) {
    if (!path.empty()) into = read_image(path);
  };
  m.velocity = read_image(in.velocity);
  m.intensity = read_image(in.intensity);
  optional_map(in.velocity_error, m.velocity_error);
  optional_map(in.intensity_error, m.intensity_error);
  optional_map(in.optical, m.optical);
  optional_map(in.optical_mask, m.optical_mask);
  optional_map(in.tail_image, m.tail_image);
  check_galaxy_maps(in, m);
  check_intensity_unit(*m.intensity, in.intensity);
  if (!in.cube.empty()) {
    // Maps made from a cube live in the galaxy's own folder (OUT/moments/):
    // name them relative to it in everything the report says, so that the
    // report does not depend on where the folder is.
    for (auto* map : {&m.velocity, &m.velocity_error, &m.intensity, &m.intensity_error})
      if (*map) (*map)->path = (std::filesystem::path("moments") / std::filesystem::path((*map)->path).filename()).string();
  }
  return m;
}


void check_galaxy_maps(const GalaxyInput& in, const GalaxyMaps& m) {
  FULCRUM_CHECK(m.velocity && m.intensity, "velocity and intensity maps", "a map missing");
  if (m.intensity_error && (m.intensity_error->nx != m.intensity->nx || m.intensity_error->ny != m.intensity->ny))
    throw InputError(in.intensity_error, "is not on the grid of the intensity map " + in.intensity);
}

}  // namespace fulcrum::pipeline
