// Painting a Canvas with cairo into SVG, PDF and PNG (see the header).
#include "fulcrum/report/figure_files.hpp"

#include <cairo-pdf.h>
#include <cairo-svg.h>
#include <cairo.h>

#include <algorithm>
#include <cctype>
#include <map>
#include <cmath>
#include <cstdint>
#include <cstdlib>
#include <ctime>
#include <memory>
#include <numbers>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/version.hpp"
#include "fulcrum/io/atomic_file.hpp"

namespace fulcrum::report {

namespace {

struct Colour {
  double r = 0, g = 0, b = 0;
};

int hex_digit(char c) {
  if (c >= '0' && c <= '9') return c - '0';
  if (c >= 'a' && c <= 'f') return c - 'a' + 10;
  if (c >= 'A' && c <= 'F') return c - 'A' + 10;
  return -1;
}

// "#rrggbb" or "#rgb".
Colour parse_colour(const std::string& s) {
  const bool ok = (s.size() == 7 || s.size() == 4) && s[0] == '#' &&
                  std::all_of(s.begin() + 1, s.end(), [](char c) { return hex_digit(c) >= 0; });
  FULCRUM_CHECK(ok, "a colour #rrggbb or #rgb", s);
  if (s.size() == 4)
    return {hex_digit(s[1]) / 15.0, hex_digit(s[2]) / 15.0, hex_digit(s[3]) / 15.0};
  auto byte = [&](int k) { return (hex_digit(s[k]) * 16 + hex_digit(s[k + 1])) / 255.0; };
  return {byte(1), byte(3), byte(5)};
}

void set_colour(cairo_t* cr, const std::string& hex, double opacity = 1.0) {
  const Colour c = parse_colour(hex);
  if (opacity < 1.0) cairo_set_source_rgba(cr, c.r, c.g, c.b, opacity);
  else cairo_set_source_rgb(cr, c.r, c.g, c.b);
}

std::vector<double> dash_lengths(const std::string& dash) {
  std::vector<double> d;
  const char* p = dash.c_str();
  char* end = nullptr;
  for (double v = std::strtod(p, &end); end != p; v = std::strtod(p, &end)) {
    d.push_back(v);
    p = end;
  }
  return d;
}

// The current path: halo, fill, stroke, in that order; then cleared.
void fill_and_stroke(cairo_t* cr, const Style& s) {
  if (!s.halo.empty()) {
    cairo_set_dash(cr, nullptr, 0, 0);
    cairo_set_line_width(cr, (s.stroke.empty() ? 0.0 : s.stroke_width) + 2 * s.halo_width);
    cairo_set_line_join(cr, CAIRO_LINE_JOIN_ROUND);
    set_colour(cr, s.halo, s.opacity);
    cairo_stroke_preserve(cr);
    cairo_set_line_join(cr, CAIRO_LINE_JOIN_MITER);
  }
  if (!s.fill.empty()) {
    set_colour(cr, s.fill, s.opacity);
    cairo_fill_preserve(cr);
  }
  if (!s.stroke.empty()) {
    const auto d = dash_lengths(s.dash);
    cairo_set_dash(cr, d.empty() ? nullptr : d.data(), static_cast<int>(d.size()), 0);
    cairo_set_line_width(cr, s.stroke_width);
    set_colour(cr, s.stroke, s.opacity);
    cairo_stroke_preserve(cr);
  }
  cairo_new_path(cr);
}

void paint_path_op(cairo_t* cr, const CanvasOp& op) {
  using K = CanvasOp::Kind;
  cairo_new_path(cr);
  cairo_set_line_join(cr, op.kind == K::polyline ? CAIRO_LINE_JOIN_ROUND : CAIRO_LINE_JOIN_MITER);
  if (op.kind == K::line || op.kind == K::polyline) {
    cairo_move_to(cr, op.points[0].x, op.points[0].y);
    for (std::size_t i = 1; i < op.points.size(); ++i) cairo_line_to(cr, op.points[i].x, op.points[i].y);
    if (op.closed) cairo_close_path(cr);
  } else if (op.kind == K::rect) {
    cairo_rectangle(cr, op.x, op.y, op.w, op.h);
  } else {  // circle, ellipse: a unit circle scaled; the path keeps device coordinates
    if (!(op.rx > 0) || !(op.ry > 0)) return;
    cairo_save(cr);
    cairo_translate(cr, op.points[0].x, op.points[0].y);
    cairo_rotate(cr, op.rotation_deg * std::numbers::pi / 180.0);
    cairo_scale(cr, op.rx, op.ry);
    cairo_arc(cr, 0, 0, 1, 0, 2 * std::numbers::pi);
    cairo_close_path(cr);
    cairo_restore(cr);
  }
  fill_and_stroke(cr, op.style);
}

void paint_text(cairo_t* cr, const CanvasOp& op) {
  if (op.text.empty()) return;
  cairo_select_font_face(cr, "sans-serif", CAIRO_FONT_SLANT_NORMAL,
                         op.bold ? CAIRO_FONT_WEIGHT_BOLD : CAIRO_FONT_WEIGHT_NORMAL);
  cairo_set_font_size(cr, op.size);
  cairo_text_extents_t ext;
  cairo_text_extents(cr, op.text.c_str(), &ext);
  const double dx = op.anchor == "middle" ? -0.5 * ext.x_advance : (op.anchor == "end" ? -ext.x_advance : 0.0);
  cairo_save(cr);
  cairo_translate(cr, op.points[0].x, op.points[0].y);
  cairo_rotate(cr, -op.rotation_deg * std::numbers::pi / 180.0);
  if (!op.halo.empty()) {  // the glyph outlines, stroked wide
    cairo_new_path(cr);
    cairo_move_to(cr, dx, 0);
    cairo_text_path(cr, op.text.c_str());
    cairo_set_dash(cr, nullptr, 0, 0);
    cairo_set_line_width(cr, 2 * op.halo_width);
    cairo_set_line_join(cr, CAIRO_LINE_JOIN_ROUND);
    set_colour(cr, op.halo);
    cairo_stroke(cr);
  }
  // Glyphs, not paths: shared glyph symbols in SVG, real (searchable) text in PDF.
  cairo_new_path(cr);
  cairo_move_to(cr, dx, 0);
  set_colour(cr, op.colour);
  cairo_show_text(cr, op.text.c_str());
  cairo_new_path(cr);
  cairo_restore(cr);
}

// Vector outputs get the raster enlarged by a whole factor (each data pixel
// a k x k block, at least ~2 blocks per canvas unit of the drawn size, at
// most 1600 pixels a side), so that viewers that smooth images still show
// sharp data pixels.
int enlargement(const CanvasOp& op, bool vector) {
  if (!vector) return 1;
  const double want = std::ceil(2.0 * std::max(op.w / op.nx, op.h / op.ny));
  const int most = std::max(1, 1600 / std::max(op.nx, op.ny));
  return std::clamp(static_cast<int>(want), 1, most);
}

void paint_image(cairo_t* cr, const CanvasOp& op, bool vector) {
  const int k = enlargement(op, vector);
  const int w = op.nx * k, h = op.ny * k;
  cairo_surface_t* img = cairo_image_surface_create(CAIRO_FORMAT_RGB24, w, h);
  std::unique_ptr<cairo_surface_t, decltype(&cairo_surface_destroy)> guard(img, &cairo_surface_destroy);
  FULCRUM_CHECK(cairo_surface_status(img) == CAIRO_STATUS_SUCCESS, "an image surface",
                cairo_status_to_string(cairo_surface_status(img)));
  cairo_surface_flush(img);
  unsigned char* data = cairo_image_surface_get_data(img);
  const int stride = cairo_image_surface_get_stride(img);
  const auto& rgb = *op.rgb;
  for (int y = 0; y < h; ++y) {
    auto* row = reinterpret_cast<std::uint32_t*>(data + static_cast<std::ptrdiff_t>(y) * stride);
    for (int x = 0; x < w; ++x) {
      const std::size_t s = (static_cast<std::size_t>(y / k) * op.nx + x / k) * 3;
      row[x] = (std::uint32_t{rgb[s]} << 16) | (std::uint32_t{rgb[s + 1]} << 8) | rgb[s + 2];
    }
  }
  cairo_surface_mark_dirty(img);
  cairo_save(cr);
  cairo_translate(cr, op.x, op.y);
  cairo_scale(cr, op.w / w, op.h / h);
  cairo_set_source_surface(cr, img, 0, 0);
  cairo_pattern_set_filter(cairo_get_source(cr), CAIRO_FILTER_NEAREST);
  cairo_new_path(cr);
  cairo_rectangle(cr, 0, 0, w, h);
  cairo_fill(cr);
  cairo_restore(cr);
}

void paint(cairo_t* cr, const Canvas& canvas, bool vector) {
  cairo_font_options_t* fo = cairo_font_options_create();
  cairo_font_options_set_hint_metrics(fo, CAIRO_HINT_METRICS_OFF);  // the same advances in every format
  cairo_font_options_set_hint_style(fo, CAIRO_HINT_STYLE_NONE);
  cairo_set_font_options(cr, fo);
  cairo_font_options_destroy(fo);
  cairo_set_source_rgb(cr, 1, 1, 1);
  cairo_paint(cr);
  for (const auto& op : canvas.ops()) {
    using K = CanvasOp::Kind;
    switch (op.kind) {
      case K::text: paint_text(cr, op); break;
      case K::image: paint_image(cr, op, vector); break;
      case K::begin_clip:
        cairo_save(cr);
        cairo_new_path(cr);
        cairo_rectangle(cr, op.x, op.y, op.w, op.h);
        cairo_clip(cr);
        break;
      case K::end_clip: cairo_restore(cr); break;
      default: paint_path_op(cr, op); break;
    }
  }
  FULCRUM_CHECK(cairo_status(cr) == CAIRO_STATUS_SUCCESS, "cairo drawing without error",
                cairo_status_to_string(cairo_status(cr)));
}

cairo_status_t append(void* closure, const unsigned char* data, unsigned int length) {
  static_cast<std::string*>(closure)->append(reinterpret_cast<const char*>(data), length);
  return CAIRO_STATUS_SUCCESS;
}

// SOURCE_DATE_EPOCH as an ISO 8601 UTC date, or "" (no date) when unset.
std::string pdf_date() {
  const char* e = std::getenv("SOURCE_DATE_EPOCH");
  if (!e) return "";
  char* end = nullptr;
  const long long v = std::strtoll(e, &end, 10);
  if (!end || *end != '\0' || end == e || v < 0) return "";
  const std::time_t t = static_cast<std::time_t>(v);
  std::tm tm{};
  gmtime_r(&t, &tm);
  char buf[32];
  std::strftime(buf, sizeof buf, "%Y-%m-%dT%H:%M:%SZ", &tm);
  return buf;
}

void finish(cairo_t* cr, cairo_surface_t* surface) {
  cairo_destroy(cr);
  cairo_surface_finish(surface);
  const cairo_status_t st = cairo_surface_status(surface);
  cairo_surface_destroy(surface);
  FULCRUM_CHECK(st == CAIRO_STATUS_SUCCESS, "cairo output without error", cairo_status_to_string(st));
}

// cairo numbers some SVG element ids ("surface680", "image605") from
// counters shared by the whole process, so the same figure would get other
// ids after other figures, or when figures are drawn on several threads.
// Renumbered here in order of first appearance (within each prefix), the
// file depends on the canvas only. Ids and references appear as "NAME or
// #NAME; the glyphs are outlines, so no text can contain them.
std::string renumber_svg_ids(const std::string& svg) {
  static const char* const prefixes[] = {"surface", "image", "pattern", "clip", "mask", "filter", "source"};
  std::map<std::string, std::map<std::string, int>> seen;  // prefix -> old number -> new number
  std::string out;
  out.reserve(svg.size());
  std::size_t i = 0;
  while (i < svg.size()) {
    const char c = svg[i];
    out += c;
    ++i;
    if (c != '"' && c != '#') continue;
    for (const char* prefix : prefixes) {
      const std::size_t n = std::char_traits<char>::length(prefix);
      if (svg.compare(i, n, prefix) != 0) continue;
      std::size_t j = i + n;
      while (j < svg.size() && std::isdigit(static_cast<unsigned char>(svg[j]))) ++j;
      if (j == i + n) continue;
      auto& numbers = seen[prefix];
      const auto it = numbers.try_emplace(svg.substr(i + n, j - i - n), static_cast<int>(numbers.size()) + 1).first;
      out += prefix + std::to_string(it->second);
      i = j;
      break;
    }
  }
  return out;
}

std::string svg_bytes(const Canvas& canvas) {
  std::string out;
  cairo_surface_t* s = cairo_svg_surface_create_for_stream(append, &out, canvas.width(), canvas.height());
  cairo_svg_surface_set_document_unit(s, CAIRO_SVG_UNIT_PX);
  cairo_t* cr = cairo_create(s);
  paint(cr, canvas, true);
  finish(cr, s);
  return renumber_svg_ids(out);
}

std::string pdf_bytes(const Canvas& canvas) {
  std::string out;
  cairo_surface_t* s = cairo_pdf_surface_create_for_stream(append, &out, canvas.width() * kPdfPointsPerUnit,
                                                           canvas.height() * kPdfPointsPerUnit);
  cairo_pdf_surface_set_metadata(s, CAIRO_PDF_METADATA_CREATE_DATE, pdf_date().c_str());
  cairo_pdf_surface_set_metadata(s, CAIRO_PDF_METADATA_TITLE, canvas.title().c_str());
  cairo_pdf_surface_set_metadata(s, CAIRO_PDF_METADATA_CREATOR, ("fulcrum " + version_string()).c_str());
  cairo_t* cr = cairo_create(s);
  cairo_scale(cr, kPdfPointsPerUnit, kPdfPointsPerUnit);
  paint(cr, canvas, true);
  finish(cr, s);
  return out;
}

std::string png_bytes(const Canvas& canvas) {
  const int w = static_cast<int>(std::lround(canvas.width() * kPngScale));
  const int h = static_cast<int>(std::lround(canvas.height() * kPngScale));
  cairo_surface_t* s = cairo_image_surface_create(CAIRO_FORMAT_RGB24, w, h);
  cairo_t* cr = cairo_create(s);
  cairo_scale(cr, kPngScale, kPngScale);
  paint(cr, canvas, false);
  cairo_destroy(cr);
  std::string out;
  const cairo_status_t st = cairo_surface_write_to_png_stream(s, append, &out);
  cairo_surface_destroy(s);
  FULCRUM_CHECK(st == CAIRO_STATUS_SUCCESS, "a PNG without error", cairo_status_to_string(st));
  return out;
}

}  // namespace

std::string figure_extension(FigureFormat format) {
  switch (format) {
    case FigureFormat::svg: return ".svg";
    case FigureFormat::pdf: return ".pdf";
    case FigureFormat::png: return ".png";
  }
  return "";
}

std::string figure_bytes(const Canvas& canvas, FigureFormat format) {
  switch (format) {
    case FigureFormat::svg: return svg_bytes(canvas);
    case FigureFormat::pdf: return pdf_bytes(canvas);
    case FigureFormat::png: return png_bytes(canvas);
  }
  return "";
}

void write_figure(const Canvas& canvas, const std::string& stem) {
  // Everything is rendered before the first file is written.
  const FigureFormat formats[] = {FigureFormat::svg, FigureFormat::pdf, FigureFormat::png};
  std::vector<std::string> bytes;
  for (FigureFormat f : formats) bytes.push_back(figure_bytes(canvas, f));
  for (std::size_t i = 0; i < bytes.size(); ++i) write_text_file(stem + figure_extension(formats[i]), bytes[i]);
}

}  // namespace fulcrum::report
