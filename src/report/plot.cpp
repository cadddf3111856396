// Long for a reason: the whole small plotting library (layout, ticks, legend, xy, heat map, chain
// sketch, SVG/PNG output) in one file over cairo; it splits per plot kind in the planned renovation.
#include "swaybound/report/plot.hpp"

#include <cairo-svg.h>
#include <cairo.h>

#include <algorithm>
#include <array>
#include <cctype>
#include <cmath>
#include <map>
#include <stdexcept>

#include <fmt/format.h>

#include "text.hpp"

namespace swaybound::plot {

namespace {

using report_text::Font;
using report_text::LayoutPtr;

// ---------------------------------------------------------------------------------------------
// Colours, dashes, markers

// Okabe-Ito (Okabe & Ito, "Color Universal Design"), in the order used here; yellow left out.
constexpr std::array<Rgb, 7> kOkabeIto{{{0 / 255.0, 114 / 255.0, 178 / 255.0},     // blue
                                        {213 / 255.0, 94 / 255.0, 0 / 255.0},      // vermillion
                                        {0 / 255.0, 158 / 255.0, 115 / 255.0},     // bluish green
                                        {204 / 255.0, 121 / 255.0, 167 / 255.0},   // reddish purple
                                        {230 / 255.0, 159 / 255.0, 0 / 255.0},     // orange
                                        {86 / 255.0, 180 / 255.0, 233 / 255.0},    // sky blue
                                        {0, 0, 0}}};                               // black

// Viridis sampled at t = 0, 0.1, ..., 1 (matplotlib's viridis, van der Walt & Smith, CC0).
constexpr std::array<Rgb, 11> kViridis{{{0x44 / 255.0, 0x01 / 255.0, 0x54 / 255.0},
                                        {0x48 / 255.0, 0x24 / 255.0, 0x75 / 255.0},
                                        {0x41 / 255.0, 0x44 / 255.0, 0x87 / 255.0},
                                        {0x35 / 255.0, 0x5F / 255.0, 0x8D / 255.0},
                                        {0x2A / 255.0, 0x78 / 255.0, 0x8E / 255.0},
                                        {0x21 / 255.0, 0x91 / 255.0, 0x8C / 255.0},
                                        {0x22 / 255.0, 0xA8 / 255.0, 0x84 / 255.0},
                                        {0x44 / 255.0, 0xBF / 255.0, 0x70 / 255.0},
                                        {0x7A / 255.0, 0xD1 / 255.0, 0x51 / 255.0},
                                        {0xBD / 255.0, 0xDF / 255.0, 0x26 / 255.0},
                                        {0xFD / 255.0, 0xE7 / 255.0, 0x25 / 255.0}}};

constexpr Rgb kInk{0.12, 0.12, 0.14};
constexpr Rgb kSoftInk{0.35, 0.35, 0.38};
constexpr Rgb kGrid{0.87, 0.87, 0.89};
constexpr Rgb kMinorGrid{0.94, 0.94, 0.95};
constexpr Rgb kRef{0.15, 0.15, 0.15};

enum class Marker { circle, square, triangle, diamond, triangle_down, plus, cross };
constexpr int kMarkers = 7;

Marker series_marker(int i) { return static_cast<Marker>(((i % kMarkers) + kMarkers) % kMarkers); }

void set_colour(cairo_t* cr, const Rgb& c, double alpha = 1) { cairo_set_source_rgba(cr, c.r, c.g, c.b, alpha); }

void set_dash(cairo_t* cr, const std::vector<double>& dash) {
  cairo_set_dash(cr, dash.empty() ? nullptr : dash.data(), static_cast<int>(dash.size()), 0);
}

bool filled_marker(Marker m) { return m == Marker::circle || m == Marker::triangle || m == Marker::triangle_down; }

/// Adds the outline of one marker to the current path.
void marker_path(cairo_t* cr, Marker m, double x, double y, double r) {
  switch (m) {
    case Marker::circle:
      cairo_new_sub_path(cr);
      cairo_arc(cr, x, y, r, 0, 2 * M_PI);
      cairo_close_path(cr);
      break;
    case Marker::square: cairo_rectangle(cr, x - 0.85 * r, y - 0.85 * r, 1.7 * r, 1.7 * r); break;
    case Marker::triangle:
      cairo_move_to(cr, x, y - 1.15 * r);
      cairo_line_to(cr, x + r, y + 0.7 * r);
      cairo_line_to(cr, x - r, y + 0.7 * r);
      cairo_close_path(cr);
      break;
    case Marker::diamond:
      cairo_move_to(cr, x, y - 1.2 * r);
      cairo_line_to(cr, x + 0.9 * r, y);
      cairo_line_to(cr, x, y + 1.2 * r);
      cairo_line_to(cr, x - 0.9 * r, y);
      cairo_close_path(cr);
      break;
    case Marker::triangle_down:
      cairo_move_to(cr, x, y + 1.15 * r);
      cairo_line_to(cr, x + r, y - 0.7 * r);
      cairo_line_to(cr, x - r, y - 0.7 * r);
      cairo_close_path(cr);
      break;
    case Marker::plus:
      cairo_move_to(cr, x - 1.1 * r, y);
      cairo_line_to(cr, x + 1.1 * r, y);
      cairo_move_to(cr, x, y - 1.1 * r);
      cairo_line_to(cr, x, y + 1.1 * r);
      break;
    case Marker::cross:
      cairo_move_to(cr, x - 0.8 * r, y - 0.8 * r);
      cairo_line_to(cr, x + 0.8 * r, y + 0.8 * r);
      cairo_move_to(cr, x - 0.8 * r, y + 0.8 * r);
      cairo_line_to(cr, x + 0.8 * r, y - 0.8 * r);
      break;
  }
}

/// Paints the markers on the current path. Markers alternate filled and open shapes, so
/// neighbouring series differ in greyscale too. Open shapes get a white inside when `opaque`
/// (markers on a line), and stay see-through otherwise (scatter plots, where points overlap).
void paint_markers(cairo_t* cr, Marker m, const Rgb& c, bool opaque) {
  cairo_save(cr);
  cairo_set_dash(cr, nullptr, 0, 0);
  cairo_set_line_join(cr, CAIRO_LINE_JOIN_MITER);
  if (filled_marker(m)) {
    set_colour(cr, c);
    cairo_fill_preserve(cr);
    cairo_set_source_rgb(cr, 1, 1, 1);
    cairo_set_line_width(cr, 0.5);
    cairo_stroke(cr);
  } else {
    if (opaque && (m == Marker::square || m == Marker::diamond)) {
      cairo_set_source_rgb(cr, 1, 1, 1);
      cairo_fill_preserve(cr);
    }
    set_colour(cr, c);
    cairo_set_line_width(cr, m == Marker::plus || m == Marker::cross ? 1.3 : 1.05);
    cairo_stroke(cr);
  }
  cairo_restore(cr);
}

void draw_marker(cairo_t* cr, Marker m, double x, double y, double r, const Rgb& c) {
  cairo_new_path(cr);
  marker_path(cr, m, x, y, r);
  paint_markers(cr, m, c, true);
}

// ---------------------------------------------------------------------------------------------
// Text

struct Text {
  LayoutPtr layout;
  double w = 0, h = 0;
};

Text make_text(cairo_t* cr, const std::string& markup, const Font& font, double width = -1) {
  Text t;
  t.layout = report_text::layout(cr, markup, font, width);
  t.w = report_text::width_of(t.layout.get());
  t.h = report_text::height_of(t.layout.get());
  return t;
}

/// Draws text anchored at (x, y): ax, ay in [0, 1] select the point of the text box (0 = left/top).
void put(cairo_t* cr, const Text& t, double x, double y, double ax, double ay, const Rgb& c = kInk) {
  set_colour(cr, c);
  report_text::show(cr, t.layout.get(), x - ax * t.w, y - ay * t.h);
}

/// Text with a white halo, for labels drawn over data.
void put_halo(cairo_t* cr, const Text& t, double x, double y, double ax, double ay, const Rgb& c = kInk) {
  cairo_save(cr);
  cairo_move_to(cr, x - ax * t.w, y - ay * t.h);
  pango_cairo_update_layout(cr, t.layout.get());
  pango_cairo_layout_path(cr, t.layout.get());
  cairo_set_source_rgba(cr, 1, 1, 1, 0.9);
  cairo_set_line_width(cr, 2.6);
  cairo_set_line_join(cr, CAIRO_LINE_JOIN_ROUND);
  cairo_stroke(cr);
  cairo_restore(cr);
  put(cr, t, x, y, ax, ay, c);
}

const Font kTitleFont{9.5, true};
const Font kLabelFont{8.2};
const Font kTickFont{7.4};
const Font kLegendFont{7.4};
const Font kRefFont{7.0, false, true};

std::string axis_title(const Axis& a) {
  std::string s = report_text::escape(a.label);
  if (!a.unit.empty()) s += " [" + report_text::escape(a.unit) + "]";
  return s;
}

// ---------------------------------------------------------------------------------------------
// Scales and ticks

struct Scale {
  double lo = 0, hi = 1;  // data range (log: of the values, not exponents)
  bool log = false;
  double p0 = 0, p1 = 1;  // device positions of lo and hi
  double f(double v) const { return log ? std::log10(v) : v; }
  double map(double v) const { return p0 + (f(v) - f(lo)) / (f(hi) - f(lo)) * (p1 - p0); }
};

struct Ticks {
  std::vector<double> major, minor;
  std::vector<std::string> labels;  // markup
};

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

double tick_step(const std::vector<double>& t) { return t.size() > 1 ? t[1] - t[0] : 1.0; }

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

// ---------------------------------------------------------------------------------------------
// Legend

struct LegendEntry {
  enum Kind { series, ref, outline, missing, mark, point, note } kind = series;
  int style = 0;
  bool line = true, markers = false;
  std::string text;
  Marker marker = Marker::circle;  // kind point: drawn in ink
};

constexpr double kSampleWidth = 24;

struct LegendLayout {
  std::vector<Text> texts;
  std::vector<double> x, y;  // offsets of each entry from the legend's top-left
  double height = 0;
};

LegendLayout layout_legend(cairo_t* cr, const std::vector<LegendEntry>& entries, double width) {
  LegendLayout l;
  double x = 0, y = 0, row_h = 0;
  for (const auto& e : entries) {
    Text t = make_text(cr, report_text::escape(e.text), kLegendFont, std::max(40.0, width - kSampleWidth - 6));
    const double w = (e.kind == LegendEntry::note ? 0 : kSampleWidth + 4) + t.w;
    if (x > 0 && x + w > width) {
      x = 0;
      y += row_h + 2;
      row_h = 0;
    }
    l.x.push_back(x);
    l.y.push_back(y);
    row_h = std::max(row_h, t.h);
    x += w + 12;
    l.texts.push_back(std::move(t));
  }
  l.height = entries.empty() ? 0 : y + row_h;
  return l;
}

void draw_legend(cairo_t* cr, const std::vector<LegendEntry>& entries, const LegendLayout& l, double x0, double y0) {
  for (std::size_t k = 0; k < entries.size(); ++k) {
    const auto& e = entries[k];
    const double x = x0 + l.x[k], y = y0 + l.y[k];
    const double cy = y + l.texts[k].h / 2;
    cairo_save(cr);
    switch (e.kind) {
      case LegendEntry::series: {
        const Rgb c = series_colour(e.style);
        if (e.line) {
          set_colour(cr, c);
          cairo_set_line_width(cr, 1.5);
          set_dash(cr, series_dash(e.style));
          cairo_move_to(cr, x, cy);
          cairo_line_to(cr, x + kSampleWidth, cy);
          cairo_stroke(cr);
        }
        draw_marker(cr, series_marker(e.style), x + kSampleWidth / 2, cy, 2.6, c);
        break;
      }
      case LegendEntry::mark: {
        // A piece of colour bar with the mark across it, as drawn on the bar.
        const double bx = x + kSampleWidth / 2 - 5;
        for (int k = 0; k < 4; ++k) {
          cairo_rectangle(cr, bx, cy + 6 - 3 * (k + 1), 10, 3.2);
          set_colour(cr, sequential_colour(0.2 + 0.2 * k));
          cairo_fill(cr);
        }
        cairo_set_source_rgb(cr, 1, 1, 1);
        cairo_set_line_width(cr, 3);
        cairo_move_to(cr, bx - 3, cy);
        cairo_line_to(cr, bx + 13, cy);
        cairo_stroke(cr);
        set_colour(cr, kRef);
        cairo_set_line_width(cr, 1.2);
        cairo_move_to(cr, bx - 3, cy);
        cairo_line_to(cr, bx + 13, cy);
        cairo_stroke(cr);
        break;
      }
      case LegendEntry::ref:
        set_colour(cr, kRef);
        cairo_set_line_width(cr, 1.1);
        set_dash(cr, {5, 2.5});
        cairo_move_to(cr, x, cy);
        cairo_line_to(cr, x + kSampleWidth, cy);
        cairo_stroke(cr);
        break;
      case LegendEntry::outline:
        cairo_set_source_rgb(cr, 1, 1, 1);
        cairo_set_line_width(cr, 3.2);
        cairo_move_to(cr, x, cy);
        cairo_line_to(cr, x + kSampleWidth, cy);
        cairo_stroke(cr);
        set_colour(cr, kInk);
        cairo_set_line_width(cr, 1.4);
        set_dash(cr, {4, 2});
        cairo_move_to(cr, x, cy);
        cairo_line_to(cr, x + kSampleWidth, cy);
        cairo_stroke(cr);
        // a light box behind so the white casing shows
        break;
      case LegendEntry::note: break;
      case LegendEntry::point:
        draw_marker(cr, e.marker, x + kSampleWidth / 2, cy, 3.2, kInk);
        break;
      case LegendEntry::missing:
        cairo_rectangle(cr, x + 6, cy - 4, 12, 8);
        cairo_set_source_rgb(cr, 0.82, 0.82, 0.82);
        cairo_fill_preserve(cr);
        set_colour(cr, kSoftInk);
        cairo_set_line_width(cr, 0.6);
        cairo_stroke(cr);
        cairo_move_to(cr, x + 6, cy + 4);
        cairo_line_to(cr, x + 18, cy - 4);
        cairo_stroke(cr);
        break;
    }
    cairo_restore(cr);
    put(cr, l.texts[k], x + (e.kind == LegendEntry::note ? 0 : kSampleWidth + 4), y, 0, 0);
  }
}

// ---------------------------------------------------------------------------------------------
// Shared frame of the xy plots and the heat map

struct Frame {
  double x0, y0, x1, y1;  // plot area
  Scale sx, sy;
  Ticks tx, ty;
};

void fill_white(cairo_t* cr, double x, double y, double w, double h) {
  cairo_rectangle(cr, x, y, w, h);
  cairo_set_source_rgb(cr, 1, 1, 1);
  cairo_fill(cr);
}

void draw_grid(cairo_t* cr, const Frame& f) {
  cairo_save(cr);
  cairo_set_line_width(cr, 0.45);
  set_colour(cr, kMinorGrid);
  for (double v : f.tx.minor) {
    const double px = f.sx.map(v);
    cairo_move_to(cr, px, f.y0);
    cairo_line_to(cr, px, f.y1);
  }
  for (double v : f.ty.minor) {
    const double py = f.sy.map(v);
    cairo_move_to(cr, f.x0, py);
    cairo_line_to(cr, f.x1, py);
  }
  cairo_stroke(cr);
  set_colour(cr, kGrid);
  cairo_set_line_width(cr, 0.6);
  for (double v : f.tx.major) {
    const double px = f.sx.map(v);
    cairo_move_to(cr, px, f.y0);
    cairo_line_to(cr, px, f.y1);
  }
  for (double v : f.ty.major) {
    const double py = f.sy.map(v);
    cairo_move_to(cr, f.x0, py);
    cairo_line_to(cr, f.x1, py);
  }
  cairo_stroke(cr);
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

/// Lays out title, legend, axis titles and ticks around the plot area.
struct Chrome {
  Text title, xlabel, ylabel;
  LegendLayout legend;
  double legend_y = 0;
};

// ---------------------------------------------------------------------------------------------
// xy plots

void data_range(const Plot& p, bool for_x, double& lo, double& hi) {
  lo = INFINITY;
  hi = -INFINITY;
  const Axis& a = for_x ? p.x : p.y;
  for (const auto& s : p.series) {
    const std::size_t n = std::min(s.x.size(), s.y.size());
    for (std::size_t i = 0; i < n; ++i) {
      const double v = for_x ? s.x[i] : s.y[i];
      const double other = for_x ? s.y[i] : s.x[i];
      if (!finite_for(a, v) || !finite_for(for_x ? p.y : p.x, other)) continue;
      lo = std::min(lo, v);
      hi = std::max(hi, v);
    }
  }
  for (const auto& r : p.refs)
    if (r.vertical == for_x && finite_for(a, r.value)) {
      lo = std::min(lo, r.value);
      hi = std::max(hi, r.value);
    }
  for (const auto& m : p.marks) {
    const double v = for_x ? m.x : m.y;
    if (!finite_for(a, v)) continue;
    lo = std::min(lo, v);
    hi = std::max(hi, v);
  }
}

/// Labelled points: a marker in the series' colour and the label beside it, kept inside the frame;
/// a label that would overlap one already placed moves down (or up) a line at a time, with a thin
/// leader to its point.
void draw_marks(cairo_t* cr, const Frame& f, const Plot& p) {
  struct Box {
    double x0, y0, x1, y1;
  };
  std::vector<Box> placed;
  const auto overlaps = [&](const Box& b) {
    for (const Box& o : placed)
      if (b.x0 < o.x1 && o.x0 < b.x1 && b.y0 < o.y1 && o.y0 < b.y1) return true;
    return false;
  };
  for (const auto& m : p.marks) {
    if (!finite_for(p.x, m.x) || !finite_for(p.y, m.y)) continue;
    const double x = f.sx.map(m.x), y = f.sy.map(m.y);
    draw_marker(cr, Marker::circle, x, y, 4.2, series_colour(m.style));
    if (m.label.empty()) continue;
    Text t = make_text(cr, report_text::escape(m.label), kRefFont);
    const bool right = x + 6 + t.w <= f.x1 - 2;
    const double left_x = right ? x + 6 : x - 6 - t.w;
    double top = y - 4 - t.h < f.y0 + 1 ? y + 4 : y - 4 - t.h;
    Box box{left_x, top, left_x + t.w, top + t.h};
    for (int k = 1; k <= 8 && overlaps(box); ++k) {
      const double shift = (k % 2 ? 1 : -1) * ((k + 1) / 2) * (t.h + 1);
      const double candidate = std::clamp(top + shift, f.y0 + 1, f.y1 - t.h - 1);
      Box moved{left_x, candidate, left_x + t.w, candidate + t.h};
      if (!overlaps(moved)) {
        box = moved;
        break;
      }
    }
    placed.push_back(box);
    if (std::fabs(box.y0 - top) > 0.5) {  // moved: a leader from the label to its point
      cairo_save(cr);
      set_colour(cr, kSoftInk);
      cairo_set_line_width(cr, 0.5);
      cairo_move_to(cr, x, y);
      cairo_line_to(cr, right ? box.x0 - 1 : box.x1 + 1, box.y0 + 0.5 * t.h);
      cairo_stroke(cr);
      cairo_restore(cr);
    }
    put_halo(cr, t, box.x0, box.y0, 0, 0, kInk);
  }
}

bool has_data(const Plot& p) {
  for (const auto& s : p.series) {
    const std::size_t n = std::min(s.x.size(), s.y.size());
    for (std::size_t i = 0; i < n; ++i)
      if (finite_for(p.x, s.x[i]) && finite_for(p.y, s.y[i])) return true;
  }
  return false;
}

int style_of(const Series& s, std::size_t position) { return s.style >= 0 ? s.style : static_cast<int>(position); }

void draw_series(cairo_t* cr, const Frame& f, const Plot& p) {
  cairo_save(cr);
  cairo_rectangle(cr, f.x0, f.y0, f.x1 - f.x0, f.y1 - f.y0);
  cairo_clip(cr);
  for (std::size_t k = 0; k < p.series.size(); ++k) {
    const Series& s = p.series[k];
    const int style = style_of(s, k);
    const Rgb c = series_colour(style);
    const std::size_t n = std::min(s.x.size(), s.y.size());
    const auto ok = [&](std::size_t i) { return finite_for(p.x, s.x[i]) && finite_for(p.y, s.y[i]); };
    if (s.line) {
      set_colour(cr, c);
      cairo_set_line_width(cr, 1.35);
      cairo_set_line_join(cr, CAIRO_LINE_JOIN_ROUND);
      set_dash(cr, series_dash(style));
      // Continuous runs in device coordinates; long runs keep, per half-point column, the first,
      // lowest, highest and last point, which draws the same picture with far fewer points.
      const bool decimate = static_cast<double>(n) > 3 * (f.x1 - f.x0);
      std::vector<std::pair<double, double>> run;
      const auto flush = [&]() {
        if (run.empty()) return;
        std::vector<std::size_t> keep;
        if (!decimate || run.size() < 8) {
          for (std::size_t i = 0; i < run.size(); ++i) keep.push_back(i);
        } else {
          std::size_t b0 = 0;
          while (b0 < run.size()) {
            const long column = static_cast<long>(std::floor(run[b0].first * 2));
            std::size_t b1 = b0, lo = b0, hi = b0;
            while (b1 < run.size() && static_cast<long>(std::floor(run[b1].first * 2)) == column) {
              if (run[b1].second < run[lo].second) lo = b1;
              if (run[b1].second > run[hi].second) hi = b1;
              ++b1;
            }
            std::size_t pick[4] = {b0, std::min(lo, hi), std::max(lo, hi), b1 - 1};
            for (std::size_t q : pick)
              if (keep.empty() || keep.back() < q) keep.push_back(q);
            b0 = b1;
          }
        }
        cairo_move_to(cr, run[keep[0]].first, run[keep[0]].second);
        for (std::size_t q = 1; q < keep.size(); ++q) cairo_line_to(cr, run[keep[q]].first, run[keep[q]].second);
        run.clear();
      };
      for (std::size_t i = 0; i < n; ++i) {
        if (!ok(i)) {
          flush();
          continue;
        }
        run.emplace_back(f.sx.map(s.x[i]), f.sy.map(s.y[i]));
      }
      flush();
      cairo_stroke(cr);
      set_dash(cr, {});
    }
    const Marker marker = series_marker(style);
    // Markers may reach a little past the frame, so one on the edge of the range shows whole.
    cairo_save(cr);
    cairo_reset_clip(cr);
    cairo_rectangle(cr, f.x0 - 3.5, f.y0 - 3.5, f.x1 - f.x0 + 7, f.y1 - f.y0 + 7);
    cairo_clip(cr);
    cairo_new_path(cr);
    if (s.markers) {
      const double r = n > 300 ? 1.9 : 2.4;
      for (std::size_t i = 0; i < n; ++i)
        if (ok(i)) marker_path(cr, marker, f.sx.map(s.x[i]), f.sy.map(s.y[i]), r);
      paint_markers(cr, marker, c, s.line);
    } else if (s.line && n > 1) {
      // A few markers along a line identify it without colour; staggered per series.
      constexpr int kAlong = 6;
      for (int m = 0; m < kAlong; ++m) {
        const double frac = (m + 0.3 + 0.55 * static_cast<double>(k % 3) / 3.0) / kAlong;
        const auto i = static_cast<std::size_t>(frac * static_cast<double>(n - 1));
        if (i < n && ok(i)) marker_path(cr, marker, f.sx.map(s.x[i]), f.sy.map(s.y[i]), 2.4);
      }
      paint_markers(cr, marker, c, true);
    }
    cairo_restore(cr);
    if (p.mark_ends && k == 0 && n > 0) {
      std::size_t first = 0, last = n - 1;
      while (first < n && !ok(first)) ++first;
      while (last > first && !ok(last)) --last;
      if (first < n) {
        draw_marker(cr, Marker::circle, f.sx.map(s.x[first]), f.sy.map(s.y[first]), 3.6, kInk);
        draw_marker(cr, Marker::square, f.sx.map(s.x[last]), f.sy.map(s.y[last]), 3.6, kInk);
      }
    }
  }
  cairo_restore(cr);
}

void draw_refs(cairo_t* cr, const Frame& f, const std::vector<RefLine>& refs, const Axis& ax, const Axis& ay) {
  for (const auto& r : refs) {
    const Axis& a = r.vertical ? ax : ay;
    if (!finite_for(a, r.value)) continue;
    const Scale& s = r.vertical ? f.sx : f.sy;
    const Scale& o = r.vertical ? f.sy : f.sx;
    const double v = s.map(r.value);
    const double lo_edge = r.vertical ? f.y1 : f.x0, hi_edge = r.vertical ? f.y0 : f.x1;
    double a0 = lo_edge, a1 = hi_edge;
    if (std::isfinite(r.from) && finite_for(r.vertical ? ay : ax, r.from)) a0 = o.map(r.from);
    if (std::isfinite(r.to) && finite_for(r.vertical ? ay : ax, r.to)) a1 = o.map(r.to);
    const bool inside = r.vertical ? (v >= f.x0 - 0.5 && v <= f.x1 + 0.5) : (v >= f.y0 - 0.5 && v <= f.y1 + 0.5);
    if (!inside) continue;
    cairo_save(cr);
    cairo_rectangle(cr, f.x0, f.y0, f.x1 - f.x0, f.y1 - f.y0);
    cairo_clip(cr);
    set_colour(cr, kRef);
    cairo_set_line_width(cr, 1.1);
    set_dash(cr, {5, 2.5});
    if (r.vertical) {
      cairo_move_to(cr, v, a0);
      cairo_line_to(cr, v, a1);
    } else {
      cairo_move_to(cr, a0, v);
      cairo_line_to(cr, a1, v);
    }
    cairo_stroke(cr);
    cairo_restore(cr);
    if (r.label.empty()) continue;
    Text t = make_text(cr, report_text::escape(r.label), kRefFont);
    if (r.vertical) {
      const bool room_right = v + 3 + t.w <= f.x1 - 2;
      put_halo(cr, t, room_right ? v + 3 : v - 3, f.y0 + 3, room_right ? 0 : 1, 0, kRef);
    } else {
      const double right = std::min(f.x1, std::max(a0, a1)) - 3;
      const bool room_above = v - 1.5 - t.h >= f.y0 + 1;
      put_halo(cr, t, right, room_above ? v - 1.5 : v + 1.5, 1, room_above ? 1 : 0, kRef);
    }
  }
}

void draw_empty(cairo_t* cr, const Frame& f, const std::string& text) {
  Text t = make_text(cr, report_text::escape(text), Font{8.5, false, true});
  put(cr, t, 0.5 * (f.x0 + f.x1), 0.5 * (f.y0 + f.y1), 0.5, 0.5, kSoftInk);
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

std::vector<LegendEntry> series_legend(const Plot& p) {
  std::vector<LegendEntry> legend;
  for (std::size_t k = 0; k < p.series.size(); ++k) {
    const Series& s = p.series[k];
    if (s.label.empty()) continue;
    LegendEntry e;
    e.kind = LegendEntry::series;
    e.style = style_of(s, k);
    e.line = s.line;
    e.markers = s.markers;
    e.text = s.label;
    legend.push_back(e);
  }
  return legend;
}

void draw_xy(cairo_t* cr, const Plot& p, double W, double H) {
  std::vector<LegendEntry> legend = series_legend(p);
  if (p.mark_ends && has_data(p)) {
    legend.push_back({LegendEntry::point, 0, false, true, "start", Marker::circle});
    legend.push_back({LegendEntry::point, 0, false, true, "end", Marker::square});
  }
  double xlo, xhi, ylo, yhi;
  data_range(p, true, xlo, xhi);
  data_range(p, false, ylo, yhi);
  // Headroom, so neither data nor a limit line lies on the frame: always on y, on x for scatter
  // plots and phase portraits (a time axis keeps its exact ends). Zero stays an end when it is one.
  const auto headroom = [](const Axis& a, double& lo, double& hi) {
    if (a.log || !std::isfinite(lo) || !std::isfinite(hi) || !(hi > lo)) return;
    const double pad = 0.03 * (hi - lo);
    if (lo != 0) lo -= pad;
    if (hi != 0) hi += pad;
  };
  bool markers = p.equal_aspect;
  for (const auto& s : p.series) markers |= s.markers && !s.line;
  headroom(p.y, ylo, yhi);
  if (markers) headroom(p.x, xlo, xhi);
  Chrome chrome;
  const Frame f = layout_frame(cr, p, W, H, legend, xlo, xhi, ylo, yhi, 0, chrome);
  draw_grid(cr, f);
  if (has_data(p)) {
    draw_series(cr, f, p);
    draw_refs(cr, f, p.refs, p.x, p.y);
    draw_marks(cr, f, p);
  } else {
    draw_empty(cr, f, p.empty_text);
  }
  draw_axes(cr, f);
  draw_chrome(cr, p, f, chrome, legend, H);
}

// ---------------------------------------------------------------------------------------------
// Heat map

std::vector<double> cell_edges(const std::vector<double>& c) {
  std::vector<double> e(c.size() + 1);
  if (c.size() == 1) {
    e[0] = c[0] - 0.5;
    e[1] = c[0] + 0.5;
    return e;
  }
  for (std::size_t i = 1; i < c.size(); ++i) e[i] = 0.5 * (c[i - 1] + c[i]);
  e[0] = c[0] - (e[1] - c[0]);
  e[c.size()] = c.back() + (c.back() - e[c.size() - 1]);
  return e;
}

void draw_heat(cairo_t* cr, const Plot& p, double W, double H) {
  const HeatMap& m = p.heat;
  const bool valid = !m.x.empty() && !m.y.empty() && m.z.size() == m.x.size() * m.y.size();
  double zlo = INFINITY, zhi = -INFINITY;
  bool missing = false;
  if (valid)
    for (double z : m.z) {
      if (std::isfinite(z)) {
        zlo = std::min(zlo, z);
        zhi = std::max(zhi, z);
      } else {
        missing = true;
      }
    }
  const bool any = std::isfinite(zlo);
  if (!any) {
    zlo = 0;
    zhi = 1;
  } else if (zhi <= zlo) {
    zlo -= 0.5;
    zhi += 0.5;
  }
  std::vector<LegendEntry> legend;
  if (!m.outlines.empty() && !m.outline_label.empty()) legend.push_back({LegendEntry::outline, 0, true, false, m.outline_label});
  if (missing) legend.push_back({LegendEntry::missing, 0, false, false, m.missing_label});
  for (const auto& mk : m.z_marks) {
    if (!any) continue;
    if (mk.value >= zlo && mk.value <= zhi)
      legend.push_back({LegendEntry::mark, 0, true, false, mk.label + " (marked on the colour bar)"});
    else
      legend.push_back({LegendEntry::note, 0, true, false,
                        mk.label + (mk.value > zhi ? ": above every value of the map" : ": below every value of the map")});
  }

  // Colour-bar ticks and label width.
  Axis zaxis;
  zaxis.label = m.z_label;
  zaxis.unit = m.z_unit;
  zaxis.min = zlo;
  zaxis.max = zhi;
  Scale sz;
  const Ticks tz = resolve_axis(zaxis, zlo, zhi, H * 0.6, false, sz);
  Text zlabel = make_text(cr, axis_title(zaxis), kLabelFont);
  const double bar_w = 11;
  const double right_extra = 12 + bar_w + 5 + max_label_width(cr, tz) + 5 + zlabel.h;

  Plot frame_plot = p;
  const std::vector<double> ex = valid ? cell_edges(m.x) : std::vector<double>{0, 1};
  const std::vector<double> ey = valid ? cell_edges(m.y) : std::vector<double>{0, 1};
  frame_plot.x.min = ex.front();
  frame_plot.x.max = ex.back();
  frame_plot.y.min = ey.front();
  frame_plot.y.max = ey.back();
  Chrome chrome;
  const Frame f = layout_frame(cr, frame_plot, W, H, legend, ex.front(), ex.back(), ey.front(), ey.back(), right_extra,
                               chrome);
  if (valid && any) {
    for (std::size_t j = 0; j < m.y.size(); ++j)
      for (std::size_t i = 0; i < m.x.size(); ++i) {
        const double z = m.z[j * m.x.size() + i];
        const double px0 = f.sx.map(ex[i]), px1 = f.sx.map(ex[i + 1]);
        const double py0 = f.sy.map(ey[j + 1]), py1 = f.sy.map(ey[j]);
        // Slight overlap hides hairline seams between cells in some viewers.
        cairo_rectangle(cr, px0, py0, px1 - px0 + 0.25, py1 - py0 + 0.25);
        if (std::isfinite(z)) {
          set_colour(cr, sequential_colour((z - zlo) / (zhi - zlo)));
          cairo_fill(cr);
        } else {
          cairo_set_source_rgb(cr, 0.82, 0.82, 0.82);
          cairo_fill(cr);
          cairo_save(cr);
          set_colour(cr, kSoftInk);
          cairo_set_line_width(cr, 0.6);
          cairo_move_to(cr, px0, py1);
          cairo_line_to(cr, px1, py0);
          cairo_stroke(cr);
          cairo_restore(cr);
        }
      }
    // Outlines: a white casing under a dark dashed line shows on dark and light cells.
    cairo_save(cr);
    cairo_rectangle(cr, f.x0, f.y0, f.x1 - f.x0, f.y1 - f.y0);
    cairo_clip(cr);
    for (int pass = 0; pass < 2; ++pass)
      for (const auto& poly : m.outlines) {
        if (poly.empty()) continue;
        cairo_new_path(cr);
        for (std::size_t k = 0; k < poly.size(); ++k) {
          const double px = f.sx.map(poly[k].x), py = f.sy.map(poly[k].y);
          if (k == 0)
            cairo_move_to(cr, px, py);
          else
            cairo_line_to(cr, px, py);
        }
        cairo_close_path(cr);
        if (pass == 0) {
          cairo_set_source_rgb(cr, 1, 1, 1);
          cairo_set_line_width(cr, 3.2);
          set_dash(cr, {});
        } else {
          set_colour(cr, kInk);
          cairo_set_line_width(cr, 1.4);
          set_dash(cr, {4, 2});
        }
        cairo_stroke(cr);
      }
    cairo_restore(cr);
  } else {
    draw_grid(cr, f);
    draw_empty(cr, f, p.empty_text);
  }
  draw_axes(cr, f);
  draw_chrome(cr, frame_plot, f, chrome, legend, H);

  // Colour bar.
  const double bx0 = f.x1 + 12, bx1 = bx0 + bar_w;
  sz.p0 = f.y1;
  sz.p1 = f.y0;
  constexpr int kSteps = 64;
  for (int k = 0; k < kSteps; ++k) {
    const double t0 = static_cast<double>(k) / kSteps, t1 = static_cast<double>(k + 1) / kSteps;
    const double py0 = f.y1 - t1 * (f.y1 - f.y0), py1 = f.y1 - t0 * (f.y1 - f.y0);
    cairo_rectangle(cr, bx0, py0, bar_w, py1 - py0 + 0.3);
    set_colour(cr, sequential_colour(0.5 * (t0 + t1)));
    cairo_fill(cr);
  }
  cairo_save(cr);
  set_colour(cr, kSoftInk);
  cairo_set_line_width(cr, 0.7);
  cairo_rectangle(cr, bx0, f.y0, bar_w, f.y1 - f.y0);
  cairo_stroke(cr);
  for (double v : tz.major) {
    cairo_move_to(cr, bx1, sz.map(v));
    cairo_line_to(cr, bx1 + 3, sz.map(v));
  }
  cairo_stroke(cr);
  cairo_restore(cr);
  double label_w = 0;
  for (std::size_t k = 0; k < tz.major.size(); ++k) {
    Text t = make_text(cr, tz.labels[k], kTickFont);
    label_w = std::max(label_w, t.w);
    put(cr, t, bx1 + 5, sz.map(tz.major[k]), 0, 0.5);
  }
  for (const auto& mk : m.z_marks) {
    if (!(mk.value >= zlo && mk.value <= zhi)) continue;
    const double py = sz.map(mk.value);
    cairo_save(cr);
    cairo_set_source_rgb(cr, 1, 1, 1);
    cairo_set_line_width(cr, 3);
    cairo_move_to(cr, bx0 - 3, py);
    cairo_line_to(cr, bx1 + 3, py);
    cairo_stroke(cr);
    set_colour(cr, kRef);
    cairo_set_line_width(cr, 1.2);
    cairo_move_to(cr, bx0 - 3, py);
    cairo_line_to(cr, bx1 + 3, py);
    cairo_stroke(cr);
    cairo_restore(cr);
  }
  cairo_save(cr);
  cairo_translate(cr, bx1 + 5 + label_w + 5, 0.5 * (f.y0 + f.y1));
  cairo_rotate(cr, M_PI / 2);
  put(cr, zlabel, 0, 0, 0.5, 1);
  cairo_restore(cr);
}

// ---------------------------------------------------------------------------------------------
// Chain sketch

void draw_chain(cairo_t* cr, const Plot& p, double W, double H) {
  constexpr double pad = 5;
  const ChainSketch& c = p.chain;
  Text title = make_text(cr, report_text::escape(p.title), kTitleFont, W - 2 * pad);
  double top = pad + (p.title.empty() ? 0 : title.h + 6);
  if (!p.title.empty()) put(cr, title, pad, pad, 0, 0);
  const std::size_t panels = c.shapes.size();
  double total = 0;
  for (double l : c.lengths) total += l;
  if (panels == 0 || c.lengths.empty() || !(total > 0)) {
    Frame f{pad, top, W - pad, H - pad, {}, {}, {}, {}};
    draw_empty(cr, f, p.empty_text);
    return;
  }
  const double panel_w = (W - 2 * pad) / static_cast<double>(panels);
  double caption_h = 0;
  std::vector<Text> captions;
  for (std::size_t k = 0; k < panels; ++k) {
    captions.push_back(make_text(cr, report_text::escape(k < c.captions.size() ? c.captions[k] : ""), kLegendFont,
                                 panel_w - 6));
    caption_h = std::max(caption_h, captions.back().h);
  }
  const double area_top = top + 8, area_bottom = H - pad - caption_h - 6;
  for (std::size_t k = 0; k < panels; ++k) {
    const auto& shape = c.shapes[k];
    double big = 0;
    for (double v : shape) big = std::max(big, std::fabs(v));
    if (!(big > 0)) big = 1;
    // Joint positions (x right, y down) in metres, for +shape.
    std::vector<double> jx{0}, jy{0};
    double extent = 0.25 * total;
    for (std::size_t i = 0; i < c.lengths.size(); ++i) {
      const double a = c.amplitude * (i < shape.size() ? shape[i] : 0) / big;
      jx.push_back(jx.back() + c.lengths[i] * std::sin(a));
      jy.push_back(jy.back() + c.lengths[i] * std::cos(a));
      extent = std::max(extent, std::fabs(jx.back()));
    }
    const double cx = pad + (static_cast<double>(k) + 0.5) * panel_w;
    const double scale = std::min((panel_w - 16) / (2 * extent * 1.1), (area_bottom - area_top) / total);
    // Support at the top pivot.
    cairo_save(cr);
    set_colour(cr, kSoftInk);
    cairo_set_line_width(cr, 1.2);
    cairo_move_to(cr, cx - 14, area_top);
    cairo_line_to(cr, cx + 14, area_top);
    cairo_stroke(cr);
    cairo_set_line_width(cr, 0.6);
    for (int h = -12; h <= 12; h += 5) {
      cairo_move_to(cr, cx + h, area_top);
      cairo_line_to(cr, cx + h + 4, area_top - 4);
    }
    cairo_stroke(cr);
    // Rest position.
    cairo_set_line_width(cr, 0.8);
    set_dash(cr, {2, 2});
    set_colour(cr, Rgb{0.6, 0.6, 0.62});
    cairo_move_to(cr, cx, area_top);
    cairo_line_to(cr, cx, area_top + total * scale);
    cairo_stroke(cr);
    // Mirror image (-shape), light.
    set_dash(cr, {4, 2.5});
    set_colour(cr, series_colour(static_cast<int>(k)), 0.45);
    cairo_set_line_width(cr, 1.2);
    cairo_move_to(cr, cx, area_top);
    for (std::size_t i = 1; i < jx.size(); ++i) cairo_line_to(cr, cx - jx[i] * scale, area_top + jy[i] * scale);
    cairo_stroke(cr);
    // The shape.
    set_dash(cr, {});
    set_colour(cr, series_colour(static_cast<int>(k)));
    cairo_set_line_width(cr, 2.2);
    cairo_set_line_join(cr, CAIRO_LINE_JOIN_ROUND);
    cairo_move_to(cr, cx, area_top);
    for (std::size_t i = 1; i < jx.size(); ++i) cairo_line_to(cr, cx + jx[i] * scale, area_top + jy[i] * scale);
    cairo_stroke(cr);
    cairo_restore(cr);
    for (std::size_t i = 0; i < jx.size(); ++i) {
      const double px = cx + jx[i] * scale, py = area_top + jy[i] * scale;
      cairo_save(cr);
      cairo_arc(cr, px, py, i + 1 == jx.size() ? 3.2 : 2.4, 0, 2 * M_PI);
      cairo_set_source_rgb(cr, 1, 1, 1);
      cairo_fill_preserve(cr);
      set_colour(cr, kInk);
      cairo_set_line_width(cr, 1);
      cairo_stroke(cr);
      cairo_restore(cr);
    }
    put(cr, captions[k], cx, H - pad, 0.5, 1);
  }
}

cairo_status_t append_to_string(void* closure, const unsigned char* data, unsigned int length) {
  static_cast<std::string*>(closure)->append(reinterpret_cast<const char*>(data), length);
  return CAIRO_STATUS_SUCCESS;
}

void check_surface(cairo_surface_t* s, const char* what) {
  if (cairo_surface_status(s) != CAIRO_STATUS_SUCCESS)
    throw std::runtime_error(fmt::format("{}: {}", what, cairo_status_to_string(cairo_surface_status(s))));
}

}  // namespace

// ---------------------------------------------------------------------------------------------
// Public

Rgb series_colour(int i) {
  const int n = static_cast<int>(kOkabeIto.size());
  return kOkabeIto[static_cast<std::size_t>(((i % n) + n) % n)];
}

std::vector<double> series_dash(int i) {
  static const std::vector<std::vector<double>> dashes{
      {}, {6, 3}, {1.4, 2.2}, {7, 2.5, 1.4, 2.5}, {11, 3.5}, {5, 2, 1.4, 2, 1.4, 2}};
  const int n = static_cast<int>(dashes.size());
  return dashes[static_cast<std::size_t>(((i % n) + n) % n)];
}

Rgb sequential_colour(double t) {
  if (!(t > 0)) return kViridis.front();
  if (t >= 1) return kViridis.back();
  const double u = t * static_cast<double>(kViridis.size() - 1);
  const auto k = static_cast<std::size_t>(u);
  const double f = u - static_cast<double>(k);
  const Rgb& a = kViridis[k];
  const Rgb& b = kViridis[std::min(k + 1, kViridis.size() - 1)];
  return {a.r + f * (b.r - a.r), a.g + f * (b.g - a.g), a.b + f * (b.b - a.b)};
}

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

Plot line_chart(std::string title, Axis x, Axis y, std::vector<Series> series, std::vector<RefLine> refs) {
  Plot p;
  p.kind = Kind::xy;
  p.title = std::move(title);
  p.x = std::move(x);
  p.y = std::move(y);
  p.series = std::move(series);
  p.refs = std::move(refs);
  return p;
}

Plot scatter_chart(std::string title, Axis x, Axis y, std::vector<Series> series, std::vector<RefLine> refs) {
  for (auto& s : series) {
    s.line = false;
    s.markers = true;
  }
  return line_chart(std::move(title), std::move(x), std::move(y), std::move(series), std::move(refs));
}

Plot phase_portrait(std::string title, Axis x, Axis y, std::vector<double> xs, std::vector<double> ys) {
  Series s;
  s.x = std::move(xs);
  s.y = std::move(ys);
  s.style = 0;
  Plot p = line_chart(std::move(title), std::move(x), std::move(y), {s});
  p.mark_ends = true;
  p.equal_aspect = true;
  return p;
}

Plot heat_map(std::string title, Axis x, Axis y, HeatMap map) {
  Plot p;
  p.kind = Kind::heat_map;
  p.title = std::move(title);
  p.x = std::move(x);
  p.y = std::move(y);
  p.heat = std::move(map);
  return p;
}

Plot mode_shapes(std::string title, ChainSketch sketch) {
  Plot p;
  p.kind = Kind::chain;
  p.title = std::move(title);
  p.chain = std::move(sketch);
  return p;
}

void draw(const Plot& plot, cairo_t* cr, double x, double y, double width, double height) {
  cairo_save(cr);
  cairo_translate(cr, x, y);
  cairo_rectangle(cr, 0, 0, width, height);
  cairo_clip(cr);
  fill_white(cr, 0, 0, width, height);
  cairo_set_line_cap(cr, CAIRO_LINE_CAP_BUTT);
  switch (plot.kind) {
    case Kind::xy: draw_xy(cr, plot, width, height); break;
    case Kind::heat_map: draw_heat(cr, plot, width, height); break;
    case Kind::chain: draw_chain(cr, plot, width, height); break;
  }
  cairo_restore(cr);
}

namespace {

/// cairo numbers some SVG ids from process-wide counters (surfaces), so the same plot drawn twice
/// gets different ids. Renumbers every id in order of appearance, with `prefix`, and every local
/// reference to it (href="#id", url(#id)): the same plot then gives the same text, and SVGs with
/// different prefixes can share one HTML page.
std::string renumber_ids(const std::string& svg, const std::string& prefix) {
  std::map<std::string, std::string> ids;
  const std::string key = "id=\"";
  for (std::size_t p = svg.find(key); p != std::string::npos; p = svg.find(key, p + 1)) {
    if (p > 0 && (std::isalnum(static_cast<unsigned char>(svg[p - 1])) || svg[p - 1] == '-' || svg[p - 1] == '_')) continue;
    const std::size_t start = p + key.size(), end = svg.find('"', start);
    if (end == std::string::npos) break;
    const std::string id = svg.substr(start, end - start);
    if (!ids.count(id)) ids.emplace(id, prefix + std::to_string(ids.size() + 1));
  }
  std::string out;
  out.reserve(svg.size());
  const auto lookup = [&](std::size_t start, char close, std::size_t& end) -> const std::string* {
    end = svg.find(close, start);
    if (end == std::string::npos) return nullptr;
    const auto it = ids.find(svg.substr(start, end - start));
    return it == ids.end() ? nullptr : &it->second;
  };
  std::size_t i = 0;
  while (i < svg.size()) {
    std::size_t end = 0;
    const std::string* id = nullptr;
    std::size_t skip = 0;
    char close = '"';
    if (svg.compare(i, key.size(), key) == 0 && (i == 0 || svg[i - 1] == ' ')) {
      skip = key.size();
    } else if (svg.compare(i, 7, "href=\"#") == 0) {
      skip = 7;
    } else if (svg.compare(i, 5, "url(#") == 0) {
      skip = 5;
      close = ')';
    }
    if (skip > 0 && (id = lookup(i + skip, close, end)) != nullptr) {
      out.append(svg, i, skip);
      out += *id;
      i = end;
      continue;
    }
    out += svg[i++];
  }
  return out;
}

}  // namespace

namespace {

/// Rounds the coordinates in path data (d="...") to 0.01 pt: cairo writes six decimals, which
/// doubles the size of an SVG for no visible difference.
std::string compact_paths(const std::string& svg) {
  std::string out;
  out.reserve(svg.size());
  std::size_t i = 0;
  while (i < svg.size()) {
    const std::size_t start = svg.find(" d=\"", i);
    if (start == std::string::npos) {
      out.append(svg, i, std::string::npos);
      break;
    }
    const std::size_t body = start + 4, end = svg.find('"', body);
    if (end == std::string::npos) {
      out.append(svg, i, std::string::npos);
      break;
    }
    out.append(svg, i, body - i);
    std::size_t k = body;
    while (k < end) {
      const char c = svg[k];
      if (c == '-' || c == '.' || std::isdigit(static_cast<unsigned char>(c))) {
        std::size_t e = k + 1;
        while (e < end && (std::isdigit(static_cast<unsigned char>(svg[e])) || svg[e] == '.' || svg[e] == 'e' ||
                           (svg[e] == '-' && svg[e - 1] == 'e')))
          ++e;
        const std::string token = svg.substr(k, e - k);
        char* stop = nullptr;
        const double v = std::strtod(token.c_str(), &stop);
        if (stop && *stop == '\0' && std::isfinite(v)) {
          std::string r = fmt::format("{:.2f}", v);
          while (r.back() == '0') r.pop_back();
          if (r.back() == '.') r.pop_back();
          if (r == "-0") r = "0";
          out += r;
        } else {
          out += token;
        }
        k = e;
      } else {
        out += c;
        ++k;
      }
    }
    i = end;
  }
  return out;
}

}  // namespace

std::string to_svg(const Plot& plot, const std::string& id_prefix) {
  std::string out;
  cairo_surface_t* surface = cairo_svg_surface_create_for_stream(append_to_string, &out, plot.width, plot.height);
  check_surface(surface, "SVG surface");
  cairo_svg_surface_restrict_to_version(surface, CAIRO_SVG_VERSION_1_1);
  cairo_svg_surface_set_document_unit(surface, CAIRO_SVG_UNIT_PT);
  cairo_t* cr = cairo_create(surface);
  draw(plot, cr, 0, 0, plot.width, plot.height);
  cairo_destroy(cr);
  cairo_surface_finish(surface);
  check_surface(surface, "SVG output");
  cairo_surface_destroy(surface);
  return compact_paths(renumber_ids(out, id_prefix));
}

std::string to_png(const Plot& plot, double scale) {
  const int w = static_cast<int>(std::ceil(plot.width * scale)), h = static_cast<int>(std::ceil(plot.height * scale));
  cairo_surface_t* surface = cairo_image_surface_create(CAIRO_FORMAT_ARGB32, w, h);
  check_surface(surface, "image surface");
  cairo_t* cr = cairo_create(surface);
  cairo_scale(cr, scale, scale);
  draw(plot, cr, 0, 0, plot.width, plot.height);
  cairo_destroy(cr);
  std::string out;
  cairo_surface_write_to_png_stream(surface, append_to_string, &out);
  cairo_surface_destroy(surface);
  return out;
}

}  // namespace swaybound::plot
