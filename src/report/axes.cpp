// Data axes, ticks and tick labels (see the header).
#include "fulcrum/report/axes.hpp"

#include <algorithm>
#include <cmath>

#include "fulcrum/core/number_text.hpp"

namespace fulcrum::report {

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
  const double raw = (hi - lo) / std::max(1, target);
  const double mag = std::pow(10.0, std::floor(std::log10(raw)));
  double step = mag;
  for (double m : {1.0, 2.0, 2.5, 5.0, 10.0})
    if (m * mag >= raw) {
      step = m * mag;
      break;
    }
  const double first = std::ceil(lo / step - 1e-9) * step;
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

void Axes::draw(Canvas& canvas, const std::string& xlabel, const std::string& ylabel,
                const std::string& title) const {
  Style frame;
  frame.stroke = "#222222";
  frame.stroke_width = 1.2;
  canvas.rect(left, top, width, height, frame);
  Style tick = frame;
  tick.stroke_width = 1.0;
  const auto xt = nice_ticks(std::min(xmin, xmax), std::max(xmin, xmax), 5);
  const double xstep = xt.size() > 1 ? xt[1] - xt[0] : 1.0;
  for (double v : xt) {
    const double x = px(v);
    canvas.line({x, top + height}, {x, top + height - 5}, tick);
    canvas.line({x, top}, {x, top + 5}, tick);
    canvas.text({x, top + height + 15}, tick_label(v, xstep), 11, "middle", 0, "#222222");
  }
  const auto yt = nice_ticks(std::min(ymin, ymax), std::max(ymin, ymax), 5);
  const double ystep = yt.size() > 1 ? yt[1] - yt[0] : 1.0;
  for (double v : yt) {
    const double y = py(v);
    canvas.line({left, y}, {left + 5, y}, tick);
    canvas.line({left + width, y}, {left + width - 5, y}, tick);
    canvas.text({left - 6, y + 4}, tick_label(v, ystep), 11, "end", 0, "#222222");
  }
  if (!xlabel.empty()) canvas.text({left + width / 2, top + height + 34}, xlabel, 12.5, "middle");
  if (!ylabel.empty()) canvas.text({left - 44, top + height / 2}, ylabel, 12.5, "middle", 90.0);
  if (!title.empty()) canvas.text({left, top - 8}, title, 13.5, "start", 0, "#111111", "bold");
}

}  // namespace fulcrum::report
