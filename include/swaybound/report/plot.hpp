#pragma once
// A small plotting library for the review packet. One drawing routine per plot kind, written
// against cairo only, rendered three ways: SVG text (inline in report.html), a region of a cairo
// page (report.pdf) and PNG bytes.
//
// Style (our own): white field, light grid at the major ticks, a dark frame, the legend in a row
// between the title and the field so it never covers data. Every series has its own colour AND
// its own dash pattern AND its own marker shape, so a plot reads in greyscale and with any
// colour-vision deficiency. Colours: the Okabe-Ito palette (M. Okabe and K. Ito, "Color Universal
// Design", 2002/2008), without its yellow, which is too light on white. Heat maps: viridis
// (S. van der Walt and N. Smith, matplotlib, 2015; perceptually uniform and monotonic in
// lightness), interpolated from 11 control points sampled from it.
//
// Every size is in points (1/72 in); text is laid out with Pango in DejaVu Sans.
#include <cmath>
#include <limits>
#include <string>
#include <utility>
#include <vector>

typedef struct _cairo cairo_t;  // cairo's own declaration; cairo.h is needed only by the caller

namespace swaybound::plot {

struct Rgb {
  double r = 0, g = 0, b = 0;  ///< 0..1
};

/// Series colour i (Okabe-Ito order: blue, vermillion, bluish green, reddish purple, orange,
/// sky blue, black), cycling.
Rgb series_colour(int i);
/// Dash pattern i (solid, dashed, dotted, dash-dot, long dash, dash-dot-dot), cycling; empty = solid.
std::vector<double> series_dash(int i);
/// Viridis at t in [0, 1] (clamped).
Rgb sequential_colour(double t);

/// "Nice" tick positions covering [lo, hi] with about `target` intervals of 1, 2 or 5 x 10^k
/// (P. Heckbert, "Nice numbers for graph labels", Graphics Gems, 1990). The first tick is <= lo
/// and the last >= hi.
std::vector<double> nice_ticks(double lo, double hi, int target);

/// A tick label for `value` on an axis whose ticks are `step` apart: enough decimals to tell the
/// ticks apart, no trailing noise ("0.25", "-10", "1.5e+05").
std::string tick_label(double value, double step);

struct Axis {
  std::string label;  ///< "time"
  std::string unit;   ///< "s"; shown as "time [s]"
  bool log = false;   ///< logarithmic (base 10); values <= 0 are left out
  double min = std::nan(""), max = std::nan("");  ///< a fixed end when finite
  bool include_zero = false;  ///< widen the automatic range to include 0
};

struct Series {
  std::string label;
  std::vector<double> x, y;  ///< NaN breaks a line
  bool line = true;          ///< join the points
  bool markers = false;      ///< a marker at every point (scatter); lines get a few markers anyway
  int style = -1;            ///< colour/dash/marker index; -1: the series' position in the plot
};

/// A reference line: a limit, a threshold. Horizontal at y = value unless `vertical`.
struct RefLine {
  double value = 0;
  std::string label;
  bool vertical = false;
  double from = -std::numeric_limits<double>::infinity();  ///< extent along the other axis
  double to = std::numeric_limits<double>::infinity();
};

struct Point {
  double x = 0, y = 0;
};

/// A labelled point on an xy plot: a peak with its value and time. The axes always include it.
struct PointMark {
  double x = 0, y = 0;
  std::string label;  ///< e.g. "peak 99.7 kN at 12.31 s"
  int style = 0;      ///< colour index of the series it belongs to
};

/// A shaded interval of the x axis across the whole plot area (e.g. while a rope is slack), drawn
/// under the grid's data: the series, reference lines and marks stay on top.
struct Band {
  double from = 0, to = 0;
};

struct HeatMap {
  std::vector<double> x, y;   ///< cell centres, ascending
  std::vector<double> z;      ///< row-major, y outer: z[j * x.size() + i]; NaN: no value
  std::string z_label, z_unit;
  std::vector<RefLine> z_marks;  ///< marked on the colour bar (e.g. a threshold)
  std::vector<std::vector<Point>> outlines;  ///< closed polygons in data coordinates
  std::string outline_label;     ///< legend text of the outlines
  std::string missing_label = "run failed";  ///< legend text of NaN cells (shown only if any)
};

/// A sketch of the chain hanging from its top pivot, one panel per shape, deflected by the shape.
struct ChainSketch {
  std::vector<double> lengths;              ///< per link [m]
  std::vector<std::vector<double>> shapes;  ///< per panel, per link [-]
  std::vector<std::string> captions;        ///< per panel
  double amplitude = 0.35;  ///< sketch angle of the largest shape component [rad]
};

enum class Kind { xy, heat_map, chain };

struct Plot {
  Kind kind = Kind::xy;
  std::string title;
  Axis x, y;
  std::vector<Series> series;
  std::vector<RefLine> refs;
  std::vector<PointMark> marks;  ///< xy: labelled points (drawn above the series)
  std::vector<Band> bands;       ///< xy: shaded x intervals (they do not widen the axes)
  std::string band_label;        ///< xy: legend text of the bands (one entry, shown when any band shows)
  HeatMap heat;
  ChainSketch chain;
  bool mark_ends = false;   ///< xy: mark the first point (circle) and last point (square) of series 0
  bool equal_aspect = false;///< xy: same scale on both axes (phase portraits)
  std::string empty_text = "no data";  ///< shown when there is nothing to draw
  double width = 480, height = 270;    ///< default size for SVG/PNG [pt]
};

// Builders of the plot kinds the packet uses.
Plot line_chart(std::string title, Axis x, Axis y, std::vector<Series> series, std::vector<RefLine> refs = {});
Plot scatter_chart(std::string title, Axis x, Axis y, std::vector<Series> series, std::vector<RefLine> refs = {});
Plot phase_portrait(std::string title, Axis x, Axis y, std::vector<double> xs, std::vector<double> ys);
Plot heat_map(std::string title, Axis x, Axis y, HeatMap map);
Plot mode_shapes(std::string title, ChainSketch sketch);

/// Draws `plot` into the rectangle (x, y, width, height) of `cr` (user units = points). The
/// state of `cr` is saved and restored.
void draw(const Plot& plot, cairo_t* cr, double x, double y, double width, double height);

/// SVG document text, plot.width x plot.height points. Element ids are `id_prefix` followed by a
/// number, in order of appearance, so the same plot always gives the same text; give each SVG on
/// one HTML page its own prefix.
std::string to_svg(const Plot& plot, const std::string& id_prefix = "p");

/// PNG file bytes at `scale` pixels per point (1 = 72 dpi).
std::string to_png(const Plot& plot, double scale = 2.0);

}  // namespace swaybound::plot
