// Plot legends: entries laid out in rows over the plot area, each with a sample of its line or marker.
#include "plot_draw.hpp"

#include <cairo.h>

#include <algorithm>
#include <cmath>

#include <fmt/format.h>

namespace swaybound::plot::detail {

namespace {

constexpr double kSampleWidth = 24;

/// The horizontal sample stroke of a legend entry, in the current colour, width and dash.
void sample_line(cairo_t* cr, double x, double cy) {
  cairo_move_to(cr, x, cy);
  cairo_line_to(cr, x + kSampleWidth, cy);
  cairo_stroke(cr);
}

}  // namespace

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
          sample_line(cr, x, cy);
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
        haloed_level_line(cr, bx - 3, bx + 13, cy);
        break;
      }
      case LegendEntry::ref:
        set_colour(cr, kRef);
        cairo_set_line_width(cr, 1.1);
        set_dash(cr, {5, 2.5});
        sample_line(cr, x, cy);
        break;
      case LegendEntry::outline:
        cairo_set_source_rgb(cr, 1, 1, 1);
        cairo_set_line_width(cr, 3.2);
        sample_line(cr, x, cy);
        set_colour(cr, kInk);
        cairo_set_line_width(cr, 1.4);
        set_dash(cr, {4, 2});
        sample_line(cr, x, cy);
        // a light box behind so the white casing shows
        break;
      case LegendEntry::note: break;
      case LegendEntry::band:
        cairo_rectangle(cr, x + 4, cy - 4.5, kSampleWidth - 8, 9);
        set_colour(cr, kBandFill);
        cairo_fill_preserve(cr);
        set_colour(cr, kSoftInk);
        cairo_set_line_width(cr, 0.5);
        cairo_stroke(cr);
        break;
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

}  // namespace swaybound::plot::detail
