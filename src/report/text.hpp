#pragma once
// Pango text on cairo, shared by the plots and the PDF composer (internal to src/report).
#include <cairo.h>
#include <pango/pangocairo.h>

#include <cstddef>
#include <memory>
#include <string>

namespace swaybound::report_text {

struct GObjectDeleter {
  void operator()(void* p) const;
};
using LayoutPtr = std::unique_ptr<PangoLayout, GObjectDeleter>;

struct Font {
  double size = 9;  ///< [pt]
  bool bold = false;
  bool italic = false;
  bool mono = false;
};

/// Longest run of characters without a space that escape() leaves without a break opportunity.
/// Pango breaks an unbreakable run that does not fit by re-measuring what is left of it on every
/// line, which is quadratic in its length (a 20,000-character name took 3 s, 200,000 took minutes).
inline constexpr std::size_t kSoftBreakEvery = 80;

/// Escapes text for Pango markup, with an invisible break opportunity (U+200B) in every run of
/// more than kSoftBreakEvery characters without a space, so wrapping stays linear in the length.
std::string escape(const std::string& text);

/// A layout of `markup` (Pango markup; use escape() for plain text) in `font`, wrapped at `width`
/// points when width > 0. Metrics are unhinted so they do not depend on the surface or transform.
LayoutPtr layout(cairo_t* cr, const std::string& markup, const Font& font, double width = -1);

/// Logical size of a layout [pt].
double width_of(PangoLayout* l);
double height_of(PangoLayout* l);
/// Baseline of the first line from the top [pt].
double baseline_of(PangoLayout* l);

/// Shows the layout with its top-left corner at (x, y).
void show(cairo_t* cr, PangoLayout* l, double x, double y);

}  // namespace swaybound::report_text
