// Recording the drawing operations of a figure (see the header).
#include "fulcrum/report/canvas.hpp"

#include <cmath>
#include <numbers>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/number_text.hpp"

namespace fulcrum::report {

namespace {
std::string n2(double v) { return fixed_text(v, 2); }

std::string style_text(const Style& s) {
  std::string t = " stroke=" + (s.stroke.empty() ? std::string("none") : s.stroke);
  if (!s.stroke.empty()) t += " width=" + n2(s.stroke_width);
  t += " fill=" + (s.fill.empty() ? std::string("none") : s.fill);
  if (!s.dash.empty()) t += " dash=" + s.dash;
  if (s.opacity < 1.0) t += " opacity=" + n2(s.opacity);
  if (!s.halo.empty()) t += " halo=" + s.halo + "/" + n2(s.halo_width);
  return t;
}
}  // namespace

Canvas::Canvas(double width, double height, std::string title)
    : width_(width), height_(height), title_(std::move(title)) {
  FULCRUM_CHECK(width > 0 && height > 0, "a positive canvas size", n2(width) + " x " + n2(height));
}

void Canvas::line(Point a, Point b, const Style& s) {
  CanvasOp op;
  op.kind = CanvasOp::Kind::line;
  op.points = {a, b};
  op.style = s;
  ops_.push_back(std::move(op));
}

void Canvas::polyline(const std::vector<Point>& pts, const Style& s, bool closed) {
  if (pts.size() < 2) return;
  CanvasOp op;
  op.kind = CanvasOp::Kind::polyline;
  op.points = pts;
  op.closed = closed;
  op.style = s;
  ops_.push_back(std::move(op));
}

void Canvas::rect(double x, double y, double w, double h, const Style& s) {
  CanvasOp op;
  op.kind = CanvasOp::Kind::rect;
  op.x = x, op.y = y, op.w = w, op.h = h;
  op.style = s;
  ops_.push_back(std::move(op));
}

void Canvas::circle(Point c, double r, const Style& s) {
  CanvasOp op;
  op.kind = CanvasOp::Kind::circle;
  op.points = {c};
  op.rx = op.ry = r;
  op.style = s;
  ops_.push_back(std::move(op));
}

void Canvas::ellipse(Point c, double rx, double ry, double rotation_deg, const Style& s) {
  CanvasOp op;
  op.kind = CanvasOp::Kind::ellipse;
  op.points = {c};
  op.rx = rx, op.ry = ry, op.rotation_deg = rotation_deg;
  op.style = s;
  ops_.push_back(std::move(op));
}

void Canvas::arrow(Point from, Point to, const std::string& colour, double width, double head,
                   const std::string& halo) {
  const double dx = to.x - from.x, dy = to.y - from.y, len = std::hypot(dx, dy);
  if (!(len > 0)) return;
  const double ux = dx / len, uy = dy / len;
  const Point base{to.x - ux * head, to.y - uy * head};
  const Point l{base.x - uy * head * 0.45, base.y + ux * head * 0.45};
  const Point r{base.x + uy * head * 0.45, base.y - ux * head * 0.45};
  Style s;
  s.stroke = colour;
  s.stroke_width = width;
  s.halo = halo;
  s.halo_width = 0.5 * width + 0.5;
  Style f;
  f.stroke = "";
  f.fill = colour;
  f.halo = halo;
  f.halo_width = s.halo_width;
  if (!halo.empty()) {
    // Both halos first, so that the head's halo does not cover the shaft.
    Style hs = s, hf = f;
    hs.stroke = hs.halo;
    hs.stroke_width = width + 2 * s.halo_width;
    hs.halo.clear();
    hf.stroke = hf.halo;
    hf.stroke_width = 2 * f.halo_width;
    hf.fill = hf.halo;
    hf.halo.clear();
    line(from, base, hs);
    polyline({to, l, r}, hf, true);
    s.halo.clear();
    f.halo.clear();
  }
  line(from, base, s);
  polyline({to, l, r}, f, true);
}

void Canvas::text(Point p, const std::string& s, double size, const std::string& anchor,
                  double rotate_deg, const std::string& colour, const std::string& weight,
                  const std::string& halo) {
  FULCRUM_CHECK(anchor == "start" || anchor == "middle" || anchor == "end", "start, middle or end", anchor);
  CanvasOp op;
  op.kind = CanvasOp::Kind::text;
  op.points = {p};
  op.text = s;
  op.size = size;
  op.anchor = anchor;
  op.rotation_deg = rotate_deg;
  op.colour = colour;
  op.bold = weight == "bold";
  op.halo = halo;
  op.halo_width = halo.empty() ? 0.0 : std::max(1.5, 0.2 * size);
  ops_.push_back(std::move(op));
}

void Canvas::image_rgb(double x, double y, double w, double h, int nx, int ny,
                       const std::vector<unsigned char>& rgb) {
  FULCRUM_CHECK(nx > 0 && ny > 0 && rgb.size() == static_cast<std::size_t>(nx) * ny * 3,
                std::to_string(nx) + " x " + std::to_string(ny) + " x 3 bytes", rgb.size());
  CanvasOp op;
  op.kind = CanvasOp::Kind::image;
  op.x = x, op.y = y, op.w = w, op.h = h;
  op.nx = nx, op.ny = ny;
  op.rgb = std::make_shared<const std::vector<unsigned char>>(rgb);
  ops_.push_back(std::move(op));
}

void Canvas::marker(Point c, const std::string& shape, double size, const std::string& colour,
                    double width) {
  Style s;
  s.stroke = colour;
  s.stroke_width = width;
  const double h = size / 2;
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
      const double r = (k % 2 == 0) ? h : h * 0.45;
      const double a = -std::numbers::pi / 2 + k * std::numbers::pi / 5;
      p.push_back({c.x + r * std::cos(a), c.y + r * std::sin(a)});
    }
    polyline(p, s, true);
  } else {
    circle(c, h, s);
  }
}

