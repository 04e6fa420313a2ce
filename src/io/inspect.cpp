// `fulcrum inspect`: describe a FITS file for a person.
#include "fulcrum/io/inspect.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <sstream>

#include "fulcrum/sky/angle.hpp"
#include "fulcrum/core/error.hpp"
#include "fulcrum/core/number_text.hpp"
#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/sky/pixel_offsets.hpp"

namespace fulcrum {

namespace {

std::string lower(std::string s) {
  std::transform(s.begin(), s.end(), s.begin(), [](unsigned char c) { return std::tolower(c); });
  return s;
}

nlohmann::json value_stats(const std::vector<double>& data) {
  std::vector<double> v;
  v.reserve(data.size());
  for (double x : data)
    if (std::isfinite(x)) v.push_back(x);
  nlohmann::json j;
  j["pixels"] = data.size();
  j["finite_pixels"] = v.size();
  if (v.empty()) return j;
  auto mid = v.begin() + static_cast<std::ptrdiff_t>(v.size() / 2);
  std::nth_element(v.begin(), mid, v.end());
  j["median"] = *mid;
  auto [mn, mx] = std::minmax_element(v.begin(), v.end());
  j["min"] = *mn;
  j["max"] = *mx;
  return j;
}

std::vector<std::string> uses_for_map(const std::string& unit, bool has_beam, const nlohmann::json& st) {
  std::vector<std::string> uses;
  const std::string u = lower(unit);
  const bool velocity_unit = u == "km/s" || u == "km s-1" || u == "m/s" || u == "m s-1";
  const bool line_unit = u.find("km") != std::string::npos &&
                         (u.find("jy") != std::string::npos || u.find("k ") == 0 || u == "k.km/s" ||
                          u.find("k km") == 0);
  if (velocity_unit)
    uses.push_back(std::string("velocity field (--velocity)") +
                   (u.rfind("m", 0) == 0 ? "; values in m/s are converted to km/s" : ""));
  else if (line_unit)
    uses.push_back("integrated-intensity map (--intensity) or its error map (--intensity-error)");
  else if (!has_beam)
    uses.push_back("optical image (--optical) or tail image (--tail-image)");
  else
    uses.push_back("map of unrecognised unit '" + unit + "': usable as --intensity (fluxes in map units)");
  if (!st.contains("min")) uses = {"nothing: the map has no finite pixels"};
  return uses;
}

std::string fixed(double v, int decimals) {
  char b[64];
  std::snprintf(b, sizeof b, "%.*f", decimals, std::abs(v) < 0.5 * std::pow(10.0, -decimals) ? 0.0 : v);
  return b;
}


}  // namespace

nlohmann::json inspect_fits(const std::string& path) {
  nlohmann::json j;
  j["file"] = path;
  Image img;
  bool is_cube = false;
  Cube cube;
  try {
    img = read_image(path);
  } catch (const InputError& e) {
    if (std::string(e.problem()).find("is this a cube") == std::string::npos) throw;
    cube = read_cube(path);
    is_cube = true;
  }
  const std::string& header = is_cube ? cube.header : img.header;
  const CelestialWcs& wcs = is_cube ? cube.wcs : img.wcs;
  const int nx = is_cube ? cube.nx : img.nx, ny = is_cube ? cube.ny : img.ny;
  j["kind"] = is_cube ? "cube" : "image";
  nlohmann::json axes = nlohmann::json::array();
  for (int k = 1; k <= 4; ++k) {
    auto n = header_value(header, "NAXIS" + std::to_string(k));
    if (!n) break;
    axes.push_back({{"length", std::stol(*n)},
                    {"ctype", header_value(header, "CTYPE" + std::to_string(k)).value_or("")}});
  }
  j["axes"] = axes;
  j["projection"] = wcs.projection();
  const PixelCoord centre{0.5 * (nx - 1), 0.5 * (ny - 1)};
  WorldCoord w = wcs.pixel_to_world(centre);
  j["centre_pixel_fits"] = {fits_pixel(centre.x), fits_pixel(centre.y)};
  j["centre_ra_deg"] = w.ra_deg;
  j["centre_dec_deg"] = w.dec_deg;
  GridOrientation g = grid_orientation(wcs, centre);
  j["pixel_scale_arcsec"] = {g.pixel_scale_x_arcsec, g.pixel_scale_y_arcsec};
  j["pa_of_plus_y_deg"] = g.north_pa_of_plus_y_deg;
  j["pa_of_plus_x_deg"] = g.pa_of_plus_x_deg;
  j["east_left_when_north_up"] = g.east_left_when_north_up;
  j["axis_skew_deg"] = g.skew_deg;
  const auto& beam = is_cube ? cube.beam : img.beam;
  if (beam) {
    const double pixarea = g.pixel_scale_x_arcsec * g.pixel_scale_y_arcsec *
                           Angle::from_degrees(g.skew_deg).cos();
    j["beam"] = {{"bmaj_arcsec", beam->bmaj_arcsec},
                 {"bmin_arcsec", beam->bmin_arcsec},
                 {"bpa_deg", beam->bpa_deg},
                 {"solid_angle_arcsec2", beam->solid_angle_arcsec2()},
                 {"pixels_per_beam", beam->pixels_per_beam(pixarea)}};
  } else {
    j["beam"] = nullptr;
  }
  j["unit"] = is_cube ? cube.unit : img.unit;
  j["values"] = value_stats(is_cube ? cube.data : img.data);
  if (is_cube) {
    j["channels"] = cube.nz;
    j["uses"] = {"spectral-line cube (--cube, `fulcrum moments`)"};
  } else {
    j["uses"] = uses_for_map(img.unit, img.beam.has_value(), j["values"]);
  }
  return j;
}

std::string format_inspection(const nlohmann::json& j) {
  std::ostringstream os;
  auto line = [&](const std::string& k, const std::string& v) {
    os << "  " << k << std::string(k.size() < 22 ? 22 - k.size() : 1, ' ') << v << "\n";
  };
  os << j["file"].get<std::string>() << "\n";
  std::string dims;
  for (const auto& a : j["axes"]) {
    if (!dims.empty()) dims += " x ";
    dims += std::to_string(a["length"].get<long>()) + " (" + a["ctype"].get<std::string>() + ")";
  }
  line("kind", j["kind"].get<std::string>());
  line("axes", dims);
  line("projection", j["projection"].get<std::string>());
  line("map centre", "RA " + significant_text(j["centre_ra_deg"].get<double>(), 10) + " deg, Dec " +
                         significant_text(j["centre_dec_deg"].get<double>(), 10) + " deg at FITS pixel (" +
                         significant_text(j["centre_pixel_fits"][0].get<double>(), 4) + ", " +
                         significant_text(j["centre_pixel_fits"][1].get<double>(), 4) + ")");
  line("pixel scale", significant_text(j["pixel_scale_arcsec"][0].get<double>(), 4) + " x " +
                          significant_text(j["pixel_scale_arcsec"][1].get<double>(), 4) + " arcsec");
  line("orientation", "+y pixel axis points to PA " + fixed(j["pa_of_plus_y_deg"].get<double>(), 3) +
                          " deg, +x to PA " + fixed(j["pa_of_plus_x_deg"].get<double>(), 3) + " deg (" +
                          (j["east_left_when_north_up"].get<bool>() ? "east left of north, as on the sky"
                                                                   : "mirrored: east right of north") +
                          ")");
  if (std::abs(j["axis_skew_deg"].get<double>()) > 1e-6)
    line("skew", significant_text(j["axis_skew_deg"].get<double>(), 4) + " deg from perpendicular");
  if (j["beam"].is_null()) {
    line("beam", "none in header (BMAJ/BMIN absent)");
  } else {
    const auto& b = j["beam"];
    line("beam", significant_text(b["bmaj_arcsec"].get<double>(), 4) + " x " + significant_text(b["bmin_arcsec"].get<double>(), 4) +
                     " arcsec FWHM, PA " + fixed(b["bpa_deg"].get<double>(), 1) + " deg; " +
                     significant_text(b["solid_angle_arcsec2"].get<double>(), 4) + " arcsec^2 = " +
                     significant_text(b["pixels_per_beam"].get<double>(), 4) + " pixels per beam");
  }
  line("unit", j["unit"].get<std::string>().empty() ? "(no BUNIT)" : j["unit"].get<std::string>());
  if (j.contains("channels")) line("channels", std::to_string(j["channels"].get<int>()));
  const auto& v = j["values"];
  line("finite pixels", std::to_string(v["finite_pixels"].get<std::size_t>()) + " of " +
                            std::to_string(v["pixels"].get<std::size_t>()));
  if (v.contains("min"))
    line("values", "min " + significant_text(v["min"].get<double>(), 4) + ", median " + significant_text(v["median"].get<double>(), 4) +
                       ", max " + significant_text(v["max"].get<double>(), 4));
  for (const auto& u : j["uses"]) line("use as", u.get<std::string>());
  return os.str();
}

}  // namespace fulcrum
