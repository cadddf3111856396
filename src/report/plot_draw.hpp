#pragma once
// What the plot files share (internal to src/report): the ink colours, markers, text placement,
// the frame of an axis-based plot and the drawing function of each plot kind. The public side is
// include/swaybound/report/plot.hpp.
//   plot_style.cpp   palettes, dashes, markers, text
//   plot_axes.cpp    scales, ticks, grid, frame layout and titles
//   plot_legend.cpp  legends
//   plot_xy.cpp      line, scatter and phase-portrait plots
//   plot_heat.cpp    heat maps
//   plot_chain.cpp   chain sketches (mode shapes)
//   plot_output.cpp  draw() dispatch, SVG and PNG output
#include <cairo.h>

#include <cmath>
#include <string>
#include <vector>

#include "swaybound/report/plot.hpp"
#include "text.hpp"

namespace swaybound::plot::detail {

using report_text::Font;
using report_text::LayoutPtr;

// --- Colours and markers (plot_style.cpp) -------------------------------------------------------

inline constexpr Rgb kInk{0.12, 0.12, 0.14};
inline constexpr Rgb kSoftInk{0.35, 0.35, 0.38};
inline constexpr Rgb kGrid{0.87, 0.87, 0.89};
inline constexpr Rgb kMinorGrid{0.94, 0.94, 0.95};
inline constexpr Rgb kRef{0.15, 0.15, 0.15};
inline constexpr Rgb kBandFill{0.86, 0.86, 0.90};  ///< shaded x intervals (Plot::bands)

enum class Marker { circle, square, triangle, diamond, triangle_down, plus, cross };
inline constexpr int kMarkers = 7;

/// The marker of series style i (cycles through the seven shapes).
Marker series_marker(int i);
/// Sets the source colour of `cr`.
void set_colour(cairo_t* cr, const Rgb& c, double alpha = 1);
/// Sets the dash pattern of `cr` (empty: solid).
void set_dash(cairo_t* cr, const std::vector<double>& dash);
/// Whether marker `m` is drawn filled (else open).
bool filled_marker(Marker m);
/// Adds the outline of one marker to the current path.
void marker_path(cairo_t* cr, Marker m, double x, double y, double r);
/// Paints the markers on the current path (open shapes white inside when `opaque`).
void paint_markers(cairo_t* cr, Marker m, const Rgb& c, bool opaque);
/// Draws one marker of radius r at (x, y).
void draw_marker(cairo_t* cr, Marker m, double x, double y, double r, const Rgb& c);
/// A horizontal reference line from x0 to x1 at y: 1.2 pt in kRef over a 3 pt white halo.
void haloed_level_line(cairo_t* cr, double x0, double x1, double y);

// --- Text (plot_style.cpp) -------------------------------------------------------------------

struct Text {
  LayoutPtr layout;
  double w = 0, h = 0;
};

/// A laid-out piece of markup in `font`, wrapped at `width` points when width > 0.
Text make_text(cairo_t* cr, const std::string& markup, const Font& font, double width = -1);
/// Draws text anchored at (x, y): ax, ay in [0, 1] select the point of the text box (0 = left/top).
void put(cairo_t* cr, const Text& t, double x, double y, double ax, double ay, const Rgb& c = kInk);
/// Text with a white halo, for labels drawn over data.
void put_halo(cairo_t* cr, const Text& t, double x, double y, double ax, double ay, const Rgb& c = kInk);

inline const Font kTitleFont{9.5, true};
inline const Font kLabelFont{8.2};
inline const Font kTickFont{7.4};
inline const Font kLegendFont{7.4};
inline const Font kRefFont{7.0, false, true};

// --- Scales, ticks and the frame (plot_axes.cpp) ------------------------------------------------

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

/// The axis title as markup: label and [unit].
std::string axis_title(const Axis& a);
/// Whether v can be drawn on axis a (finite; positive on a log axis).
bool finite_for(const Axis& a, double v);
/// A "nice" number near x (1, 2, 5 times a power of ten): rounded, or the next one up.
double nice_number(double x, bool round);
/// Range of an axis from its data: fixed ends, nice ends otherwise. Returns the ticks.
Ticks resolve_axis(const Axis& a, double data_lo, double data_hi, double length_pt, bool horizontal, Scale& s);

// --- Legend (plot_legend.cpp) ------------------------------------------------------------------

struct LegendEntry {
  enum Kind { series, ref, outline, missing, mark, point, note, band } kind = series;
  int style = 0;
  bool line = true, markers = false;
  std::string text;
  Marker marker = Marker::circle;  // kind point: drawn in ink
};

struct LegendLayout {
  std::vector<Text> texts;
  std::vector<double> x, y;  // offsets of each entry from the legend's top-left
  double height = 0;
};

/// Places the legend entries in rows within `width`.
LegendLayout layout_legend(cairo_t* cr, const std::vector<LegendEntry>& entries, double width);
/// Draws the legend laid out by layout_legend with its top-left at (x0, y0).
void draw_legend(cairo_t* cr, const std::vector<LegendEntry>& entries, const LegendLayout& l, double x0, double y0);

// --- Shared frame of the xy plots and the heat map (plot_axes.cpp) -------------------------------

struct Frame {
  double x0, y0, x1, y1;  // plot area
  Scale sx, sy;
  Ticks tx, ty;
};

/// Lays out title, legend, axis titles and ticks around the plot area.
struct Chrome {
  Text title, xlabel, ylabel;
  LegendLayout legend;
  double legend_y = 0;
};

/// Fills a rectangle white.
void fill_white(cairo_t* cr, double x, double y, double w, double h);
/// Major and minor grid lines of the frame.
void draw_grid(cairo_t* cr, const Frame& f);
/// The frame's outline, tick marks and tick labels.
void draw_axes(cairo_t* cr, const Frame& f);
/// The widest tick label [pt].
double max_label_width(cairo_t* cr, const Ticks& t);
/// Computes the plot area of an axis-based plot: title and legend on top, ticks and axis titles
/// around. `right_extra` is reserved at the right (colour bar).
Frame layout_frame(cairo_t* cr, const Plot& p, double W, double H, const std::vector<LegendEntry>& legend,
                   double xlo, double xhi, double ylo, double yhi, double right_extra, Chrome& chrome);
/// Draws the title, legend and axis titles laid out by layout_frame.
void draw_chrome(cairo_t* cr, const Plot& p, const Frame& f, const Chrome& c, const std::vector<LegendEntry>& legend,
                 double H);

// --- The plot kinds ------------------------------------------------------------------------------

/// The plot's "no data" text in the middle of its frame (plot_xy.cpp).
void draw_empty(cairo_t* cr, const Frame& f, const std::string& text);
/// An xy plot (line, scatter, phase portrait) in a W x H box at the origin (plot_xy.cpp).
void draw_xy(cairo_t* cr, const Plot& p, double W, double H);
/// A heat map with its colour bar (plot_heat.cpp).
void draw_heat(cairo_t* cr, const Plot& p, double W, double H);
/// A chain sketch (plot_chain.cpp).
void draw_chain(cairo_t* cr, const Plot& p, double W, double H);

}  // namespace swaybound::plot::detail
