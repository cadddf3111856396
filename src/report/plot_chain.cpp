// The chain sketch: the links of a mechanism drawn in a mode shape.
#include "plot_draw.hpp"

#include <cairo.h>

#include <algorithm>
#include <cmath>

#include <fmt/format.h>

namespace swaybound::plot::detail {

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

}  // namespace swaybound::plot::detail

namespace swaybound::plot {

using namespace detail;

Plot mode_shapes(std::string title, ChainSketch sketch) {
  Plot p;
  p.kind = Kind::chain;
  p.title = std::move(title);
  p.chain = std::move(sketch);
  return p;
}

}  // namespace swaybound::plot
