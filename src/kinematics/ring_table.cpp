// Per-ring table columns and their CSV (ring_table.hpp). ECSV goes through
// the project's one table writer (report/ring_table.hpp).
#include "fulcrum/kinematics/ring_table.hpp"

#include <cmath>
#include <cstdio>
#include <limits>
#include <sstream>

#include "fulcrum/io/atomic_file.hpp"

namespace fulcrum::kinematics {

namespace {
constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

std::string number(double v, bool integer) {
  if (!std::isfinite(v)) return "nan";
  char buf[40];
  if (integer)
    std::snprintf(buf, sizeof buf, "%lld", static_cast<long long>(std::llround(v)));
  else
    std::snprintf(buf, sizeof buf, "%.10g", v);
  return buf;
}

}  // namespace

std::vector<RingColumn> ring_table_columns(const KinematicFit& fit) {
  std::vector<RingColumn> c;
  auto add = [&](std::string n, std::string u, std::string d, bool integer = false) {
    c.push_back({std::move(n), std::move(u), std::move(d), integer, {}});
    return c.size() - 1;
  };
  const auto radius = add("radius", "arcsec", "ring radius in the disc plane");
  const auto npix = add("n_pixels", "", "pixels bracketed by this node in the global fit", true);
  const auto vrot = add("vrot", "km/s", "rotation speed, global fit");
  const auto vrot_e = add("vrot_err", "km/s", "1-sigma error of vrot (scaled)");
  const auto vrad = add("vrad", "km/s", "radial speed, global fit (0 when not fitted)");
  const auto ok = add("ring_ok", "", "1 when the ring-by-ring fit succeeded", true);
  const auto rn = add("ring_n_pixels", "", "pixels of the ring-by-ring fit", true);
  const auto ce = add("ring_centre_east", "arcsec", "ring centre, east offset from the reference");
  const auto ce_e = add("ring_centre_east_err", "arcsec", "1-sigma error");
  const auto cn = add("ring_centre_north", "arcsec", "ring centre, north offset from the reference");
  const auto cn_e = add("ring_centre_north_err", "arcsec", "1-sigma error");
  const auto ra = add("ring_centre_ra", "deg", "ring centre right ascension");
  const auto dec = add("ring_centre_dec", "deg", "ring centre declination");
  const auto pa = add("ring_pa", "deg", "ring PA of the receding half, north through east");
  const auto pa_e = add("ring_pa_err", "deg", "1-sigma error");
  const auto inc = add("ring_inc", "deg", "ring inclination");
  const auto inc_e = add("ring_inc_err", "deg", "1-sigma error");
  const auto rv = add("ring_vrot", "km/s", "ring rotation speed, ring-by-ring fit");
  const auto rv_e = add("ring_vrot_err", "km/s", "1-sigma error");
  static const char* hn[7] = {"c0", "c1", "s1", "c2", "s2", "c3", "s3"};
  std::size_t h[7], he[7];
  for (int i = 0; i < 7; ++i) {
    h[i] = add(hn[i], "km/s", std::string("harmonic coefficient ") + hn[i] + " along the ring");
    he[i] = add(std::string(hn[i]) + "_err", "km/s", "1-sigma error");
  }
  for (const auto& r : fit.rings) {
    c[radius].values.push_back(r.node.radius_arcsec);
    c[npix].values.push_back(r.node.n_pixels);
    c[vrot].values.push_back(r.node.vrot_kms);
    c[vrot_e].values.push_back(r.node.vrot_err_kms);
    c[vrad].values.push_back(r.node.vrad_kms);
    const bool fok = r.free && r.free->ok;
    c[ok].values.push_back(fok ? 1 : 0);
    c[rn].values.push_back(r.free ? r.free->n_pixels : 0);
    WorldCoord w{kNaN, kNaN};
    if (fok) w = fit.frame.to_world(r.free->geometry.centre);
    c[ce].values.push_back(fok ? r.free->geometry.centre.east : kNaN);
    c[ce_e].values.push_back(fok ? r.free->centre_east_err : kNaN);
    c[cn].values.push_back(fok ? r.free->geometry.centre.north : kNaN);
    c[cn_e].values.push_back(fok ? r.free->centre_north_err : kNaN);
    c[ra].values.push_back(w.ra_deg);
    c[dec].values.push_back(w.dec_deg);
    c[pa].values.push_back(fok ? r.free->geometry.pa_deg : kNaN);
    c[pa_e].values.push_back(fok ? r.free->pa_err_deg : kNaN);
    c[inc].values.push_back(fok ? r.free->geometry.inc_deg : kNaN);
    c[inc_e].values.push_back(fok ? r.free->inc_err_deg : kNaN);
    c[rv].values.push_back(fok ? r.free->vrot_kms : kNaN);
    c[rv_e].values.push_back(fok ? r.free->vrot_err_kms : kNaN);
    const bool hok = r.harmonic && r.harmonic->ok;
    for (int i = 0; i < 7; ++i) {
      c[h[i]].values.push_back(hok ? r.harmonic->coeff[i] : kNaN);
      c[he[i]].values.push_back(hok ? r.harmonic->err(i) : kNaN);
    }
  }
  return c;
}

void write_ring_table_csv(const std::string& path, const KinematicFit& fit) {
  const auto cols = ring_table_columns(fit);
  std::ostringstream os;
  for (std::size_t i = 0; i < cols.size(); ++i) {
    os << (i ? "," : "") << cols[i].name;
    if (!cols[i].unit.empty()) os << " [" << cols[i].unit << "]";
  }
  os << "\n";
  const std::size_t n = cols.empty() ? 0 : cols[0].values.size();
  for (std::size_t r = 0; r < n; ++r) {
    for (std::size_t i = 0; i < cols.size(); ++i) {
      os << (i ? "," : "");
      if (std::isfinite(cols[i].values[r])) os << number(cols[i].values[r], cols[i].integer);
    }
    os << "\n";
  }
  write_text_file(path, os.str());
}

}  // namespace fulcrum::kinematics
