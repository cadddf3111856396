// Axes of the xy plots and the heat map: scales, nice ticks, grid, frame layout, titles and legend placement.
#include "plot_draw.hpp"

#include <cairo.h>

#include <algorithm>
#include <cmath>

#include <fmt/format.h>

namespace swaybound::plot::detail {

namespace {

double tick_step(const std::vector<double>& t) { return t.size() > 1 ? t[1] - t[0] : 1.0; }

}  // namespace

std::string axis_title(const Axis& a) {
  std::string s = report_text::escape(a.label);
  if (!a.unit.empty()) s += " [" + report_text::escape(a.unit) + "]";
  return s;
}

bool finite_for(const Axis& a, double v) { return std::isfinite(v) && (!a.log || v > 0); }

double nice_number(double x, bool round) {
  const double e = std::floor(std::log10(x));
  const double f = x / std::pow(10.0, e);
  double nf;
  if (round)
    nf = f < 1.5 ? 1 : f < 3 ? 2 : f < 7 ? 5 : 10;
  else
    nf = f <= 1 ? 1 : f <= 2 ? 2 : f <= 5 ? 5 : 10;
  return nf * std::pow(10.0, e);
}

/// Range of an axis from its data: fixed ends, nice ends otherwise. Returns the ticks.
Ticks resolve_axis(const Axis& a, double data_lo, double data_hi, double length_pt, bool horizontal, Scale& s) {
  Ticks t;
  s.log = a.log;
  if (!std::isfinite(data_lo) || !std::isfinite(data_hi)) {
    data_lo = a.log ? 0.1 : 0;
    data_hi = a.log ? 1 : 1;
  }
  if (a.include_zero && !a.log) {
    data_lo = std::min(data_lo, 0.0);
    data_hi = std::max(data_hi, 0.0);
  }
  if (std::isfinite(a.min)) data_lo = a.min;
  if (std::isfinite(a.max)) data_hi = a.max;
  const bool fixed_lo = std::isfinite(a.min), fixed_hi = std::isfinite(a.max);
  if (a.log) {
    if (data_hi <= data_lo) data_hi = data_lo * 10;
    double e0 = std::floor(std::log10(data_lo) + 1e-9), e1 = std::ceil(std::log10(data_hi) - 1e-9);
    if (e1 <= e0) e1 = e0 + 1;
    s.lo = fixed_lo ? data_lo : std::pow(10.0, e0);
    s.hi = fixed_hi ? data_hi : std::pow(10.0, e1);
    const int decades = static_cast<int>(e1 - e0);
    const int room = std::max(2, static_cast<int>(length_pt / (horizontal ? 45 : 22)));
    const int stride = std::max(1, (decades + room - 1) / room);
    for (int e = static_cast<int>(e0); e <= static_cast<int>(e1); ++e) {
      const double v = std::pow(10.0, e);
      if (v < s.lo * (1 - 1e-9) || v > s.hi * (1 + 1e-9)) continue;
      if ((e - static_cast<int>(e0)) % stride == 0) {
        t.major.push_back(v);
        t.labels.push_back(e == 0 ? "1" : e == 1 ? "10" : fmt::format("10<sup>{}</sup>", e));
      } else {
        t.minor.push_back(v);
      }
      if (decades <= 4)
        for (int k = 2; k <= 9; ++k)
          if (k * v <= s.hi * (1 + 1e-9) && k * v >= s.lo) t.minor.push_back(k * v);
    }
    return t;
  }
  if (data_hi <= data_lo) {
    if (a.include_zero && data_lo == 0) {
      data_hi = 1;  // nothing but zeros on an axis that starts at zero
    } else {
      const double pad = data_lo == 0 ? 1 : std::fabs(data_lo) * 0.1;
      data_lo -= pad;
      data_hi += pad;
    }
  }
  // Of a few tick densities near the one the length allows, the one that wastes least range.
  const int target = std::max(2, static_cast<int>(length_pt / (horizontal ? 62 : 34)));
  std::vector<double> ticks = nice_ticks(data_lo, data_hi, target);
  for (int t = target + 1; t <= target + 2; ++t) {
    std::vector<double> other = nice_ticks(data_lo, data_hi, t);
    const double span = (fixed_hi ? data_hi : other.back()) - (fixed_lo ? data_lo : other.front());
    const double best = (fixed_hi ? data_hi : ticks.back()) - (fixed_lo ? data_lo : ticks.front());
    if (span < best * 0.999 && static_cast<int>(other.size()) <= target + 3) ticks = std::move(other);
  }
  s.lo = fixed_lo ? data_lo : ticks.front();
  s.hi = fixed_hi ? data_hi : ticks.back();
  const double step = tick_step(ticks);
  for (double v : ticks)
    if (v >= s.lo - 1e-9 * step && v <= s.hi + 1e-9 * step) {
      t.major.push_back(v);
      t.labels.push_back(report_text::escape(tick_label(v, step)));
    }
  return t;
}

void fill_white(cairo_t* cr, double x, double y, double w, double h) {
  cairo_rectangle(cr, x, y, w, h);
  cairo_set_source_rgb(cr, 1, 1, 1);
  cairo_fill(cr);
}

namespace {
/// Vertical lines at the x values and horizontal lines at the y values across the frame, one path.
void grid_lines(cairo_t* cr, const Frame& f, const std::vector<double>& xs, const std::vector<double>& ys,
                const Rgb& colour, double width) {
  cairo_set_line_width(cr, width);
  set_colour(cr, colour);
  for (double v : xs) {
    const double px = f.sx.map(v);
    cairo_move_to(cr, px, f.y0);
    cairo_line_to(cr, px, f.y1);
  }
  for (double v : ys) {
    const double py = f.sy.map(v);
    cairo_move_to(cr, f.x0, py);
    cairo_line_to(cr, f.x1, py);
  }
  cairo_stroke(cr);
}
}  // namespace

void draw_grid(cairo_t* cr, const Frame& f) {
  cairo_save(cr);
  grid_lines(cr, f, f.tx.minor, f.ty.minor, kMinorGrid, 0.45);
  grid_lines(cr, f, f.tx.major, f.ty.major, kGrid, 0.6);
  cairo_restore(cr);
}

void draw_axes(cairo_t* cr, const Frame& f) {
  cairo_save(cr);
  set_colour(cr, kSoftInk);
  cairo_set_line_width(cr, 0.8);
  cairo_rectangle(cr, f.x0, f.y0, f.x1 - f.x0, f.y1 - f.y0);
  cairo_stroke(cr);
  cairo_set_line_width(cr, 0.7);
  for (double v : f.tx.major) {
    const double px = f.sx.map(v);
    cairo_move_to(cr, px, f.y1);
    cairo_line_to(cr, px, f.y1 + 3);
  }
  for (double v : f.ty.major) {
    const double py = f.sy.map(v);
    cairo_move_to(cr, f.x0, py);
    cairo_line_to(cr, f.x0 - 3, py);
  }
  cairo_stroke(cr);
  cairo_restore(cr);
  for (std::size_t k = 0; k < f.tx.major.size(); ++k) {
    Text t = make_text(cr, f.tx.labels[k], kTickFont);
    put(cr, t, f.sx.map(f.tx.major[k]), f.y1 + 4.5, 0.5, 0);
  }
  for (std::size_t k = 0; k < f.ty.major.size(); ++k) {
    Text t = make_text(cr, f.ty.labels[k], kTickFont);
    put(cr, t, f.x0 - 5, f.sy.map(f.ty.major[k]), 1, 0.5);
  }
}

double max_label_width(cairo_t* cr, const Ticks& t) {
  double w = 0;
  for (const auto& s : t.labels) w = std::max(w, make_text(cr, s, kTickFont).w);
  return w;
}

/// Computes the plot area of an axis-based plot: title and legend on top, ticks and axis titles
/// around. `right_extra` is reserved at the right (colour bar).
Frame layout_frame(cairo_t* cr, const Plot& p, double W, double H, const std::vector<LegendEntry>& legend,
                   double xlo, double xhi, double ylo, double yhi, double right_extra, Chrome& chrome) {
  constexpr double pad = 5;
  chrome.title = make_text(cr, report_text::escape(p.title), kTitleFont, W - 2 * pad);
  chrome.xlabel = make_text(cr, axis_title(p.x), kLabelFont);
  chrome.ylabel = make_text(cr, axis_title(p.y), kLabelFont);
  chrome.legend = layout_legend(cr, legend, W - 2 * pad);
  const double top = pad + (p.title.empty() ? 0 : chrome.title.h + 4) + (legend.empty() ? 0 : chrome.legend.height + 6);
  chrome.legend_y = pad + (p.title.empty() ? 0 : chrome.title.h + 4);

  Frame f;
  const double tick_h = make_text(cr, "0", kTickFont).h;
  // First guess of the area for the tick density, then the real margins.
  double guess_h = H - top - (tick_h + chrome.xlabel.h + 12) - pad;
  f.ty = resolve_axis(p.y, ylo, yhi, std::max(40.0, guess_h), false, f.sy);
  const double ytick_w = max_label_width(cr, f.ty);
  f.x0 = pad + chrome.ylabel.h + 5 + ytick_w + 5;
  f.y0 = top + 2;
  f.y1 = H - pad - chrome.xlabel.h - 3 - tick_h - 5;
  double guess_w = W - f.x0 - pad - right_extra - 8;
  f.tx = resolve_axis(p.x, xlo, xhi, std::max(40.0, guess_w), true, f.sx);
  double last_half = f.tx.labels.empty() ? 0 : 0.5 * make_text(cr, f.tx.labels.back(), kTickFont).w;
  f.x1 = W - pad - right_extra - std::max(4.0, last_half);
  if (p.equal_aspect && !p.x.log && !p.y.log) {
    const double kx = (f.x1 - f.x0) / (f.sx.hi - f.sx.lo), ky = (f.y1 - f.y0) / (f.sy.hi - f.sy.lo);
    if (kx > ky) {
      const double w = (f.sx.hi - f.sx.lo) * ky, mid = 0.5 * (f.x0 + f.x1);
      f.x0 = std::max(f.x0, mid - w / 2);
      f.x1 = f.x0 + w;
    } else {
      const double h = (f.sy.hi - f.sy.lo) * kx;
      f.y0 = f.y0 + 0.5 * ((f.y1 - f.y0) - h);
      f.y1 = f.y0 + h;
    }
  }
  f.sx.p0 = f.x0;
  f.sx.p1 = f.x1;
  f.sy.p0 = f.y1;
  f.sy.p1 = f.y0;
  return f;
}

void draw_chrome(cairo_t* cr, const Plot& p, const Frame& f, const Chrome& c, const std::vector<LegendEntry>& legend,
                 double H) {
  constexpr double pad = 5;
  if (!p.title.empty()) put(cr, c.title, pad, pad, 0, 0);
  if (!legend.empty()) draw_legend(cr, legend, c.legend, pad, c.legend_y);
  put(cr, c.xlabel, 0.5 * (f.x0 + f.x1), H - pad, 0.5, 1);
  cairo_save(cr);
  cairo_translate(cr, pad, 0.5 * (f.y0 + f.y1));
  cairo_rotate(cr, -M_PI / 2);
  put(cr, c.ylabel, 0, 0, 0.5, 0);
  cairo_restore(cr);
}

}  // namespace swaybound::plot::detail

