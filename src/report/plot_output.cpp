// Drawing a plot onto a cairo context, and its SVG and PNG text (stable ids, compact paths).
#include "plot_draw.hpp"

#include <cairo-svg.h>
#include <cairo.h>

#include <algorithm>
#include <cctype>
#include <cmath>
#include <map>
#include <stdexcept>

#include <fmt/format.h>

namespace swaybound::plot::detail {

namespace {

cairo_status_t append_to_string(void* closure, const unsigned char* data, unsigned int length) {
  static_cast<std::string*>(closure)->append(reinterpret_cast<const char*>(data), length);
  return CAIRO_STATUS_SUCCESS;
}

void check_surface(cairo_surface_t* s, const char* what) {
  if (cairo_surface_status(s) != CAIRO_STATUS_SUCCESS)
    throw std::runtime_error(fmt::format("{}: {}", what, cairo_status_to_string(cairo_surface_status(s))));
}

}  // namespace

}  // namespace swaybound::plot::detail

namespace swaybound::plot {

using namespace detail;

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
