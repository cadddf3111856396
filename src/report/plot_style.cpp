// Plot styles: the colour-blind-safe palettes, dashes, markers and text placement shared by every plot.
#include "plot_draw.hpp"

#include <cairo.h>

#include <algorithm>
#include <array>
#include <cmath>

#include <fmt/format.h>

namespace swaybound::plot::detail {

namespace {

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

}  // namespace

Marker series_marker(int i) { return static_cast<Marker>(((i % kMarkers) + kMarkers) % kMarkers); }

void set_colour(cairo_t* cr, const Rgb& c, double alpha) { cairo_set_source_rgba(cr, c.r, c.g, c.b, alpha); }

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

void haloed_level_line(cairo_t* cr, double x0, double x1, double y) {
  cairo_set_source_rgb(cr, 1, 1, 1);
  cairo_set_line_width(cr, 3);
  cairo_move_to(cr, x0, y);
  cairo_line_to(cr, x1, y);
  cairo_stroke(cr);
  set_colour(cr, kRef);
  cairo_set_line_width(cr, 1.2);
  cairo_move_to(cr, x0, y);
  cairo_line_to(cr, x1, y);
  cairo_stroke(cr);
}

void draw_marker(cairo_t* cr, Marker m, double x, double y, double r, const Rgb& c) {
  cairo_new_path(cr);
  marker_path(cr, m, x, y, r);
  paint_markers(cr, m, c, true);
}

Text make_text(cairo_t* cr, const std::string& markup, const Font& font, double width) {
  Text t;
  t.layout = report_text::layout(cr, markup, font, width);
  t.w = report_text::width_of(t.layout.get());
  t.h = report_text::height_of(t.layout.get());
  return t;
}

/// Draws text anchored at (x, y): ax, ay in [0, 1] select the point of the text box (0 = left/top).
void put(cairo_t* cr, const Text& t, double x, double y, double ax, double ay, const Rgb& c) {
  set_colour(cr, c);
  report_text::show(cr, t.layout.get(), x - ax * t.w, y - ay * t.h);
}

/// Text with a white halo, for labels drawn over data.
void put_halo(cairo_t* cr, const Text& t, double x, double y, double ax, double ay, const Rgb& c) {
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

}  // namespace swaybound::plot::detail

namespace swaybound::plot {

using namespace detail;

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

}  // namespace swaybound::plot