void Canvas::begin_clip(double x, double y, double w, double h) {
  CanvasOp op;
  op.kind = CanvasOp::Kind::begin_clip;
  op.x = x, op.y = y, op.w = w, op.h = h;
  ops_.push_back(std::move(op));
  ++open_clips_;
}

void Canvas::end_clip() {
  FULCRUM_CHECK(open_clips_ > 0, "an open clip", "none");
  CanvasOp op;
  op.kind = CanvasOp::Kind::end_clip;
  ops_.push_back(std::move(op));
  --open_clips_;
}

std::string Canvas::listing() const {
  std::string out = "canvas " + n2(width_) + " x " + n2(height_) + " " + title_ + "\n";
  auto pts = [](const std::vector<Point>& v) {
    std::string t;
    for (const auto& p : v) {
      t += ' ';
      t += n2(p.x);
      t += ',';
      t += n2(p.y);
    }
    return t;
  };
  for (const auto& op : ops_) {
    using K = CanvasOp::Kind;
    switch (op.kind) {
      case K::line: out += "line" + pts(op.points) + style_text(op.style); break;
      case K::polyline:
        out += std::string(op.closed ? "polygon" : "polyline") + pts(op.points) + style_text(op.style);
        break;
      case K::rect:
        out += "rect " + n2(op.x) + "," + n2(op.y) + " " + n2(op.w) + "x" + n2(op.h) + style_text(op.style);
        break;
      case K::circle: out += "circle" + pts(op.points) + " r=" + n2(op.rx) + style_text(op.style); break;
      case K::ellipse:
        out += "ellipse" + pts(op.points) + " rx=" + n2(op.rx) + " ry=" + n2(op.ry) +
               " rotation=" + n2(op.rotation_deg) + style_text(op.style);
        break;
      case K::text:
        out += "text" + pts(op.points) + " size=" + n2(op.size) + " " + op.anchor +
               " rotate=" + n2(op.rotation_deg) + " colour=" + op.colour + (op.bold ? " bold" : "") +
               (op.halo.empty() ? "" : " halo=" + op.halo) + " | " + op.text;
        break;
      case K::image:
        out += "image " + n2(op.x) + "," + n2(op.y) + " " + n2(op.w) + "x" + n2(op.h) + " pixels " +
               std::to_string(op.nx) + "x" + std::to_string(op.ny);
        break;
      case K::begin_clip:
        out += "clip " + n2(op.x) + "," + n2(op.y) + " " + n2(op.w) + "x" + n2(op.h);
        break;
      case K::end_clip: out += "end-clip"; break;
    }
    out += "\n";
  }
  return out;
}

}  // namespace fulcrum::report
