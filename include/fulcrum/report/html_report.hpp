// The self-contained sample report (report.html): the robustness table, the
// sample statistics, and for each galaxy its verdict sentence and figures.
//
// Self-contained means: inline CSS, each SVG figure in an <img> as a base64
// data URI (rasters inside it as PNG data URIs), no scripts, fonts, images or style sheets fetched from
// anywhere, so the file can be mailed to a co-author or attached to a
// referee reply and opens the same offline.
#pragma once

#include <string>
#include <utility>
#include <vector>

#include "fulcrum/report/table.hpp"

namespace fulcrum::report {

struct HtmlFigure {
  std::string id;       // anchor and file stem, e.g. "intensity"
  std::string caption;  // one sentence under the figure
  std::string svg;      // the complete SVG file (figures/<id>.svg)
};

struct HtmlGalaxy {
  std::string name;
  std::string verdict;
  std::string statement;
  std::vector<std::string> notes;  // missing stages, warnings
  std::vector<HtmlFigure> figures;
};

struct HtmlSample {
  std::string title;
  std::string subtitle;                                     // e.g. "7 galaxies, seed 7"
  Table table;                                              // the robustness table
  std::vector<std::pair<std::string, std::string>> stats;   // label, value
  std::vector<HtmlGalaxy> galaxies;
  std::string footer;                                       // software, provenance
};

std::string html_escape(const std::string& s);
std::string sample_html(const HtmlSample& sample);

}  // namespace fulcrum::report
