// The per-ring table of a kinematic fit as a report Table (ring_table.hpp).
#include "fulcrum/report/ring_table.hpp"

#include <cmath>

#include "fulcrum/core/number_text.hpp"
#include "fulcrum/kinematics/ring_table.hpp"

namespace fulcrum::report {

namespace {
// "km/s" -> "km / s": the unit spelling of report tables (astropy reads both).
std::string table_unit(const std::string& unit) { return unit == "km/s" ? "km / s" : unit; }
}  // namespace

Table ring_table(const kinematics::KinematicFit& fit) {
  Table t;
  t.name = "rings";
  for (const auto& c : kinematics::ring_table_columns(fit)) {
    if (c.integer) {
      std::vector<std::int64_t> v;
      v.reserve(c.values.size());
      for (double x : c.values) v.push_back(std::isfinite(x) ? static_cast<std::int64_t>(std::llround(x)) : 0);
      t.add_int(c.name, table_unit(c.unit), c.description, std::move(v));
    } else {
      t.add_float(c.name, table_unit(c.unit), c.description, c.values);
    }
  }
  t.meta = {{"source", fit.source},
            {"method", kinematics::method_name(fit.method)},
            {"status", fit.status},
            {"reference_ra_deg", shortest_text(fit.reference.ra_deg)},
            {"reference_dec_deg", shortest_text(fit.reference.dec_deg)},
            {"conventions", "offsets (east, north) arcsec from the reference; PA north through east of the "
                            "receding half"}};
  return t;
}

}  // namespace fulcrum::report
