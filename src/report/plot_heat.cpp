// Heat maps: cells coloured on a sequential scale, with a colour bar and optional contour marks.
#include "plot_draw.hpp"

#include <cairo.h>

#include <algorithm>
#include <cmath>

#include <fmt/format.h>

namespace swaybound::plot::detail {

namespace {

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

}  // namespace

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
    haloed_level_line(cr, bx0 - 3, bx1 + 3, py);
    cairo_restore(cr);
  }
  cairo_save(cr);
  cairo_translate(cr, bx1 + 5 + label_w + 5, 0.5 * (f.y0 + f.y1));
  cairo_rotate(cr, M_PI / 2);
  put(cr, zlabel, 0, 0, 0.5, 1);
  cairo_restore(cr);
}

}  // namespace swaybound::plot::detail

namespace swaybound::plot {

using namespace detail;

Plot heat_map(std::string title, Axis x, Axis y, HeatMap map) {
  Plot p;
  p.kind = Kind::heat_map;
  p.title = std::move(title);
  p.x = std::move(x);
  p.y = std::move(y);
  p.heat = std::move(map);
  return p;
}

}  // namespace swaybound::plot
