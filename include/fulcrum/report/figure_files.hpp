// A Canvas (report/canvas.hpp) painted by cairo into SVG, PDF and PNG.
//
// Sizes: canvas units are CSS pixels. The SVG keeps them (width and height
// in px); the PDF page is 0.75 pt per canvas unit (1 px = 1/96 in = 0.75 pt),
// so a 780 x 480 figure is a 585 x 360 pt page; the PNG has kPngScale pixels
// per canvas unit (a 780 x 480 figure is 1560 x 960 pixels), white
// background, RGB.
//
// Text is drawn with cairo's simple text API in the generic "sans-serif"
// family (DejaVu Sans on Debian) and turned into outlines in SVG and
// embedded as a font subset in PDF, so no file needs the font to be shown.
// Rasters are drawn with sharp pixel edges: nearest-neighbour in the PNG,
// and in SVG and PDF enlarged by a whole factor beforehand, so that viewers
// which smooth images still show the data pixels.
//
// Reproducible: the same canvas gives the same bytes. The PDF carries no
// clock time: its creation date is SOURCE_DATE_EPOCH when that is set (the
// reproducible-builds convention), else it has none.
//
// Atomic: write_figure renders all three files in memory and then writes
// each to a temporary name and renames it (io/atomic_file.hpp), so a
// failure never leaves a half-written file.
#pragma once

#include <string>

#include "fulcrum/report/canvas.hpp"

namespace fulcrum::report {

enum class FigureFormat { svg, pdf, png };

inline constexpr double kPngScale = 2.0;          // PNG pixels per canvas unit
inline constexpr double kPdfPointsPerUnit = 0.75;  // PDF points per canvas unit

// The complete file contents of `canvas` in `format`.
std::string figure_bytes(const Canvas& canvas, FigureFormat format);
// STEM.svg, STEM.pdf and STEM.png (STEM is a path without extension).
void write_figure(const Canvas& canvas, const std::string& stem);
// The extension of a format, with its dot: ".svg", ".pdf", ".png".
std::string figure_extension(FigureFormat format);

}  // namespace fulcrum::report
