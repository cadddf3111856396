#include "text.hpp"

#include <glib-object.h>

namespace swaybound::report_text {

void GObjectDeleter::operator()(void* p) const {
  if (p) g_object_unref(p);
}

std::string escape(const std::string& text) {
  std::string out;
  out.reserve(text.size());
  std::size_t run = 0;  // code points since the last space
  for (char c : text) {
    const bool lead = (static_cast<unsigned char>(c) & 0xC0) != 0x80;
    if (c == ' ' || c == '\n' || c == '\t') {
      run = 0;
    } else if (lead && ++run > kSoftBreakEvery) {
      out += "\u200B";  // zero-width space: Pango may break here instead of splitting the run itself
      run = 1;
    }
    switch (c) {
      case '&': out += "&amp;"; break;
      case '<': out += "&lt;"; break;
      case '>': out += "&gt;"; break;
      case '"': out += "&quot;"; break;
      case '\'': out += "&#39;"; break;
      default: out += c;
    }
  }
  return out;
}

LayoutPtr layout(cairo_t* cr, const std::string& markup, const Font& font, double width) {
  PangoContext* context = pango_cairo_create_context(cr);
  cairo_font_options_t* options = cairo_font_options_create();
  cairo_font_options_set_hint_metrics(options, CAIRO_HINT_METRICS_OFF);
  cairo_font_options_set_hint_style(options, CAIRO_HINT_STYLE_NONE);
  pango_cairo_context_set_font_options(context, options);
  cairo_font_options_destroy(options);
  PangoLayout* l = pango_layout_new(context);
  g_object_unref(context);

  PangoFontDescription* desc =
      pango_font_description_from_string(font.mono ? "DejaVu Sans Mono, Monospace" : "DejaVu Sans, Sans");
  pango_font_description_set_absolute_size(desc, font.size * PANGO_SCALE);
  pango_font_description_set_weight(desc, font.bold ? PANGO_WEIGHT_BOLD : PANGO_WEIGHT_NORMAL);
  pango_font_description_set_style(desc, font.italic ? PANGO_STYLE_ITALIC : PANGO_STYLE_NORMAL);
  pango_layout_set_font_description(l, desc);
  pango_font_description_free(desc);
  if (width > 0) {
    pango_layout_set_width(l, static_cast<int>(width * PANGO_SCALE));
    pango_layout_set_wrap(l, PANGO_WRAP_WORD_CHAR);
  }
  pango_layout_set_markup(l, markup.c_str(), -1);
  return LayoutPtr(l);
}

double width_of(PangoLayout* l) {
  PangoRectangle logical;
  pango_layout_get_extents(l, nullptr, &logical);
  return static_cast<double>(logical.width) / PANGO_SCALE;
}

double height_of(PangoLayout* l) {
  PangoRectangle logical;
  pango_layout_get_extents(l, nullptr, &logical);
  return static_cast<double>(logical.height) / PANGO_SCALE;
}

double baseline_of(PangoLayout* l) { return static_cast<double>(pango_layout_get_baseline(l)) / PANGO_SCALE; }

void show(cairo_t* cr, PangoLayout* l, double x, double y) {
  cairo_move_to(cr, x, y);
  pango_cairo_update_layout(cr, l);
  pango_cairo_show_layout(cr, l);
}

}  // namespace swaybound::report_text
