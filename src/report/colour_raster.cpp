// Colour-mapped rasters and colour bars (see the header).
#include "fulcrum/report/colour_raster.hpp"

#include <algorithm>
#include <cmath>

namespace fulcrum::report {

void draw_grid(Canvas& canvas, const Axes& axes, const Grid& grid, ColourMapKind kind, double vmin,
               double vmax) {
  if (grid.nx <= 0 || grid.ny <= 0) return;
  std::vector<unsigned char> rgb(static_cast<std::size_t>(grid.nx) * grid.ny * 3);
  const double span = (vmax > vmin) ? vmax - vmin : 1.0;
  for (int row = 0; row < grid.ny; ++row) {
    const int j = grid.ny - 1 - row;  // top row of the picture is the largest y
    for (int col = 0; col < grid.nx; ++col) {
      const int i = axes.x_reversed ? grid.nx - 1 - col : col;
      const double v = grid.at(i, j);
      const Rgb c = std::isfinite(v) ? colour_at(kind, (v - vmin) / span) : Rgb{0.93, 0.93, 0.93};
      const auto b = c.bytes();
      const std::size_t k = (static_cast<std::size_t>(row) * grid.nx + col) * 3;
      rgb[k] = b[0], rgb[k + 1] = b[1], rgb[k + 2] = b[2];
    }
  }
  const double x0 = std::min(axes.px(grid.xmin), axes.px(grid.xmax));
  const double x1 = std::max(axes.px(grid.xmin), axes.px(grid.xmax));
  const double y0 = std::min(axes.py(grid.ymin), axes.py(grid.ymax));
  const double y1 = std::max(axes.py(grid.ymin), axes.py(grid.ymax));
  canvas.image_rgb(x0, y0, x1 - x0, y1 - y0, grid.nx, grid.ny, rgb);
}

void colour_bar(Canvas& canvas, double x, double y, double w, double h, ColourMapKind kind,
                double vmin, double vmax, const std::string& label) {
  const int n = 128;
  std::vector<unsigned char> rgb(static_cast<std::size_t>(n) * 3);
  for (int row = 0; row < n; ++row) {
    const auto b = colour_at(kind, 1.0 - (row + 0.5) / n).bytes();
    rgb[row * 3] = b[0], rgb[row * 3 + 1] = b[1], rgb[row * 3 + 2] = b[2];
  }
  canvas.image_rgb(x, y, w, h, 1, n, rgb);
  Style frame;
  frame.stroke = "#222222";
  canvas.rect(x, y, w, h, frame);
  const auto ticks = nice_ticks(vmin, vmax, 5);
  const double step = ticks.size() > 1 ? ticks[1] - ticks[0] : 1.0;
  double widest = 0;  // the label goes right of the longest tick label
  for (double v : ticks) {
    const double yy = y + h * (1 - (v - vmin) / (vmax - vmin));
    canvas.line({x + w, yy}, {x + w + 4, yy}, frame);
    const std::string t = tick_label(v, step);
    canvas.text({x + w + 6, yy + 4}, t, 10.5, "start", 0, "#222222");
    const auto glyphs = std::count_if(t.begin(), t.end(), [](char c) { return (c & 0xC0) != 0x80; });
    widest = std::max(widest, 6.2 * static_cast<double>(glyphs));  // ~ width of a 10.5 px digit
  }
  canvas.text({x + w + 6 + std::max(widest, 18.0) + 14, y + h / 2}, label, 12, "middle", 90.0);
}

}  // namespace fulcrum::report
