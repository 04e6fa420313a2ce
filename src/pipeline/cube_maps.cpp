// The maps of one galaxy made from its line cube (see
// include/fulcrum/pipeline/cube_maps.hpp).
#include "fulcrum/pipeline/cube_maps.hpp"

#include <filesystem>

#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/moments/moment_maps.hpp"

namespace fulcrum::pipeline {

GalaxyInput make_maps_from_cube(const GalaxyInput& input, const std::string& galaxy_dir) {
  if (input.cube.empty()) return input;
  namespace fs = std::filesystem;
  const MomentOptions options = resolve_moment_settings(input.moments, option_name);
  const Cube cube = read_cube(input.cube);
  const MomentProducts products = make_moment_maps(cube, options);  // all checks before anything is written
  const fs::path dir = fs::path(galaxy_dir) / kMomentsFolder;
  write_moment_maps(dir.string(), products, input.cube);
  GalaxyInput out = input;
  out.velocity = (dir / "mom1.fits").string();
  out.velocity_error = (dir / "mom1_err.fits").string();
  out.intensity = (dir / "mom0.fits").string();
  out.intensity_error = (dir / "mom0_err.fits").string();
  out.rms.reset();
  return out;
}

}  // namespace fulcrum::pipeline
