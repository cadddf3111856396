// Line, scatter and phase-portrait plots: series, labelled points, reference lines.
#include "plot_draw.hpp"

#include <cairo.h>

#include <algorithm>
#include <cmath>

#include <fmt/format.h>

namespace swaybound::plot::detail {

namespace {

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
/// a label that would overlap one already placed, or another point's marker, moves down (or up) a
/// line at a time, with a thin leader to its point.
void draw_marks(cairo_t* cr, const Frame& f, const Plot& p) {
  struct Box {
    double x0, y0, x1, y1;
  };
  std::vector<Box> placed;
  constexpr double kMarkRadius = 4.2;
  for (const auto& m : p.marks)
    if (finite_for(p.x, m.x) && finite_for(p.y, m.y)) {
      const double x = f.sx.map(m.x), y = f.sy.map(m.y);
      placed.push_back({x - kMarkRadius, y - kMarkRadius, x + kMarkRadius, y + kMarkRadius});
    }
  const auto overlaps = [&](const Box& b) {
    for (const Box& o : placed)
      if (b.x0 < o.x1 && o.x0 < b.x1 && b.y0 < o.y1 && o.y0 < b.y1) return true;
    return false;
  };
  for (const auto& m : p.marks) {
    if (!finite_for(p.x, m.x) || !finite_for(p.y, m.y)) continue;
    const double x = f.sx.map(m.x), y = f.sy.map(m.y);
    draw_marker(cr, Marker::circle, x, y, kMarkRadius, series_colour(m.style));
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

/// The shaded x intervals, clipped to the frame, under everything else of the data area.
void draw_bands(cairo_t* cr, const Frame& f, const Plot& p) {
  cairo_save(cr);
  cairo_rectangle(cr, f.x0, f.y0, f.x1 - f.x0, f.y1 - f.y0);
  cairo_clip(cr);
  set_colour(cr, kBandFill);
  for (const Band& b : p.bands) {
    if (!finite_for(p.x, b.from) || !finite_for(p.x, b.to) || b.to < f.sx.lo || b.from > f.sx.hi) continue;
    const double a = std::clamp(f.sx.map(b.from), f.x0, f.x1), c = std::clamp(f.sx.map(b.to), f.x0, f.x1);
    // At least half a point wide, so a short interval still shows.
    const double w = std::max(std::fabs(c - a), 0.5);
    cairo_rectangle(cr, std::min(a, c), f.y0, w, f.y1 - f.y0);
  }
  cairo_fill(cr);
  cairo_restore(cr);
}

/// Whether some band lies (partly) within the x range [lo, hi].
bool bands_show(const Plot& p, double lo, double hi) {
  return std::any_of(p.bands.begin(), p.bands.end(),
                     [&](const Band& b) { return b.to >= lo && b.from <= hi; });
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

}  // namespace

void draw_empty(cairo_t* cr, const Frame& f, const std::string& text) {
  Text t = make_text(cr, report_text::escape(text), Font{8.5, false, true});
  put(cr, t, 0.5 * (f.x0 + f.x1), 0.5 * (f.y0 + f.y1), 0.5, 0.5, kSoftInk);
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
  if (has_data(p) && !p.band_label.empty() && bands_show(p, xlo, xhi))
    legend.push_back({LegendEntry::band, 0, false, false, p.band_label});
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
  if (has_data(p)) draw_bands(cr, f, p);
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

}  // namespace swaybound::plot::detail

namespace swaybound::plot {

using namespace detail;

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

}  // namespace swaybound::plot
