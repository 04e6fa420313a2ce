// Flip distance: the smallest move of the centre that reverses the sign of A.
//
// Units and conventions: offsets (east, north) arcsec in the SplitProblem's
// frame; angles are tail PAs in degrees (north through east); beams are
// measured along the direction of the move (the FWHM of the beam's cut along
// that PA, 1/sqrt(cos^2 d/BMAJ^2 + sin^2 d/BMIN^2), d = PA - BPA).
//
// For one split angle, moving the centre by c changes L and T only through
// s = n.c (projection_engine.hpp), so the displacement that reverses the sign
// with the least length is along +n or -n, and its length is |s0 - s_zero|,
// where s_zero is the zero of A(s) = 1 - 2F(s)/F(inf) nearest to s0 = n.c0.
// We walk outwards from s0 in both directions in steps of h (the engine's bin
// width, at most 1/8 pixel) until the sign differs, then bisect the bracket on
// the exact engine to 1e-12 arcsec. Two zeros closer together than h can be
// missed (noise wiggles much smaller than a pixel; irrelevant for a sign).
//
// Over the tail-PA error the same is done for each angle of a grid
// nominal +- error; if A already has the reversed sign at c0 for some angle
// within the error, the flip distance over the range is 0.
#pragma once

#include <nlohmann/json.hpp>
#include <optional>
#include <vector>

#include "fulcrum/split/half_split.hpp"
#include "fulcrum/split/profile_table.hpp"

namespace fulcrum::robustness {

// The sign of an asymmetry A: +1 (leading excess), -1 (trailing excess), 0.
inline int sign_of(double a) { return a > 0.0 ? 1 : (a < 0.0 ? -1 : 0); }

struct FlipOptions {
  double tail_pa_deg = 0.0;
  double tail_pa_err_deg = 0.0;   // half-width of the angle range
  double angle_step_deg = 1.0;    // grid step over the range (refined to fit it)
  SkyOffset centre;               // c0 in the problem's frame
  // Offsets at which the sign of A is recorded for every angle of the range
  // (AngleFlip::probe_signs): the plausible-centre check (verdict.hpp) then
  // reads them instead of building the angles' engines again.
  std::vector<SkyOffset> probes;
};

struct AngleFlip {
  double tail_pa_deg = 0.0;
  double asymmetry_at_centre = 0.0;
  bool found = false;             // false: no zero over the whole map
  double s0 = 0.0, s_zero = 0.0;  // arcsec along n
  double distance_arcsec = 0.0;   // |s0 - s_zero| (0 if the sign is already reversed)
  double direction_pa_deg = 0.0;  // PA of the move that flips the sign
  bool already_reversed = false;  // sign at c0 differs from the nominal sign
  SkyOffset normal;               // the split's normal n (the engine's)
  std::vector<int> probe_signs;   // sign of A at each of FlipOptions::probes (per_angle only)
};

struct FlipSummary {
  AngleFlip nominal;
  AngleFlip worst;                // smallest distance over the angle range
  std::vector<AngleFlip> per_angle;
  double nominal_beams = 0.0;     // distance in beams along the direction
  double worst_beams = 0.0;
  int nominal_sign = 0;
  // What per_angle was computed for: angles_deg[k] is the tail PA (deg, as
  // given, not wrapped) of per_angle[k]; the centre and probes of the options.
  std::vector<double> angles_deg;
  SkyOffset centre;
  double nominal_tail_pa_deg = 0.0;
  std::vector<SkyOffset> probes;
};

// The zero of A(s) nearest to s0 on one engine (nullopt when A keeps its sign
// over the whole range where it can change; a windowed engine is searched
// inside its window only).
std::optional<double> nearest_zero(const split::ProjectionEngine& engine, double s0);
// The same search reading A through a profile table (the scan's reads; the
// zero of the engine of the same pixels, angle and window up to rounding).
std::optional<double> nearest_zero(const split::ProfileTable& table, double s0);

// One angle (nominal sign given: the sign of A at c0 for the nominal angle).
AngleFlip flip_at_angle(const split::ProjectionEngine& engine, SkyOffset c0, int nominal_sign);

FlipSummary flip_distance(const split::SplitProblem& problem, const FlipOptions& options);

// FWHM of the beam along PA (deg); the geometric-mean FWHM if no direction.
double beam_fwhm_along(const Beam& beam, double pa_deg);

nlohmann::json to_json(const AngleFlip& f);
nlohmann::json to_json(const FlipSummary& f);

}  // namespace fulcrum::robustness
