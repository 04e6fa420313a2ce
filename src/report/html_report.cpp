// report.html for a sample (see the header).
#include "fulcrum/report/html_report.hpp"

#include <cctype>
#include <cmath>
#include <sstream>

#include "fulcrum/core/number_text.hpp"
#include "fulcrum/report/base64.hpp"

namespace fulcrum::report {

std::string html_escape(const std::string& s) {
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

namespace {

const char* kStyle = R"(
body { font-family: "DejaVu Sans", Helvetica, Arial, sans-serif; margin: 0 auto; max-width: 1180px;
       padding: 18px 28px 60px; color: #1d1d1d; background: #ffffff; line-height: 1.45; }
h1 { font-size: 26px; margin-bottom: 2px; }
h2 { font-size: 20px; margin-top: 38px; border-bottom: 1px solid #cccccc; padding-bottom: 4px; }
.sub { color: #555555; margin-top: 0; }
table.results { border-collapse: collapse; font-size: 12.5px; margin: 10px 0 6px; }
table.results th, table.results td { padding: 3px 8px; text-align: right; white-space: nowrap; }
table.results th { border-top: 2px solid #333333; border-bottom: 1px solid #333333; font-weight: 600; }
table.results tr:last-child td { border-bottom: 2px solid #333333; }
table.results td.text, table.results th.text { text-align: left; }
table.results th .unit { font-weight: normal; color: #666666; display: block; font-size: 11px; }
.scroll { overflow-x: auto; }
.verdict { display: inline-block; padding: 1px 9px; border-radius: 10px; font-weight: 600; font-size: 13px;
           border: 1.5px solid #333333; }
.v-robust { background: #dbe7fb; } .v-reversed { background: #f8dcd6; }
.v-marginal { background: #f1f1f1; } .v-centre-sensitive { background: #fdf0c8; }
.v-undetermined { background: #ffffff; border-style: dashed; }
.statement { font-size: 15px; margin: 8px 0 10px; }
.notes { color: #7a4b00; font-size: 13px; }
figure { margin: 14px 0 22px; }
figure img { max-width: 100%; height: auto; border: 1px solid #e4e4e4; }
figcaption { font-size: 12.5px; color: #444444; max-width: 900px; }
dl.stats { display: grid; grid-template-columns: max-content auto; gap: 2px 16px; font-size: 14px; }
dl.stats dt { color: #555555; } dl.stats dd { margin: 0; }
footer { margin-top: 50px; font-size: 12px; color: #666666; border-top: 1px solid #dddddd; padding-top: 8px; }
)";

// The figure as an <img> with its SVG in a data URI: each figure keeps its
// own document (cairo's element ids cannot clash between figures) and the
// page stays one file.
std::string figure_image(const HtmlFigure& f) {
  return "<img src=\"data:image/svg+xml;base64," + base64(f.svg) + "\" alt=\"" + html_escape(f.caption) + "\">\n";
}

std::string anchor(const std::string& s) {
  std::string out;
  for (char c : s) out += (std::isalnum(static_cast<unsigned char>(c)) || c == '-') ? c : '_';
  return out;
}

std::string cell(const Column& c, std::size_t i) {
  const std::string v = human_cell(c, i);
  return v.empty() ? "\u2013" : v;
}

}  // namespace

std::string sample_html(const HtmlSample& s) {
  std::ostringstream os;
  os << "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n"
     << "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n"
     << "<title>" << html_escape(s.title) << "</title>\n<style>" << kStyle << "</style>\n</head>\n<body>\n";
  os << "<h1>" << html_escape(s.title) << "</h1>\n<p class=\"sub\">" << html_escape(s.subtitle) << "</p>\n";
  os << "<h2 id=\"table\">Robustness table</h2>\n";
  if (!s.table.caption.empty()) os << "<p>" << html_escape(s.table.caption) << "</p>\n";
  os << "<div class=\"scroll\"><table class=\"results\">\n<tr>";
  for (const auto& c : s.table.columns) {
    os << "<th class=\"" << (c.is_string() ? "text" : "num") << "\" title=\"" << html_escape(c.description) << "\">"
       << html_escape(c.heading.empty() ? c.name : c.heading);
    if (!c.unit.empty()) os << "<span class=\"unit\">" << html_escape(c.unit) << "</span>";
    os << "</th>";
  }
  os << "</tr>\n";
  const std::size_t n = s.table.rows();
  for (std::size_t i = 0; i < n; ++i) {
    os << "<tr>";
    for (const auto& c : s.table.columns) {
      std::string v = cell(c, i);
      os << "<td class=\"" << (c.is_string() ? "text" : "num") << "\">";
      if (c.name == "galaxy") os << "<a href=\"#g-" << anchor(v) << "\">" << html_escape(v) << "</a>";
      else os << html_escape(v);
      os << "</td>";
    }
    os << "</tr>\n";
  }
  os << "</table></div>\n";
  if (!s.stats.empty()) {
    os << "<h2 id=\"sample\">Sample statistics</h2>\n<dl class=\"stats\">\n";
    for (const auto& [k, v] : s.stats) os << "<dt>" << html_escape(k) << "</dt><dd>" << html_escape(v) << "</dd>\n";
    os << "</dl>\n";
  }
  for (const auto& g : s.galaxies) {
    os << "<section class=\"galaxy\" id=\"g-" << anchor(g.name) << "\">\n<h2>" << html_escape(g.name)
       << " <span class=\"verdict v-" << anchor(g.verdict) << "\">" << html_escape(g.verdict) << "</span></h2>\n";
    os << "<p class=\"statement\">" << html_escape(g.statement) << "</p>\n";
    for (const auto& note : g.notes) os << "<p class=\"notes\">" << html_escape(note) << "</p>\n";
    for (const auto& f : g.figures) {
      os << "<figure id=\"g-" << anchor(g.name) << "-" << anchor(f.id) << "\" class=\"figure\">\n"
         << figure_image(f) << "<figcaption>" << html_escape(f.caption) << "</figcaption>\n</figure>\n";
    }
    os << "</section>\n";
  }
  os << "<footer>" << html_escape(s.footer) << "</footer>\n</body>\n</html>\n";
  return os.str();
}

}  // namespace fulcrum::report
