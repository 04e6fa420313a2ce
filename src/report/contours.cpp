// Marching-squares iso-lines (see the header).
#include "fulcrum/report/contours.hpp"

#include <algorithm>
#include <cmath>
#include <map>

namespace fulcrum::report {

std::vector<std::vector<Point>> contour_lines(const Grid& g, double level) {
  // A segment joins two crossing points on the edges of one cell. Edges are
  // keyed: horizontal edge from corner (i, j) to (i+1, j) -> 2*(i + nx*j),
  // vertical edge from (i, j) to (i, j+1) -> 2*(i + nx*j) + 1.
  struct Seg { long a, b; };
  std::vector<Seg> segs;
  std::map<long, Point> where;
  auto corner = [&](int i, int j) { return g.at(i, j) - level; };
  auto cross = [&](int i0, int j0, int i1, int j1) -> Point {
    double a = corner(i0, j0), b = corner(i1, j1);
    double t = (a == b) ? 0.5 : a / (a - b);
    return {g.x_of(i0 + t * (i1 - i0)), g.y_of(j0 + t * (j1 - j0))};
  };
  for (int j = 0; j + 1 < g.ny; ++j) {
    for (int i = 0; i + 1 < g.nx; ++i) {
      double v00 = corner(i, j), v10 = corner(i + 1, j), v11 = corner(i + 1, j + 1),
             v01 = corner(i, j + 1);
      if (!std::isfinite(v00) || !std::isfinite(v10) || !std::isfinite(v11) || !std::isfinite(v01))
        continue;
      int idx = (v00 > 0 ? 1 : 0) | (v10 > 0 ? 2 : 0) | (v11 > 0 ? 4 : 0) | (v01 > 0 ? 8 : 0);
      if (idx == 0 || idx == 15) continue;
      long bottom = 2L * (i + static_cast<long>(g.nx) * j);
      long top = 2L * (i + static_cast<long>(g.nx) * (j + 1));
      long left = 2L * (i + static_cast<long>(g.nx) * j) + 1;
      long right = 2L * (i + 1 + static_cast<long>(g.nx) * j) + 1;
      auto put = [&](long e) {
        if (where.count(e)) return;
        if (e == bottom) where[e] = cross(i, j, i + 1, j);
        else if (e == top) where[e] = cross(i, j + 1, i + 1, j + 1);
        else if (e == left) where[e] = cross(i, j, i, j + 1);
        else where[e] = cross(i + 1, j, i + 1, j + 1);
      };
      auto add = [&](long a, long b) {
        put(a);
        put(b);
        segs.push_back({a, b});
      };
      double mean = 0.25 * (v00 + v10 + v11 + v01);
      switch (idx) {
        case 1: case 14: add(left, bottom); break;
        case 2: case 13: add(bottom, right); break;
        case 3: case 12: add(left, right); break;
        case 4: case 11: add(right, top); break;
        case 6: case 9: add(bottom, top); break;
        case 7: case 8: add(left, top); break;
        case 5:  // v00 and v11 above
          if (mean > 0) { add(left, top); add(bottom, right); }
          else { add(left, bottom); add(right, top); }
          break;
        case 10:  // v10 and v01 above
          if (mean > 0) { add(left, bottom); add(right, top); }
          else { add(left, top); add(bottom, right); }
          break;
        default: break;
      }
    }
  }
  // Join segments into polylines through shared edges.
  std::map<long, std::vector<std::size_t>> at_edge;
  for (std::size_t s = 0; s < segs.size(); ++s) {
    at_edge[segs[s].a].push_back(s);
    at_edge[segs[s].b].push_back(s);
  }
  std::vector<bool> used(segs.size(), false);
  std::vector<std::vector<Point>> lines;
  auto next_from = [&](long edge, std::size_t not_seg) -> long {
    for (auto s : at_edge[edge])
      if (!used[s] && s != not_seg) return static_cast<long>(s);
    return -1;
  };
  for (std::size_t s0 = 0; s0 < segs.size(); ++s0) {
    if (used[s0]) continue;
    used[s0] = true;
    std::vector<long> chain{segs[s0].a, segs[s0].b};
    for (int dir = 0; dir < 2; ++dir) {
      while (true) {
        long end = chain.back();
        long s = next_from(end, s0);
        if (s < 0) break;
        used[s] = true;
        chain.push_back(segs[s].a == end ? segs[s].b : segs[s].a);
      }
      std::reverse(chain.begin(), chain.end());
    }
    std::vector<Point> pts;
    for (long e : chain) pts.push_back(where[e]);
    lines.push_back(std::move(pts));
  }
  return lines;
}

void draw_contours(Canvas& canvas, const Axes& axes, const Grid& grid, double level, const Style& s) {
  for (const auto& line : contour_lines(grid, level)) {
    std::vector<Point> p;
    p.reserve(line.size());
    for (const auto& q : line) p.push_back(axes.at(q.x, q.y));
    canvas.polyline(p, s);
  }
}

}  // namespace fulcrum::report
