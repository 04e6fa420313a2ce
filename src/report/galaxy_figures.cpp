// The per-galaxy figures (see the header for conventions).
#include "fulcrum/report/galaxy_figures.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <numbers>

#include "fulcrum/core/number_text.hpp"
#include "fulcrum/report/axes.hpp"
#include "fulcrum/report/colour_raster.hpp"
#include "fulcrum/report/contours.hpp"
#include "fulcrum/sky/angle.hpp"

namespace fulcrum::report {

namespace {


double finite_max_abs(const std::vector<double>& v) {
  double m = 0;
  for (double x : v)
    if (std::isfinite(x)) m = std::max(m, std::abs(x));
  return m;
}

// Robust display range: the 0.5 and 99.7 percentiles of the finite values.
std::pair<double, double> display_range(const std::vector<double>& v, double lo_q = 0.005,
                                        double hi_q = 0.997) {
  std::vector<double> f;
  for (double x : v)
    if (std::isfinite(x)) f.push_back(x);
  if (f.empty()) return {0.0, 1.0};
  std::sort(f.begin(), f.end());
  double lo = f[static_cast<std::size_t>(lo_q * (f.size() - 1))];
  double hi = f[static_cast<std::size_t>(hi_q * (f.size() - 1))];
  if (!(hi > lo)) hi = lo + 1.0;
  return {lo, hi};
}

// Canvas rotation (deg, SVG clockwise) of a sky direction at PA phi on a
// panel with east to the left and north up.
double canvas_rotation(double pa_deg) {
  return Angle::from_radians(std::atan2(-(pa_deg * degrees).cos(), -(pa_deg * degrees).sin())).deg();
}

// The halo colour that contrasts with an overlay colour "#rrggbb": near
// black under light colours, white under dark ones (Rec. 709 luma weights on
// the gamma-encoded values, a common rule of thumb).
std::string halo_for(const std::string& colour) {
  if (colour.size() != 7) return "#111111";
  auto byte = [&](int k) { return std::stoi(colour.substr(k, 2), nullptr, 16) / 255.0; };
  const double luma = 0.2126 * byte(1) + 0.7152 * byte(3) + 0.0722 * byte(5);
  return luma > 0.45 ? "#111111" : "#ffffff";
}

// "P(A > 0) = 0.873", or "P(A > 0) > 0.999" when the draws cannot resolve
// it further (core/number_text.hpp probability_text, as in the tables).
std::string probability_words(double p) {
  const std::string t = probability_text(p, 3);
  return "P(A > 0) " + (t[0] == '>' || t[0] == '<' ? t : "= " + t);
}

Point sky_point(const Axes& ax, double east, double north) { return ax.at(east, north); }

// Grid x coordinate is "east" and the axes run reversed, so east is left.
Axes sky_axes(double left, double top, double size, const Grid& g) {
  Axes ax;
  ax.left = left;
  ax.top = top;
  ax.width = size;
  ax.height = size;
  double half = std::max({std::abs(g.xmin), std::abs(g.xmax), std::abs(g.ymin), std::abs(g.ymax)});
  ax.xmin = -half;
  ax.xmax = half;
  ax.ymin = -half;
  ax.ymax = half;
  ax.x_reversed = true;
  return ax;
}

void draw_centre(Canvas& canvas, const Axes& ax, const CentreMark& c, double nsigma) {
  std::string col = centre_colour(c.id);
  Point p = sky_point(ax, c.east, c.north);
  double tr = c.cov_ee + c.cov_nn;
  double det = c.cov_ee * c.cov_nn - c.cov_en * c.cov_en;
  double disc = std::sqrt(std::max(0.0, tr * tr / 4 - det));
  double l1 = tr / 2 + disc, l2 = std::max(0.0, tr / 2 - disc);
  if (l1 > 0 && std::isfinite(l1)) {
    // Eigenvector of the larger eigenvalue: (en, l1 - ee) or (l1 - nn, en).
    double ve = c.cov_en, vn = l1 - c.cov_ee;
    if (std::abs(ve) + std::abs(vn) < 1e-300) { ve = l1 - c.cov_nn; vn = c.cov_en; }
    if (std::abs(ve) + std::abs(vn) < 1e-300) { ve = 0; vn = 1; }
    double pa = Angle::from_radians(std::atan2(ve, vn)).deg();
    Style s;
    s.stroke = col;
    s.stroke_width = c.adopted ? 2.0 : 1.4;
    s.dash = c.ok ? "" : "3 2";
    s.halo = halo_for(col);
    s.halo_width = 0.8;
    canvas.ellipse(p, std::max(0.5, ax.sx(nsigma * std::sqrt(l1))), std::max(0.5, ax.sx(nsigma * std::sqrt(l2))),
                canvas_rotation(pa), s);
  }
  // A dark halo under every marker keeps light colours visible on light backgrounds.
  canvas.marker(p, centre_shape(c.id), c.adopted ? 13 : 10, "#111111", c.adopted ? 4.2 : 3.4);
  canvas.marker(p, centre_shape(c.id), c.adopted ? 13 : 10, col, c.adopted ? 2.2 : 1.6);
}

void centre_legend(Canvas& canvas, double x, double y, const std::vector<CentreMark>& centres,
                   double nsigma) {
  canvas.text({x, y}, "Centre estimates", 12, "start", 0, "#111111", "bold");
  double yy = y + 18;
  for (const auto& c : centres) {
    canvas.marker({x + 6, yy - 4}, centre_shape(c.id), 10, "#111111", 3.4);
    canvas.marker({x + 6, yy - 4}, centre_shape(c.id), 10, centre_colour(c.id), 1.6);
    std::string label = c.id + (c.adopted ? " (adopted)" : "") + (c.ok ? "" : " (failed)");
    canvas.text({x + 18, yy}, label, 11, "start", 0, c.ok ? "#111111" : "#888888");
    yy += 16;
  }
  canvas.text({x, yy + 4}, "ellipses: " + fixed_text(nsigma, 0) + "\u03c3 errors", 10.5, "start", 0, "#444444");
}

void split_overlay(Canvas& canvas, const Axes& ax, double tail_pa, std::optional<double> tail_err,
                   const std::string& line_colour) {
  double half = ax.xmax;
  // Split line through the adopted centre, perpendicular to the tail PA.
  double pa_line = tail_pa + 90.0;
  Style s;
  s.stroke = line_colour;
  s.stroke_width = 2.0;
  s.dash = "7 4";
  s.halo = halo_for(line_colour);
  s.halo_width = 1.2;
  double L = 1.5 * half;
  canvas.line(sky_point(ax, L * (pa_line * degrees).sin(), L * (pa_line * degrees).cos()),
           sky_point(ax, -L * (pa_line * degrees).sin(), -L * (pa_line * degrees).cos()), s);
  if (tail_err && *tail_err > 0) {
    Style w = s;
    w.stroke_width = 1.0;
    w.dash = "2 3";
    w.halo_width = 0.8;
    for (double d : {-*tail_err, *tail_err}) {
      double p = pa_line + d;
      canvas.line(sky_point(ax, L * (p * degrees).sin(), L * (p * degrees).cos()),
               sky_point(ax, -L * (p * degrees).sin(), -L * (p * degrees).cos()), w);
    }
  }
  double r = 0.62 * half;
  Point from = sky_point(ax, 0.12 * half * (tail_pa * degrees).sin(), 0.12 * half * (tail_pa * degrees).cos());
  Point to = sky_point(ax, r * (tail_pa * degrees).sin(), r * (tail_pa * degrees).cos());
  canvas.arrow(from, to, "#e8552b", 3.0, 12, "#111111");
  Point lab = sky_point(ax, (r + 0.1 * half) * (tail_pa * degrees).sin(), (r + 0.1 * half) * (tail_pa * degrees).cos());
  canvas.text({lab.x, lab.y + 4}, "tail", 12, "middle", 0, "#e8552b", "bold", "#111111");
  double lead = tail_pa + 180.0;
  Point ll = sky_point(ax, 0.72 * half * (lead * degrees).sin(), 0.72 * half * (lead * degrees).cos());
  canvas.text({ll.x, ll.y + 4}, "leading", 12, "middle", 0, line_colour, "bold", halo_for(line_colour));
}

void north_east_compass(Canvas& canvas, const Axes& ax, const std::string& colour) {
  double x = ax.left + ax.width - 18, y = ax.top + ax.height - 18;
  const std::string halo = halo_for(colour);
  canvas.arrow({x, y}, {x, y - 30}, colour, 1.5, 7, halo);
  canvas.arrow({x, y}, {x - 30, y}, colour, 1.5, 7, halo);
  canvas.text({x, y - 35}, "N", 11, "middle", 0, colour, "bold", halo);
  canvas.text({x - 39, y + 4}, "E", 11, "middle", 0, colour, "bold", halo);
}

}  // namespace

std::string centre_colour(const std::string& id) {
  static const std::map<std::string, std::string> known = {
      {"kinematic-rings", "#ffffff"},      {"kinematic-harmonic", "#ffd92f"},
      {"photometric-peak", "#66c2a5"},     {"photometric-centroid", "#fc8d62"},
      {"photometric-profile", "#8da0cb"},  {"photometric-isophote", "#e78ac3"},
      {"photometric-symmetry", "#a6d854"}, {"input", "#ffffff"}};
  auto it = known.find(id);
  return it != known.end() ? it->second : "#e5c494";
}

std::string centre_shape(const std::string& id) {
  if (id.rfind("kinematic-rings", 0) == 0) return "plus";
  if (id.rfind("kinematic", 0) == 0) return "cross";
  if (id == "photometric-peak") return "diamond";
  if (id == "photometric-centroid") return "square";
  if (id == "photometric-profile") return "circle";
  if (id == "photometric-isophote") return "star";
  return "circle";
}

void histogram(const std::vector<double>& values, int bins, double lo, double hi,
               std::vector<double>& edges, std::vector<double>& counts) {
  if (!(hi > lo)) {
    auto r = display_range(values, 0.001, 0.999);
    lo = r.first;
    hi = r.second;
    double pad = 0.05 * (hi - lo);
    lo -= pad;
    hi += pad;
  }
  edges.assign(bins + 1, 0.0);
  counts.assign(bins, 0.0);
  for (int i = 0; i <= bins; ++i) edges[i] = lo + (hi - lo) * i / bins;
  for (double v : values) {
    if (!std::isfinite(v) || v < lo || v > hi) continue;
    int k = std::min(bins - 1, static_cast<int>((v - lo) / (hi - lo) * bins));
    counts[k] += 1;
  }
}

Canvas intensity_figure(const IntensityFigure& f) {
  Canvas canvas(780, 480, f.galaxy + ": line intensity, centres and split");
  Axes ax = sky_axes(72, 40, 390, f.map);
  auto [lo, hi] = display_range(f.map.v);
  lo = std::max(lo, 0.0) < hi ? std::max(lo, 0.0) : lo;
  ax.clip(canvas);
  draw_grid(canvas, ax, f.map, ColourMapKind::kCubehelix, lo, hi);
  if (f.aperture_radius && *f.aperture_radius > 0) {
    Style s;
    s.stroke = "#bbbbbb";
    s.stroke_width = 1.3;
    s.dash = "2 3";
    double q = f.aperture_q.value_or(1.0), pa = f.aperture_pa_deg.value_or(0.0);
    canvas.ellipse(ax.at(0, 0), ax.sx(*f.aperture_radius), ax.sx(*f.aperture_radius * q), canvas_rotation(pa), s);
  }
  if (f.tail_pa_deg) split_overlay(canvas, ax, *f.tail_pa_deg, f.tail_pa_err_deg, "#ffffff");
  for (const auto& c : f.centres) draw_centre(canvas, ax, c, f.error_ellipse_sigma);
  if (f.beam && f.beam->bmaj > 0) {
    Style s;
    s.stroke = "#ffffff";
    s.fill = "#bbbbbb";
    s.stroke_width = 1.0;
    s.halo = "#111111";
    s.halo_width = 0.8;
    double bx = ax.xmax * 0.82, by = ax.ymin * 0.82;
    canvas.ellipse(ax.at(bx, by), ax.sx(f.beam->bmaj / 2), ax.sx(f.beam->bmin / 2), canvas_rotation(f.beam->bpa_deg), s);
  }
  north_east_compass(canvas, ax, "#ffffff");
  canvas.end_clip();
  ax.draw(canvas, "offset east (arcsec); east is to the left", "north offset (arcsec)", f.galaxy + ": line intensity");
  colour_bar(canvas, 480, 40, 14, 390, ColourMapKind::kCubehelix, lo, hi, f.unit.empty() ? "intensity" : f.unit);
  centre_legend(canvas, 565, 52, f.centres, f.error_ellipse_sigma);
  double y = 60 + 16.0 * f.centres.size() + 40;
  if (f.tail_pa_deg) {
    canvas.text({565, y}, "tail PA " + fixed_text(*f.tail_pa_deg, 1) + "\u00b0" +
                           (f.tail_pa_err_deg ? " \u00b1 " + fixed_text(*f.tail_pa_err_deg, 1) + "\u00b0" : ""),
             11, "start", 0, "#111111");
    canvas.text({565, y + 16}, "dashed: split line; dotted: its range", 10.5, "start", 0, "#444444");
    y += 32;
  }
  if (f.beam) canvas.text({565, y}, "grey ellipse: beam FWHM", 10.5, "start", 0, "#444444");
  canvas.text({565, y + 16}, "colour: cubehelix map (Green 2011)",
           10.5, "start", 0, "#444444");
  return canvas;
}

Canvas asymmetry_plane_figure(const AsymmetryPlaneFigure& f) {
  Canvas canvas(780, 480, f.galaxy + ": asymmetry over centre offsets");
  Axes ax = sky_axes(72, 40, 390, f.asymmetry);
  double m = finite_max_abs(f.asymmetry.v);
  if (!(m > 0)) m = 1;
  ax.clip(canvas);
  draw_grid(canvas, ax, f.asymmetry, ColourMapKind::kCoolWarm, -m, m);
  Style zero;
  zero.stroke = "#111111";
  zero.stroke_width = 2.2;
  draw_contours(canvas, ax, f.asymmetry, 0.0, zero);
  for (const auto& c : f.centres) {
    CentreMark d = c;
    draw_centre(canvas, ax, d, f.error_ellipse_sigma);
  }
  if (f.flip_distance && f.flip_direction_pa_deg && std::isfinite(*f.flip_distance)) {
    double d = *f.flip_distance, pa = *f.flip_direction_pa_deg;
    canvas.arrow(ax.at(0, 0), ax.at(d * (pa * degrees).sin(), d * (pa * degrees).cos()), "#111111", 1.8, 9, "#ffffff");
  }
  north_east_compass(canvas, ax, "#111111");
  canvas.end_clip();
  ax.draw(canvas, "centre offset east (arcsec); east is to the left", "centre offset north (arcsec)",
          f.galaxy + ": A = (L \u2212 T)/(L + T) at each centre");
  colour_bar(canvas, 480, 40, 14, 390, ColourMapKind::kCoolWarm, -m, m, "A (red: leading excess)");
  // Markers are reused from the intensity figure; these show where each estimate sits on A.
  std::vector<CentreMark> legend = f.centres;
  centre_legend(canvas, 565, 52, legend, f.error_ellipse_sigma);
  double y = 60 + 16.0 * f.centres.size() + 40;
  canvas.text({565, y}, "black line: A = 0", 11, "start", 0, "#111111");
  canvas.text({565, y + 16}, "split angle: tail PA " + fixed_text(f.tail_pa_deg, 1) + "\u00b0", 11, "start", 0, "#111111");
  if (f.flip_distance && std::isfinite(*f.flip_distance))
    canvas.text({565, y + 32}, "arrow: flip distance " + fixed_text(*f.flip_distance, 2) + "\u2033", 11, "start", 0, "#111111");
  canvas.text({565, y + 52}, "colour: cool-warm (Moreland 2009)", 10.5, "start", 0, "#444444");
  return canvas;
}

Canvas flip_angle_figure(const FlipAngleFigure& f) {
  Canvas canvas(620, 420, f.galaxy + ": flip distance against split angle");
  Axes ax;
  ax.left = 72; ax.top = 40; ax.width = 500; ax.height = 300;
  double amin = f.angle_deg.empty() ? f.nominal_deg - 30 : *std::min_element(f.angle_deg.begin(), f.angle_deg.end());
  double amax = f.angle_deg.empty() ? f.nominal_deg + 30 : *std::max_element(f.angle_deg.begin(), f.angle_deg.end());
  if (!(amax > amin)) { amin -= 1; amax += 1; }
  double ymax = 0;
  for (double d : f.flip_distance)
    if (std::isfinite(d)) ymax = std::max(ymax, d);
  if (f.farthest_plausible) ymax = std::max(ymax, *f.farthest_plausible);
  if (!(ymax > 0)) ymax = 1;
  ax.xmin = amin; ax.xmax = amax; ax.ymin = 0; ax.ymax = ymax * 1.15;
  Style band;
  band.stroke = "";
  band.fill = "#e9eef7";
  double b0 = std::max(amin, f.nominal_deg - f.err_deg), b1 = std::min(amax, f.nominal_deg + f.err_deg);
  if (b1 > b0) canvas.rect(ax.px(b0), ax.top, ax.px(b1) - ax.px(b0), ax.height, band);
  ax.clip(canvas);
  Style line;
  line.stroke = "#3b4cc0";
  line.stroke_width = 2.0;
  std::vector<Point> seg;
  for (std::size_t i = 0; i < f.angle_deg.size(); ++i) {
    if (std::isfinite(f.flip_distance[i])) {
      seg.push_back(ax.at(f.angle_deg[i], f.flip_distance[i]));
    } else {
      canvas.polyline(seg, line);
      seg.clear();
    }
  }
  canvas.polyline(seg, line);
  if (f.farthest_plausible) {
    Style s;
    s.stroke = "#b40426";
    s.stroke_width = 1.6;
    s.dash = "6 4";
    canvas.line(ax.at(amin, *f.farthest_plausible), ax.at(amax, *f.farthest_plausible), s);
  }
  if (f.beam_fwhm) {
    Style s;
    s.stroke = "#777777";
    s.dash = "2 3";
    canvas.line(ax.at(amin, *f.beam_fwhm), ax.at(amax, *f.beam_fwhm), s);
  }
  Style nom;
  nom.stroke = "#333333";
  nom.dash = "1 3";
  canvas.line(ax.at(f.nominal_deg, 0), ax.at(f.nominal_deg, ax.ymax), nom);
  canvas.end_clip();
  ax.draw(canvas, "split angle: tail PA (deg)", "flip distance (arcsec)",
          f.galaxy + ": how far the centre must move to reverse A");
  // Below the x-axis label (baseline near y = 372).
  double y = 388;
  canvas.text({72, y + 4}, "blue: flip distance; red dashed: distance of the farthest plausible centre;", 10.5, "start", 0,
           "#444444");
  canvas.text({72, y + 18}, "grey dotted: beam FWHM; shaded: tail PA \u00b1 its error; dotted vertical: nominal tail PA",
           10.5, "start", 0, "#444444");
  return canvas;
}

Canvas bootstrap_figure(const BootstrapFigure& f) {
  Canvas canvas(620, 400, f.galaxy + ": bootstrap distribution of A");
  Axes ax;
  ax.left = 72; ax.top = 40; ax.width = 500; ax.height = 300;
  if (f.bin_edges.size() < 2) return canvas;
  ax.xmin = std::min(f.bin_edges.front(), 0.0);
  ax.xmax = std::max(f.bin_edges.back(), 0.0);
  if (!(ax.xmax > ax.xmin)) ax.xmax = ax.xmin + 1;
  double cmax = 0;
  for (double c : f.counts) cmax = std::max(cmax, c);
  ax.ymin = 0; ax.ymax = cmax > 0 ? cmax * 1.12 : 1;
  Style band;
  band.stroke = "";
  if (f.ci95_lo && f.ci95_hi) {
    band.fill = "#f3f3f3";
    canvas.rect(ax.px(*f.ci95_lo), ax.top, ax.px(*f.ci95_hi) - ax.px(*f.ci95_lo), ax.height, band);
  }
  if (f.ci68_lo && f.ci68_hi) {
    band.fill = "#e2e2e2";
    canvas.rect(ax.px(*f.ci68_lo), ax.top, ax.px(*f.ci68_hi) - ax.px(*f.ci68_lo), ax.height, band);
  }
  for (std::size_t i = 0; i + 1 < f.bin_edges.size(); ++i) {
    double mid = 0.5 * (f.bin_edges[i] + f.bin_edges[i + 1]);
    double m = std::max(std::abs(ax.xmin), std::abs(ax.xmax));
    Style bar;
    bar.stroke = "";
    bar.fill = cool_warm(0.5 + 0.5 * mid / (m > 0 ? m : 1)).hex();
    double x0 = ax.px(f.bin_edges[i]), x1 = ax.px(f.bin_edges[i + 1]);
    canvas.rect(x0, ax.py(f.counts[i]), std::max(0.5, x1 - x0 - 0.3), ax.py(0) - ax.py(f.counts[i]), bar);
  }
  Style zero;
  zero.stroke = "#111111";
  zero.dash = "4 3";
  canvas.line(ax.at(0, 0), ax.at(0, ax.ymax), zero);
  Style a;
  a.stroke = "#111111";
  a.stroke_width = 2.0;
  canvas.line(ax.at(f.asymmetry, 0), ax.at(f.asymmetry, ax.ymax), a);
  ax.draw(canvas, "A = (L \u2212 T)/(L + T)", "draws per bin", f.galaxy + ": bootstrap of A");
  std::string txt = "solid: A at the adopted centre (" + fixed_text(f.asymmetry, 3) + "); dashed: A = 0; shading: 68% and 95% intervals";
  canvas.text({72, 394}, txt, 10.5, "start", 0, "#444444");
  // P(A > 0) in the top corner away from the bulk of the draws, with a white
  // halo where it crosses a bar or a line.
  if (f.p_leading) {
    const bool right = f.asymmetry < 0.5 * (ax.xmin + ax.xmax);
    canvas.text({right ? ax.left + ax.width - 8 : ax.left + 8, ax.top + 18}, probability_words(*f.p_leading), 12,
                right ? "end" : "start", 0, "#111111", "bold", "#ffffff");
  }
  return canvas;
}

Canvas velocity_figure(const VelocityFigure& f) {
  // Each panel has its own colour bar on its right: observed and model share
  // the range about vsys, the residual has its own.
  const int panels = 1 + (f.model ? 1 : 0) + (f.residual ? 1 : 0);
  const double size = 250, bar_gap = 10, bar_width = 12, stride = size + bar_gap + bar_width + 118;
  Canvas canvas(72 + panels * stride - 40, 380, f.galaxy + ": velocity field");
  double m = 0;
  for (double v : f.velocity.v)
    if (std::isfinite(v)) m = std::max(m, std::abs(v - f.vsys));
  if (!(m > 0)) m = 1;
  double x = 72;
  auto panel = [&](const Grid& g, const std::string& title, bool is_resid, double rmax) {
    const Axes ax = sky_axes(x, 40, size, g);
    const double lim = is_resid ? rmax : m;
    ax.clip(canvas);
    Grid shifted = g;
    if (!is_resid)
      for (auto& v : shifted.v) v -= f.vsys;
    draw_grid(canvas, ax, shifted, ColourMapKind::kCoolWarm, -lim, lim);
    if (!is_resid) {
      Style c;
      c.stroke = "#333333";
      c.stroke_width = 0.8;
      for (double lev : nice_ticks(-m, m, 8)) draw_contours(canvas, ax, shifted, lev, c);
    }
    if (!is_resid && &g == &f.velocity)  // the observed panel: what the cleaning left out
      for (const auto& rp : f.rejected)
        canvas.marker(ax.at(rp.east, rp.north), "cross", 3.5, rp.outlier ? "#000000" : "#8a8a8a", 0.7);
    for (const auto& cm : f.centres)
      if (cm.ok && cm.id.rfind("kinematic", 0) == 0) {
        canvas.marker(ax.at(cm.east, cm.north), "plus", 10, "#ffffff", 3.6);
        canvas.marker(ax.at(cm.east, cm.north), "plus", 10, "#111111", 1.6);
      }
    north_east_compass(canvas, ax, "#111111");
    canvas.end_clip();
    ax.draw(canvas, "east (arcsec)", x == 72 ? "north (arcsec)" : "", title);
    colour_bar(canvas, x + size + bar_gap, 40, bar_width, size, ColourMapKind::kCoolWarm, -lim, lim,
               is_resid ? "observed \u2212 model (km/s)" : "v \u2212 vsys (km/s)");
    x += stride;
  };
  panel(f.velocity, "observed", false, 0);
  if (f.model) panel(*f.model, "model", false, 0);
  if (f.residual) {
    const auto r = display_range(f.residual->v, 0.01, 0.99);
    panel(*f.residual, "residual", true, std::max({std::abs(r.first), std::abs(r.second), 1.0}));
  }
  const std::string caption = "velocity about vsys = " + fixed_text(f.vsys, 1) +
                              " km/s (contours every tick step); cool-warm map (Moreland 2009)";
  canvas.text({72, 356}, caption, 10.5, "start", 0, "#444444");
  if (!f.rejected.empty()) {
    std::size_t outliers = 0;
    for (const auto& rp : f.rejected) outliers += rp.outlier ? 1 : 0;
    canvas.text({72, 371},
                "\u00d7 left out by the footprint cleaning: " + std::to_string(outliers) +
                    " velocity outliers (black), " + std::to_string(f.rejected.size() - outliers) +
                    " isolated or small-island pixels (grey)",
                10.5, "start", 0, "#444444");
  }
  return canvas;
}

Canvas rotation_curve_figure(const RotationCurveFigure& f) {
  Canvas canvas(620, 400, f.galaxy + ": rotation curve");
  Axes ax;
  ax.left = 72; ax.top = 40; ax.width = 500; ax.height = 300;
  double rmax = 1, vmax = 1;
  for (std::size_t i = 0; i < f.radius_arcsec.size(); ++i) {
    if (std::isfinite(f.radius_arcsec[i])) rmax = std::max(rmax, f.radius_arcsec[i]);
    double e = i < f.vrot_err_kms.size() && std::isfinite(f.vrot_err_kms[i]) ? f.vrot_err_kms[i] : 0;
    if (std::isfinite(f.vrot_kms[i])) vmax = std::max(vmax, f.vrot_kms[i] + e);
  }
  ax.xmin = 0; ax.xmax = rmax * 1.08; ax.ymin = 0; ax.ymax = vmax * 1.12;
  Style err;
  err.stroke = "#555555";
  std::vector<Point> pts;
  for (std::size_t i = 0; i < f.radius_arcsec.size(); ++i) {
    if (!std::isfinite(f.vrot_kms[i])) continue;
    Point p = ax.at(f.radius_arcsec[i], f.vrot_kms[i]);
    pts.push_back(p);
    double e = i < f.vrot_err_kms.size() ? f.vrot_err_kms[i] : NAN;
    if (std::isfinite(e) && e > 0)
      canvas.line(ax.at(f.radius_arcsec[i], f.vrot_kms[i] - e), ax.at(f.radius_arcsec[i], f.vrot_kms[i] + e), err);
  }
  Style line;
  line.stroke = "#3b4cc0";
  line.stroke_width = 1.6;
  canvas.polyline(pts, line);
  Style dot;
  dot.stroke = "#3b4cc0";
  dot.fill = "#ffffff";
  dot.stroke_width = 1.6;
  for (const auto& p : pts) canvas.circle(p, 3.5, dot);
  std::string xl = "radius (arcsec)";
  if (f.kpc_per_arcsec) xl += "; 10\u2033 = " + fixed_text(10 * *f.kpc_per_arcsec, 2) + " kpc";
  ax.draw(canvas, xl, "rotation velocity (km/s)", f.galaxy + ": rotation curve from the ring fit");
  canvas.text({72, 394}, "points: rings of the tilted-ring fit; bars: 1\u03c3", 10.5, "start", 0, "#444444");
  return canvas;
}

}  // namespace fulcrum::report
