// Colour maps for figures.
//
// Signed quantities (velocity about systemic, residuals, the asymmetry A)
// use the diverging "cool to warm" map of Moreland (2009), "Diverging Color
// Maps for Scientific Visualization", in Advances in Visual Computing (ISVC
// 2009), LNCS 5876, p. 92. The map is computed here from the paper's
// construction: the two end colours, sRGB (0.230, 0.299, 0.754) and
// (0.706, 0.016, 0.150), are converted to CIELAB (D65 white) and then to
// Moreland's polar "Msh" coordinates (M = |Lab|, s = acos(L/M),
// h = atan2(b, a)); the map runs linearly in Msh through an unsaturated
// white-ish midpoint of magnitude M = max(M1, M2, 88), with the hue of the
// unsaturated end adjusted ("hue spin") so that the lightness changes
// smoothly. Lightness rises monotonically to the middle and falls after it,
// so equal steps in value look like equal steps in colour.
//
// Positive quantities (line intensity, optical counts) use the "cubehelix"
// scheme of Green (2011), Bull. Astr. Soc. India 39, 289: a helix through
// the RGB cube around the grey diagonal whose perceived brightness rises
// monotonically from black to white (start 0.5, rotations -1.5, hue 1.0,
// gamma 1.0: the published default).
//
// Values in [0, 1]; out-of-range values are clamped; NaN maps to a light grey.
#pragma once

#include <array>
#include <string>

namespace fulcrum::report {

struct Rgb {
  double r = 0.0, g = 0.0, b = 0.0;  // gamma-encoded sRGB in [0, 1]
  std::string hex() const;           // "#rrggbb"
  std::array<unsigned char, 3> bytes() const;
};

enum class ColourMapKind { kCoolWarm, kCubehelix };

// Moreland 2009 cool-warm at t in [0, 1] (0 cool/blue, 0.5 neutral, 1 warm/red).
Rgb cool_warm(double t);
// Green 2011 cubehelix at t in [0, 1] (0 black, 1 white).
Rgb cubehelix(double t);
Rgb colour_at(ColourMapKind kind, double t);
// Name and citation of a map, for figure captions and docs.
std::string colour_map_citation(ColourMapKind kind);

// The exact Msh interpolation of Moreland (2009) between two sRGB colours
// (exposed for tests and for other diverging pairs).
Rgb moreland_interpolate(Rgb from, Rgb to, double t);

}  // namespace fulcrum::report
