// `fulcrum inspect`: describe a FITS file for a person.
#include "fulcrum/imaging/inspect.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <sstream>

#include "fulcrum/sky/angle.hpp"
#include "fulcrum/core/error.hpp"
#include "fulcrum/core/number_text.hpp"
#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/io/missing_values.hpp"
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

double quantile_of(std::vector<double> v, double q) {
  const std::size_t k = std::min(v.size() - 1, static_cast<std::size_t>(q * (v.size() - 1) + 0.5));
  std::nth_element(v.begin(), v.begin() + static_cast<std::ptrdiff_t>(k), v.end());
  return v[k];
}

// Words in a file name that mark an error map: "err", "sigma", "unc",
// "noise", "rms", or a name part that is 'e' before a product word
// ("evel", "emom0", "evcen"). A hint only: the values decide with it.
std::string error_name_hint(const std::string& path) {
  std::string base = lower(path.substr(path.find_last_of('/') + 1));
  std::vector<std::string> parts{""};
  for (char c : base) {
    if (c == '.' || c == '_' || c == '-' || c == ' ') parts.emplace_back();
    else parts.back() += c;
  }
  for (const auto& p : parts) {
    for (const char* w : {"err", "sigma", "unc", "noise", "rms"})
      if (p.find(w) != std::string::npos) return "the file name has '" + p + "'";
    for (const char* w : {"vel", "vcen", "mom", "gauss", "peak", "pk", "int", "flux"})
      if (p.size() > 1 && p[0] == 'e' && p.compare(1, std::string(w).size(), w) == 0)
        return "the file name has '" + p + "' (e for error)";
  }
  return "";
}

bool is_velocity_unit(const std::string& unit) {
  const std::string u = lower(unit);
  return u == "km/s" || u == "km s-1" || u == "m/s" || u == "m s-1";
}

// Why a map looks like an error map, or "" when it does not. BTYPE naming an
// error decides. Otherwise the values: an error map is non-negative with a
// long upper tail (the 99th percentile lies more than 5 times further above
// the median than the 1st percentile lies below it), while a velocity field
// is roughly symmetric about its systemic velocity. For a map in velocity
// units that shape decides alone; a line map can have it too (a bright
// nucleus), so there a file-name hint must agree. Thresholds are our own.
std::string error_map_reason(const std::string& path, const std::string& header,
                             const std::string& unit, const std::vector<double>& data) {
  const std::string btype = lower(header_value(header, "BTYPE").value_or(""));
  for (const char* w : {"error", "uncert", "sigma", "noise"})
    if (btype.find(w) != std::string::npos) return "BTYPE is '" + btype + "'";
  std::vector<double> v;
  for (double x : data)
    if (std::isfinite(x)) v.push_back(x);
  if (v.size() < 10 || *std::min_element(v.begin(), v.end()) < 0) return "";
  const double lo = quantile_of(v, 0.01), med = quantile_of(v, 0.5), hi = quantile_of(v, 0.99);
  const bool long_tail = hi - med > 5.0 * (med - lo);
  const std::string hint = error_name_hint(path);
  const std::string shape = "its values are all non-negative with a long upper tail (median " +
                            significant_text(med, 4) + ", 99th percentile " + significant_text(hi, 4) + ")";
  if (is_velocity_unit(unit)) return long_tail ? shape + (hint.empty() ? "" : "; " + hint) : "";
  if (!hint.empty() && long_tail) return shape + "; " + hint;
  return "";
}

std::vector<std::string> uses_for_map(const std::string& unit, bool has_beam, const nlohmann::json& st,
                                      const std::string& error_reason) {
  std::vector<std::string> uses;
  const std::string u = lower(unit);
  if (!error_reason.empty() && st.contains("min")) {
    const bool vel = is_velocity_unit(u);
    return {std::string(vel ? "velocity error map (--velocity-error)"
                            : "intensity error map (--intensity-error)") +
            ", not a " + (vel ? "velocity field" : "line map") + ": " + error_reason};
  }
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


}  // namespace

nlohmann::json inspect_fits(const std::string& path) {
  nlohmann::json j;
  j["file"] = path;
  Image img;
  bool is_cube = false;
  Cube cube;
  MissingValueCounts missing;
  try {
    img = read_image_counted(path, missing);
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
  if (!is_cube) {
    nlohmann::json m = {{"not_a_number", missing.not_a_number},
                        {"infinite", missing.infinite},
                        {"absurd_ge_1e30", missing.absurd},
                        {"blank_value", nullptr},
                        {"blank_pixels", missing.blank}};
    if (missing.blank_value) m["blank_value"] = *missing.blank_value;
    j["missing"] = m;
  }
  if (is_cube) {
    j["channels"] = cube.nz;
    j["uses"] = {"spectral-line cube (--cube, `fulcrum moments`)"};
  } else {
    const std::string why = error_map_reason(path, img.header, img.unit, img.data);
    j["looks_like_error_map"] = !why.empty();
    j["uses"] = uses_for_map(img.unit, img.beam.has_value(), j["values"], why);
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
  line("orientation", "+y pixel axis points to PA " + fixed_text(j["pa_of_plus_y_deg"].get<double>(), 3) +
                          " deg, +x to PA " + fixed_text(j["pa_of_plus_x_deg"].get<double>(), 3) + " deg (" +
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
                     " arcsec FWHM, PA " + fixed_text(b["bpa_deg"].get<double>(), 1) + " deg; " +
                     significant_text(b["solid_angle_arcsec2"].get<double>(), 4) + " arcsec^2 = " +
                     significant_text(b["pixels_per_beam"].get<double>(), 4) + " pixels per beam");
  }
  line("unit", j["unit"].get<std::string>().empty() ? "(no BUNIT)" : j["unit"].get<std::string>());
  if (j.contains("channels")) line("channels", std::to_string(j["channels"].get<int>()));
  const auto& v = j["values"];
  line("finite pixels", std::to_string(v["finite_pixels"].get<std::size_t>()) + " of " +
                            std::to_string(v["pixels"].get<std::size_t>()));
  if (j.contains("missing")) {
    const auto& m = j["missing"];
    std::string t = std::to_string(m["not_a_number"].get<std::size_t>()) + " NaN";
    if (!m["blank_value"].is_null())
      t += ", " + std::to_string(m["blank_pixels"].get<std::size_t>()) + " equal to BLANK = " +
           significant_text(m["blank_value"].get<double>(), 9) + " (honoured on floats)";
    t += ", " + std::to_string(m["infinite"].get<std::size_t>()) + " infinite, " +
         std::to_string(m["absurd_ge_1e30"].get<std::size_t>()) + " with |value| >= 1e30";
    line("missing pixels", t);
  }
  if (v.contains("min"))
    line("values", "min " + significant_text(v["min"].get<double>(), 4) + ", median " + significant_text(v["median"].get<double>(), 4) +
                       ", max " + significant_text(v["max"].get<double>(), 4));
  for (const auto& u : j["uses"]) line("use as", u.get<std::string>());
  return os.str();
}

}  // namespace fulcrum