namespace swaybound::plot {

using namespace detail;

std::vector<double> nice_ticks(double lo, double hi, int target) {
  if (!std::isfinite(lo) || !std::isfinite(hi)) return {0, 1};
  if (hi < lo) std::swap(lo, hi);
  if (hi == lo) {
    const double pad = lo == 0 ? 1 : std::fabs(lo) * 0.1;
    lo -= pad;
    hi += pad;
  }
  target = std::max(1, target);
  const double range = nice_number(hi - lo, false);
  const double step = nice_number(range / target, true);
  const double first = std::floor(lo / step + 1e-9) * step;
  const double last = std::ceil(hi / step - 1e-9) * step;
  std::vector<double> ticks;
  for (int k = 0;; ++k) {
    double v = first + k * step;
    if (std::fabs(v) < step * 1e-9) v = 0;
    ticks.push_back(v);
    if (v >= last - step * 1e-9 || k > 1000) break;
  }
  if (ticks.size() < 2) ticks.push_back(ticks.back() + step);
  return ticks;
}

std::string tick_label(double value, double step) {
  if (value == 0 || std::fabs(value) < std::fabs(step) * 1e-9) return "0";
  const double big = std::max(std::fabs(value), std::fabs(step));
  if (big >= 1e6 || std::fabs(step) < 1e-4) return fmt::format("{:.3g}", value);
  const int decimals = std::max(0, static_cast<int>(-std::floor(std::log10(std::fabs(step)) + 1e-9)));
  std::string s = fmt::format("{:.{}f}", value, decimals);
  if (s == "-0") s = "0";
  return s;
}

}  // namespace swaybound::plot
