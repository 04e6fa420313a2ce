// A against split angle and against centre offset, for every centre
// (pipeline/centre_curves.hpp).
#include "fulcrum/pipeline/centre_curves.hpp"

#include <cmath>

#include "fulcrum/sky/angle.hpp"
#include "fulcrum/sky/offset_frame.hpp"
#include "fulcrum/split/half_split.hpp"
#include "fulcrum/split/projection_engine.hpp"

namespace fulcrum::pipeline {

CentreCurves centre_curves(const GalaxySummary& s) {
  CentreCurves out;
  std::vector<std::string> id_a, id_o;
  std::vector<double> pa, a_a, e_a, off, a_o, e_o;
  const Centre* adopted = s.adopted_centre();
  if (s.robustness && adopted && s.verdict != robustness::Verdict::undetermined) {
    const auto& r = *s.robustness;
    const OffsetFrame frame(adopted->position);
    const double beam = s.beam ? s.beam->fwhm_arcsec() : 1.0;
    const SkyOffset lead = direction_of(Angle::from_degrees(r.tail_pa_deg + 180.0));
    // One projection engine per split angle, shared by every centre (the
    // engine is the per-angle cost; each centre is then a look-up).
    std::vector<double> angles;
    std::vector<split::ProjectionEngine> engines;
    for (int k = -45; k <= 45; ++k) {
      angles.push_back(r.tail_pa_deg + 2.0 * k);
      engines.emplace_back(r.problem.pixels, Angle::from_degrees(angles.back()));
    }
    const split::ProjectionEngine& nominal = engines[45];
    for (const Centre& c : s.centres) {
      if (!c.ok()) continue;
      const SkyOffset o = frame.to_offset(c.position);
      for (std::size_t j = 0; j < engines.size(); ++j) {
        const auto x = split::summarise_halves(r.problem, engines[j].halves(o), engines[j].tail_pa(), o);
        id_a.push_back(c.id());
        pa.push_back(std::fmod(angles[j] + 720.0, 360.0));
        a_a.push_back(x.asymmetry);
        e_a.push_back(x.asymmetry_err);
      }
      for (int k = -30; k <= 30; ++k) {
        const double d = 0.1 * k * beam;
        const SkyOffset p{o.east + d * lead.east, o.north + d * lead.north};
        const auto x = split::summarise_halves(r.problem, nominal.halves(p), nominal.tail_pa(), p);
        id_o.push_back(c.id());
        off.push_back(d);
        a_o.push_back(x.asymmetry);
        e_o.push_back(x.asymmetry_err);
      }
    }
  }
  auto& ta = out.versus_angle;
  ta.name = "asymmetry_vs_angle";
  ta.caption = s.input.name + ": A against the split angle (tail PA) for every centre estimate.";
  ta.add_string("centre", "Centre estimate the halves are split about", id_a);
  ta.add_float("tail_pa_deg", "deg", "Tail PA of the split line's normal, north through east", pa, 1);
  ta.add_float("asymmetry", "", "A = (L - T)/(L + T)", a_a, 4);
  ta.add_float("asymmetry_err", "", "1-sigma error of A from the map noise", e_a, 4);
  auto& to = out.versus_offset;
  to.name = "asymmetry_vs_offset";
  to.caption = s.input.name + ": A against the centre's offset along the leading direction for every centre estimate.";
  to.add_string("centre", "Centre estimate the offset starts from", id_o);
  to.add_float("offset_arcsec", "arcsec", "Offset of the split centre along the leading direction (opposite the tail)",
               off, 3);
  to.add_float("asymmetry", "", "A = (L - T)/(L + T) at the nominal tail PA", a_o, 4);
  to.add_float("asymmetry_err", "", "1-sigma error of A from the map noise", e_o, 4);
  return out;
}

}  // namespace fulcrum::pipeline
