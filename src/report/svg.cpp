// SVG figure primitives, PNG encoding and marching-squares contours.
#include "fulcrum/report/svg.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <cstdio>
#include <map>
#include <sstream>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/number_text.hpp"
#include "fulcrum/io/atomic_file.hpp"

namespace fulcrum::report {


// Kept for the two pipeline call sites that still use this name; new code
// calls fixed_text (core/number_text.hpp) directly.

namespace {
std::string n2(double v) { return fixed_text(v, 2); }

std::string style_attr(const Style& s) {
  std::string a = " stroke=\"" + (s.stroke.empty() ? std::string("none") : s.stroke) + "\"";
  if (!s.stroke.empty()) a += " stroke-width=\"" + n2(s.stroke_width) + "\"";
  a += " fill=\"" + (s.fill.empty() ? std::string("none") : s.fill) + "\"";
  if (!s.dash.empty()) a += " stroke-dasharray=\"" + s.dash + "\"";
  if (s.opacity < 1.0) a += " opacity=\"" + n2(s.opacity) + "\"";
  return a;
}
}  // namespace

std::string xml_escape(const std::string& s) {
  std::string out;
  for (char ch : s) {
    switch (ch) {
      case '&': out += "&amp;"; break;
      case '<': out += "&lt;"; break;
      case '>': out += "&gt;"; break;
      case '"': out += "&quot;"; break;
      default: out += ch;
    }
  }
  return out;
}

Svg::Svg(double width, double height, std::string title)
    : width_(width), height_(height), title_(std::move(title)) {}

void Svg::line(Point a, Point b, const Style& s) {
  body_ += "<line x1=\"" + n2(a.x) + "\" y1=\"" + n2(a.y) + "\" x2=\"" + n2(b.x) + "\" y2=\"" +
           n2(b.y) + "\"" + style_attr(s) + "/>\n";
}

void Svg::polyline(const std::vector<Point>& pts, const Style& s, bool closed) {
  if (pts.size() < 2) return;
  std::string p;
  for (const auto& q : pts) p += n2(q.x) + "," + n2(q.y) + " ";
  p.pop_back();
  body_ += std::string(closed ? "<polygon" : "<polyline") + " points=\"" + p + "\"" +
           style_attr(s) + " stroke-linejoin=\"round\"/>\n";
}

void Svg::rect(double x, double y, double w, double h, const Style& s) {
  body_ += "<rect x=\"" + n2(x) + "\" y=\"" + n2(y) + "\" width=\"" + n2(w) + "\" height=\"" +
           n2(h) + "\"" + style_attr(s) + "/>\n";
}

void Svg::circle(Point c, double r, const Style& s) {
  body_ += "<circle cx=\"" + n2(c.x) + "\" cy=\"" + n2(c.y) + "\" r=\"" + n2(r) + "\"" +
           style_attr(s) + "/>\n";
}

void Svg::ellipse(Point c, double rx, double ry, double rotation_deg, const Style& s) {
  body_ += "<ellipse cx=\"" + n2(c.x) + "\" cy=\"" + n2(c.y) + "\" rx=\"" + n2(rx) +
           "\" ry=\"" + n2(ry) + "\" transform=\"rotate(" + n2(rotation_deg) + " " + n2(c.x) +
           " " + n2(c.y) + ")\"" + style_attr(s) + "/>\n";
}

void Svg::arrow(Point from, Point to, const std::string& colour, double width, double head) {
  double dx = to.x - from.x, dy = to.y - from.y, len = std::hypot(dx, dy);
  if (len <= 0) return;
  double ux = dx / len, uy = dy / len;
  Point base{to.x - ux * head, to.y - uy * head};
  Style s;
  s.stroke = colour;
  s.stroke_width = width;
  line(from, base, s);
  Point l{base.x - uy * head * 0.45, base.y + ux * head * 0.45};
  Point r{base.x + uy * head * 0.45, base.y - ux * head * 0.45};
  Style f;
  f.stroke = "";
  f.fill = colour;
  polyline({to, l, r}, f, true);
}

void Svg::text(Point p, const std::string& s, double size, const std::string& anchor,
               double rotate_deg, const std::string& colour, const std::string& weight) {
  body_ += "<text x=\"" + n2(p.x) + "\" y=\"" + n2(p.y) + "\" font-size=\"" + n2(size) +
           "\" text-anchor=\"" + anchor + "\" fill=\"" + colour + "\"";
  if (weight != "normal") body_ += " font-weight=\"" + weight + "\"";
  if (rotate_deg != 0.0)
    body_ += " transform=\"rotate(" + n2(-rotate_deg) + " " + n2(p.x) + " " + n2(p.y) + ")\"";
  body_ += ">" + xml_escape(s) + "</text>\n";
}

void Svg::image_rgb(double x, double y, double w, double h, int nx, int ny,
                    const std::vector<unsigned char>& rgb) {
  auto png = encode_png_rgb(nx, ny, rgb);
  body_ += "<image x=\"" + n2(x) + "\" y=\"" + n2(y) + "\" width=\"" + n2(w) + "\" height=\"" +
           n2(h) + "\" preserveAspectRatio=\"none\" style=\"image-rendering:pixelated\" href=\"data:image/png;base64," +
           base64(png) + "\"/>\n";
}

void Svg::marker(Point c, const std::string& shape, double size, const std::string& colour,
                 double width) {
  Style s;
  s.stroke = colour;
  s.stroke_width = width;
  double h = size / 2;
  if (shape == "plus") {
    line({c.x - h, c.y}, {c.x + h, c.y}, s);
    line({c.x, c.y - h}, {c.x, c.y + h}, s);
  } else if (shape == "cross") {
    line({c.x - h, c.y - h}, {c.x + h, c.y + h}, s);
    line({c.x - h, c.y + h}, {c.x + h, c.y - h}, s);
  } else if (shape == "square") {
    rect(c.x - h, c.y - h, size, size, s);
  } else if (shape == "diamond") {
    polyline({{c.x, c.y - h}, {c.x + h, c.y}, {c.x, c.y + h}, {c.x - h, c.y}}, s, true);
  } else if (shape == "star") {
    std::vector<Point> p;
    for (int k = 0; k < 10; ++k) {
      double r = (k % 2 == 0) ? h : h * 0.45;
      double a = -M_PI / 2 + k * M_PI / 5;
      p.push_back({c.x + r * std::cos(a), c.y + r * std::sin(a)});
    }
    polyline(p, s, true);
  } else {
    circle(c, h, s);
  }
}

void Svg::begin_clip(double x, double y, double w, double h) {
  std::string id = "clip" + std::to_string(clip_count_++);
  body_ += "<clipPath id=\"" + id + "\"><rect x=\"" + n2(x) + "\" y=\"" + n2(y) +
           "\" width=\"" + n2(w) + "\" height=\"" + n2(h) + "\"/></clipPath>\n<g clip-path=\"url(#" +
           id + ")\">\n";
}

void Svg::end_clip() { body_ += "</g>\n"; }

std::string Svg::str() const {
  // clipPath ids must be unique within an HTML page holding many figures:
  // they are made unique per figure from a hash of the body.
  std::string out = "<svg xmlns=\"http://www.w3.org/2000/svg\" viewBox=\"0 0 " + n2(width_) +
                    " " + n2(height_) + "\" width=\"" + n2(width_) + "\" height=\"" +
                    n2(height_) +
                    "\" font-family=\"DejaVu Sans, Helvetica, Arial, sans-serif\" role=\"img\">\n";
  if (!title_.empty()) out += "<title>" + xml_escape(title_) + "</title>\n";
  out += "<rect x=\"0\" y=\"0\" width=\"" + n2(width_) + "\" height=\"" + n2(height_) +
         "\" fill=\"#ffffff\"/>\n";
  std::string body = body_;
  if (clip_count_ > 0) {
    std::uint64_t h = 1469598103934665603ull;  // FNV-1a
    for (unsigned char ch : body_) h = (h ^ ch) * 1099511628211ull;
    char tag[24];
    std::snprintf(tag, sizeof tag, "f%012llx", static_cast<unsigned long long>(h & 0xffffffffffffull));
    std::string from1 = "id=\"clip", to1 = std::string("id=\"") + tag + "clip";
    std::string from2 = "url(#clip", to2 = std::string("url(#") + tag + "clip";
    for (auto [from, to] : {std::pair{from1, to1}, std::pair{from2, to2}}) {
      std::size_t pos = 0;
      while ((pos = body.find(from, pos)) != std::string::npos) {
        body.replace(pos, from.size(), to);
        pos += to.size();
      }
    }
  }
  out += body + "</svg>\n";
  return out;
}

void Svg::write(const std::string& path) const { write_text_file(path, str()); }

// ---- axes -----------------------------------------------------------------

double Axes::px(double x) const {
  double f = (x - xmin) / (xmax - xmin);
  if (x_reversed) f = 1 - f;
  return left + f * width;
}
double Axes::py(double y) const { return top + (1 - (y - ymin) / (ymax - ymin)) * height; }
double Axes::sx(double dx) const { return std::abs(dx) * width / std::abs(xmax - xmin); }
double Axes::sy(double dy) const { return std::abs(dy) * height / std::abs(ymax - ymin); }

std::vector<double> nice_ticks(double lo, double hi, int target) {
  std::vector<double> t;
  if (!(hi > lo) || !std::isfinite(lo) || !std::isfinite(hi)) return t;
  double raw = (hi - lo) / std::max(1, target);
  double mag = std::pow(10.0, std::floor(std::log10(raw)));
  double step = mag;
  for (double m : {1.0, 2.0, 2.5, 5.0, 10.0})
    if (m * mag >= raw) {
      step = m * mag;
      break;
    }
  double first = std::ceil(lo / step - 1e-9) * step;
  for (double v = first; v <= hi + step * 1e-9; v += step) t.push_back(std::abs(v) < step * 1e-9 ? 0.0 : v);
  return t;
}

std::string tick_label(double v, double step) {
  int dec = 0;
  if (step > 0 && step < 1) dec = static_cast<int>(std::ceil(-std::log10(step) - 1e-9));
  if (step > 0 && std::abs(step * std::pow(10.0, dec) - std::round(step * std::pow(10.0, dec))) > 1e-6) ++dec;
  std::string s = fixed_text(v, std::clamp(dec, 0, 6));
  if (!s.empty() && s[0] == '-') s = "\u2212" + s.substr(1);  // a real minus sign
  return s;
}

void Axes::draw(Svg& svg, const std::string& xlabel, const std::string& ylabel,
                const std::string& title) const {
  Style frame;
  frame.stroke = "#222222";
  frame.stroke_width = 1.2;
  svg.rect(left, top, width, height, frame);
  Style tick = frame;
  tick.stroke_width = 1.0;
  auto xt = nice_ticks(std::min(xmin, xmax), std::max(xmin, xmax), 5);
  double xstep = xt.size() > 1 ? xt[1] - xt[0] : 1.0;
  for (double v : xt) {
    double x = px(v);
    svg.line({x, top + height}, {x, top + height - 5}, tick);
    svg.line({x, top}, {x, top + 5}, tick);
    svg.text({x, top + height + 15}, tick_label(v, xstep), 11, "middle", 0, "#222222");
  }
  auto yt = nice_ticks(std::min(ymin, ymax), std::max(ymin, ymax), 5);
  double ystep = yt.size() > 1 ? yt[1] - yt[0] : 1.0;
  for (double v : yt) {
    double y = py(v);
    svg.line({left, y}, {left + 5, y}, tick);
    svg.line({left + width, y}, {left + width - 5, y}, tick);
    svg.text({left - 6, y + 4}, tick_label(v, ystep), 11, "end", 0, "#222222");
  }
  if (!xlabel.empty()) svg.text({left + width / 2, top + height + 34}, xlabel, 12.5, "middle");
  if (!ylabel.empty()) svg.text({left - 44, top + height / 2}, ylabel, 12.5, "middle", 90.0);
  if (!title.empty()) svg.text({left, top - 8}, title, 13.5, "start", 0, "#111111", "bold");
}

// ---- rasters and colour bars ---------------------------------------------------

void draw_grid(Svg& svg, const Axes& axes, const Grid& grid, ColourMapKind kind, double vmin,
               double vmax) {
  if (grid.nx <= 0 || grid.ny <= 0) return;
  std::vector<unsigned char> rgb(static_cast<std::size_t>(grid.nx) * grid.ny * 3);
  double span = (vmax > vmin) ? vmax - vmin : 1.0;
  for (int row = 0; row < grid.ny; ++row) {
    int j = grid.ny - 1 - row;  // top row of the picture is the largest y
    for (int col = 0; col < grid.nx; ++col) {
      int i = axes.x_reversed ? grid.nx - 1 - col : col;
      double v = grid.at(i, j);
      Rgb c = std::isfinite(v) ? colour_at(kind, (v - vmin) / span) : Rgb{0.93, 0.93, 0.93};
      auto b = c.bytes();
      std::size_t k = (static_cast<std::size_t>(row) * grid.nx + col) * 3;
      rgb[k] = b[0]; rgb[k + 1] = b[1]; rgb[k + 2] = b[2];
    }
  }
  double x0 = std::min(axes.px(grid.xmin), axes.px(grid.xmax));
  double x1 = std::max(axes.px(grid.xmin), axes.px(grid.xmax));
  double y0 = std::min(axes.py(grid.ymin), axes.py(grid.ymax));
  double y1 = std::max(axes.py(grid.ymin), axes.py(grid.ymax));
  svg.image_rgb(x0, y0, x1 - x0, y1 - y0, grid.nx, grid.ny, rgb);
}

void colour_bar(Svg& svg, double x, double y, double w, double h, ColourMapKind kind,
                double vmin, double vmax, const std::string& label) {
  const int n = 128;
  std::vector<unsigned char> rgb(static_cast<std::size_t>(n) * 3);
  for (int row = 0; row < n; ++row) {
    auto b = colour_at(kind, 1.0 - (row + 0.5) / n).bytes();
    rgb[row * 3] = b[0]; rgb[row * 3 + 1] = b[1]; rgb[row * 3 + 2] = b[2];
  }
  svg.image_rgb(x, y, w, h, 1, n, rgb);
  Style frame;
  frame.stroke = "#222222";
  svg.rect(x, y, w, h, frame);
  auto ticks = nice_ticks(vmin, vmax, 5);
  double step = ticks.size() > 1 ? ticks[1] - ticks[0] : 1.0;
  for (double v : ticks) {
    double yy = y + h * (1 - (v - vmin) / (vmax - vmin));
    svg.line({x + w, yy}, {x + w + 4, yy}, frame);
    svg.text({x + w + 6, yy + 4}, tick_label(v, step), 10.5, "start", 0, "#222222");
  }
  svg.text({x + w + 50, y + h / 2}, label, 12, "middle", 90.0);
}

// ---- marching squares ------------------------------------------------------------

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

void draw_contours(Svg& svg, const Axes& axes, const Grid& grid, double level, const Style& s) {
  for (const auto& line : contour_lines(grid, level)) {
    std::vector<Point> p;
    p.reserve(line.size());
    for (const auto& q : line) p.push_back(axes.at(q.x, q.y));
    svg.polyline(p, s);
  }
}

// ---- PNG ---------------------------------------------------------------------------

namespace {
std::uint32_t crc32(const unsigned char* p, std::size_t n, std::uint32_t crc = 0) {
  static const auto table = [] {
    std::array<std::uint32_t, 256> t{};
    for (std::uint32_t i = 0; i < 256; ++i) {
      std::uint32_t c = i;
      for (int k = 0; k < 8; ++k) c = (c & 1) ? 0xedb88320u ^ (c >> 1) : c >> 1;
      t[i] = c;
    }
    return t;
  }();
  crc = ~crc;
  for (std::size_t i = 0; i < n; ++i) crc = table[(crc ^ p[i]) & 0xff] ^ (crc >> 8);
  return ~crc;
}

void put32(std::vector<unsigned char>& v, std::uint32_t x) {
  v.push_back(x >> 24); v.push_back(x >> 16); v.push_back(x >> 8); v.push_back(x);
}

void chunk(std::vector<unsigned char>& out, const char* type, const std::vector<unsigned char>& data) {
  put32(out, static_cast<std::uint32_t>(data.size()));
  std::vector<unsigned char> td(type, type + 4);
  td.insert(td.end(), data.begin(), data.end());
  out.insert(out.end(), td.begin(), td.end());
  put32(out, crc32(td.data(), td.size()));
}
}  // namespace

std::vector<unsigned char> encode_png_rgb(int nx, int ny, const std::vector<unsigned char>& rgb) {
  FULCRUM_CHECK(rgb.size() == static_cast<std::size_t>(nx) * ny * 3, nx * ny * 3, rgb.size());
  std::vector<unsigned char> raw;  // filter byte 0 + row
  raw.reserve(static_cast<std::size_t>(ny) * (1 + 3 * nx));
  for (int y = 0; y < ny; ++y) {
    raw.push_back(0);
    raw.insert(raw.end(), rgb.begin() + static_cast<std::ptrdiff_t>(y) * nx * 3,
               rgb.begin() + static_cast<std::ptrdiff_t>(y + 1) * nx * 3);
  }
  std::vector<unsigned char> z{0x78, 0x01};  // zlib header: deflate, 32K window, no dict
  std::size_t pos = 0;
  do {
    std::size_t len = std::min<std::size_t>(65535, raw.size() - pos);
    bool last = pos + len == raw.size();
    z.push_back(last ? 1 : 0);
    z.push_back(len & 0xff); z.push_back(len >> 8);
    z.push_back(~len & 0xff); z.push_back((~len >> 8) & 0xff);
    z.insert(z.end(), raw.begin() + pos, raw.begin() + pos + len);
    pos += len;
  } while (pos < raw.size());
  std::uint32_t a = 1, b = 0;  // Adler-32 (RFC 1950)
  for (unsigned char c : raw) {
    a = (a + c) % 65521;
    b = (b + a) % 65521;
  }
  put32(z, (b << 16) | a);
  std::vector<unsigned char> out{0x89, 'P', 'N', 'G', '\r', '\n', 0x1a, '\n'};
  std::vector<unsigned char> ihdr;
  put32(ihdr, nx);
  put32(ihdr, ny);
  ihdr.insert(ihdr.end(), {8, 2, 0, 0, 0});  // 8-bit, truecolour, deflate, filter 0, no interlace
  chunk(out, "IHDR", ihdr);
  chunk(out, "IDAT", z);
  chunk(out, "IEND", {});
  return out;
}

std::string base64(const std::vector<unsigned char>& bytes) {
  static const char* tab = "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";
  std::string out;
  out.reserve((bytes.size() + 2) / 3 * 4);
  std::size_t i = 0;
  for (; i + 2 < bytes.size(); i += 3) {
    std::uint32_t v = (bytes[i] << 16) | (bytes[i + 1] << 8) | bytes[i + 2];
    out += tab[v >> 18]; out += tab[(v >> 12) & 63]; out += tab[(v >> 6) & 63]; out += tab[v & 63];
  }
  if (i + 1 == bytes.size()) {
    std::uint32_t v = bytes[i] << 16;
    out += tab[v >> 18]; out += tab[(v >> 12) & 63]; out += "==";
  } else if (i + 2 == bytes.size()) {
    std::uint32_t v = (bytes[i] << 16) | (bytes[i + 1] << 8);
    out += tab[v >> 18]; out += tab[(v >> 12) & 63]; out += tab[(v >> 6) & 63]; out += '=';
  }
  return out;
}

}  // namespace fulcrum::report
