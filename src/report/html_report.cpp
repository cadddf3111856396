// report.html: the packet's document (report_model.hpp) as one self-contained HTML file: inline
// CSS (screen and print), inline SVG plots, no scripts, no network.
#include <map>
#include <string>

#include <fmt/format.h>

#include "report_model.hpp"
#include "swaybound/core/cancel.hpp"
#include "swaybound/report/document.hpp"
#include "text.hpp"

namespace swaybound {

namespace {

using namespace report_doc;

std::string esc(const std::string& s) { return report_text::escape(s); }

/// A CSS string literal (for @page margin boxes).
std::string css_string(const std::string& s) {
  std::string out = "\"";
  for (unsigned char c : s) {
    if (c == '"' || c == '\\' || c == '<' || c == '>' || c == '&' || c < 0x20)
      out += fmt::format("\\{:x} ", static_cast<unsigned>(c));
    else
      out += static_cast<char>(c);
  }
  return out + "\"";
}

std::string rich(const Rich& r) {
  std::string out;
  for (const auto& s : r) {
    std::string t = esc(s.text);
    if (s.mono) t = "<code>" + t + "</code>";
    if (s.italic) t = "<em>" + t + "</em>";
    if (s.bold) t = "<strong>" + t + "</strong>";
    out += t;
  }
  return out;
}

const char* tone_class(Tone t) {
  switch (t) {
    case Tone::pass: return "tone-pass";
    case Tone::fail: return "tone-fail";
    case Tone::warn: return "tone-warn";
    case Tone::muted: return "tone-muted";
    default: return "";
  }
}

const char* align_class(Align a) {
  switch (a) {
    case Align::right: return "num";
    case Align::center: return "mid";
    default: return "txt";
  }
}

/// cairo's SVG document made fit to sit inline: no XML declaration, ids made unique to this
/// figure (cairo numbers glyphs and clips from 1 in every document), sized by CSS.
std::string inline_svg(const plot::Plot& p, int figure) {
  std::string svg = plot::to_svg(p, fmt::format("f{}-", figure));
  const std::size_t start = svg.find("<svg");
  if (start != std::string::npos) svg.erase(0, start);
  // Root element: drop the fixed size (the viewBox keeps the aspect), add an accessible name.
  const std::size_t end = svg.find('>');
  if (end != std::string::npos) {
    std::string root = svg.substr(0, end);
    for (const char* attr : {" width=\"", " height=\""}) {
      const std::size_t a = root.find(attr);
      if (a != std::string::npos) {
        const std::size_t q = root.find('"', a + std::string(attr).size());
        if (q != std::string::npos) root.erase(a, q + 1 - a);
      }
    }
    root += fmt::format(" role=\"img\" aria-label=\"{}\"", esc(p.title));
    svg = root + svg.substr(end);
  }
  while (!svg.empty() && (svg.back() == '\n' || svg.back() == ' ')) svg.pop_back();
  return svg;
}

const char* kCss = R"CSS(
:root { --ink: #1f1f24; --soft: #60636b; --accent: #1c4f6e; --rule: #b8bfc7; --head: #e8edf2; --zebra: #f6f8fa;
        --pass: #006b4a; --pass-bg: #e3f2eb; --fail: #a83f00; --fail-bg: #fce6d9; --warn: #805400; --warn-bg: #fff2d6; }
* { box-sizing: border-box; }
html { background: #f2f3f5; }
body { margin: 0; color: var(--ink); font: 14px/1.5 "DejaVu Sans", "Segoe UI", Helvetica, Arial, sans-serif; }
.sheet { max-width: 900px; margin: 0 auto; background: #fff; padding: 28px 44px 40px; }
.running { display: flex; justify-content: space-between; font-size: 11.5px; color: var(--soft);
           border-bottom: 1px solid var(--rule); padding-bottom: 6px; margin-bottom: 22px; gap: 16px; }
.running b { color: var(--ink); }
.kicker { font-size: 11.5px; font-weight: bold; letter-spacing: .06em; color: var(--accent); }
h1 { font-size: 30px; line-height: 1.2; margin: 6px 0 2px; }
.mechanism { color: var(--soft); font-size: 16px; margin: 0 0 6px; }
.bar { width: 84px; height: 4px; background: var(--accent); margin: 10px 0 18px; }
nav.toc { border: 1px solid var(--rule); padding: 8px 14px; margin: 0 0 24px; font-size: 13px; }
nav.toc ol { margin: 4px 0; padding-left: 22px; columns: 2; }
nav.toc a { color: var(--accent); text-decoration: none; }
h2 { font-size: 20px; margin: 34px 0 10px; padding-bottom: 4px; border-bottom: 1.5px solid var(--accent); }
h2 .num { color: var(--accent); display: inline-block; min-width: 1.8em; }
h3 { font-size: 15px; color: var(--accent); margin: 20px 0 6px; }
p { margin: 0 0 10px; }
ul.bullets { padding-left: 20px; margin: 0 0 12px; }
ul.bullets li { margin-bottom: 4px; }
ul.bullets li::marker { color: var(--accent); }
dl.fields { display: grid; grid-template-columns: 150px 1fr; margin: 0 0 16px; border-top: 1px solid #dfe3e7; }
dl.fields dt, dl.fields dd { margin: 0; padding: 4px 0; border-bottom: 1px solid #dfe3e7; }
dl.fields dt { font-weight: bold; color: var(--soft); }
dl.fields dd { overflow-wrap: anywhere; }
.callout { border-left: 5px solid var(--accent); background: var(--head); padding: 8px 14px; margin: 4px 0 14px; }
.callout.tone-pass { border-color: var(--pass); background: var(--pass-bg); color: var(--pass); }
.callout.tone-fail { border-color: var(--fail); background: var(--fail-bg); color: var(--fail); }
.callout.tone-warn { border-color: var(--warn); background: var(--warn-bg); color: var(--warn); }
table { border-collapse: collapse; width: 100%; margin: 0 0 4px; font-size: 12.5px; }
thead th { background: var(--head); text-align: left; padding: 4px 6px; border-bottom: 1.5px solid var(--soft);
           vertical-align: bottom; }
td { padding: 3px 6px; border-bottom: 1px solid #dde1e5; vertical-align: top; }
tbody tr:nth-child(even) td { background: var(--zebra); }
tbody tr.tone-fail td { background: var(--fail-bg); }
tbody tr.tone-warn td { background: var(--warn-bg); }
th.num, td.num { text-align: right; font-variant-numeric: tabular-nums; }
td.num { white-space: nowrap; }
.table-wrap { overflow-x: auto; }
#verdict-table th.c-applies-to { width: 10em; }
#verdict-table th.c-governing { width: 11em; }
#verdict-table th.c-where { width: 8em; }
#verdict-table td.c-governing { overflow-wrap: anywhere; }
th.mid, td.mid { text-align: center; }
td.txt { overflow-wrap: break-word; }
td.tone-pass { color: var(--pass); font-weight: bold; }
td.tone-fail { color: var(--fail); font-weight: bold; }
td.tone-warn { color: var(--warn); font-weight: bold; }
.table-note { font-size: 11.5px; font-style: italic; color: var(--soft); margin: 2px 0 14px; }
table.signatures { border-collapse: separate; border-spacing: 14px 0; margin-left: -14px; width: calc(100% + 28px); }
table.signatures th { border-bottom: 1.5px solid var(--soft); }
table.signatures td { height: 46px; vertical-align: bottom; background: #fff !important; border-bottom: 1px solid #dde1e5; }
table.signatures td.line { border-bottom: 1px solid var(--soft); }
table.signatures td.role { font-weight: bold; width: 18%; }
.fig-row { display: flex; gap: 16px; justify-content: center; margin: 6px 0 16px; }
figure.fig { margin: 0; }
figure.fig svg { display: block; width: 100%; height: auto; border: 1px solid #dfe3e7; }
figure.fig figcaption { font-size: 11.5px; color: var(--soft); margin-top: 4px; }
footer.running { border-top: 1px solid var(--rule); border-bottom: 0; padding-top: 6px; margin: 30px 0 0; }
@media print {
  html, .sheet { background: #fff; }
  body { font-size: 10pt; }
  .sheet { max-width: none; padding: 0; }
  nav.toc { display: none; }
  section.page { break-before: page; }
  h2, h3 { break-after: avoid; }
  figure.fig, .fig-row, tr, .callout, dl.fields { break-inside: avoid; }
  thead { display: table-header-group; }
  header.running, footer.running { display: none; }  /* the @page margin boxes carry them */
  .table-wrap { overflow: visible; }
  table { font-size: 7.5pt; }
  td, thead th { padding: 2px 3px; }
  #verdict-table th.c-applies-to, #verdict-table th.c-governing, #verdict-table th.c-where { width: auto; }
  * { -webkit-print-color-adjust: exact; print-color-adjust: exact; }
}
)CSS";

class HtmlWriter {
 public:
  explicit HtmlWriter(const Document& d) : d_(d) {}

  std::string run() {
    const std::string header_left = d_.mechanism;
    const std::string header_right =
        fmt::format("rev {} · spec SHA-256 {}", d_.revision.empty() ? "-" : d_.revision, d_.sha_prefix.empty() ? "-" : d_.sha_prefix);
    const std::string footer_left = fmt::format("swaybound {} ({}) · {} · screening aid, not a certification",
                                                d_.tool_version, d_.commit, d_.date.empty() ? "undated" : d_.date);
    o_ += "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\"/>\n";
    o_ += "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\"/>\n";
    o_ += "<meta name=\"generator\" content=\"" + esc("swaybound " + d_.tool_version) + "\"/>\n";
    o_ += "<title>" + esc(d_.title == d_.mechanism ? d_.title : d_.title + " - " + d_.mechanism) + "</title>\n<style>" + kCss;
    o_ += fmt::format("@page {{ size: {}; margin: 18mm 15mm 18mm 15mm;\n"
                      "  @top-left {{ content: {}; font-size: 8pt; color: #60636b; }}\n"
                      "  @top-right {{ content: {}; font-size: 8pt; color: #60636b; }}\n"
                      "  @bottom-left {{ content: {}; font-size: 8pt; color: #60636b; }}\n"
                      "  @bottom-right {{ content: \"page \" counter(page) \" of \" counter(pages); font-size: 8pt; color: #60636b; }} }}\n",
                      d_.paper == Paper::letter ? "letter" : "A4", css_string(header_left), css_string(header_right),
                      css_string(footer_left));
    o_ += "</style>\n</head>\n<body>\n<div class=\"sheet\">\n";
    o_ += "<header class=\"running\"><b>" + esc(header_left) + "</b><span>" + esc(header_right) + "</span></header>\n";
    o_ += "<main>\n<div class=\"kicker\">DESIGN CHECK OF A PENDULUM CHAIN · REVIEW PACKET</div>\n";
    o_ += "<h1>" + esc(d_.title) + "</h1>\n";
    if (d_.title != d_.mechanism) o_ += "<p class=\"mechanism\">" + esc(d_.mechanism) + "</p>\n";
    o_ += "<div class=\"bar\"></div>\n<nav class=\"toc\"><strong>Contents</strong>\n<ol>\n";
    for (const auto& s : d_.sections)
      o_ += fmt::format("<li><a href=\"#{}\">{}</a></li>\n", esc(s.id), esc(s.title));
    o_ += "</ol>\n</nav>\n";
    for (const auto& s : d_.sections) {
      throw_if_cancelled();  // a long report stops promptly on SIGINT/SIGTERM
      section(s);
    }
    o_ += "</main>\n<footer class=\"running\"><span>" + esc(footer_left) + "</span><span>" +
          esc(d_.pass ? "verdict: pass" : "verdict: FAIL") + "</span></footer>\n</div>\n</body>\n</html>\n";
    return o_;
  }

 private:
  void section(const Section& s) {
    o_ += fmt::format("<section id=\"{}\"{}>\n<h2><span class=\"num\">{}</span>{}</h2>\n", esc(s.id),
                      s.new_page ? " class=\"page\"" : "", esc(s.number), esc(s.title));
    for (const auto& b : s.blocks) block(b);
    o_ += "</section>\n";
  }

  void block(const Block& b) {
    switch (b.kind) {
      case Block::Kind::paragraph: o_ += "<p>" + rich(b.text) + "</p>\n"; break;
      case Block::Kind::subheading: o_ += "<h3>" + rich(b.text) + "</h3>\n"; break;
      case Block::Kind::bullets:
        o_ += "<ul class=\"bullets\">\n";
        for (const auto& item : b.items) o_ += "<li>" + rich(item) + "</li>\n";
        o_ += "</ul>\n";
        break;
      case Block::Kind::table: table(b.table); break;
      case Block::Kind::figures: figures(b.figures); break;
      case Block::Kind::fields:
        o_ += "<dl class=\"fields\">\n";
        for (const auto& f : b.field_list) o_ += "<dt>" + esc(f.label) + "</dt><dd>" + esc(f.value) + "</dd>\n";
        o_ += "</dl>\n";
        break;
      case Block::Kind::signatures:
        o_ += "<h3>Sign-off</h3>\n<table class=\"signatures\" id=\"signatures\">\n<thead><tr><th>role</th><th>name</th>"
              "<th>signature</th><th>date</th></tr></thead>\n<tbody>\n";
        for (std::size_t i = 0; i < b.roles.size(); ++i) {
          const std::string name = i < b.names.size() ? b.names[i] : "";
          o_ += "<tr><td class=\"role\">" + esc(b.roles[i]) + "</td><td class=\"" + (name.empty() ? "line" : "") + "\">" +
                esc(name) + "</td><td class=\"line\"></td><td class=\"line\"></td></tr>\n";
        }
        o_ += "</tbody>\n</table>\n";
        break;
      case Block::Kind::callout:
        o_ += fmt::format("<div class=\"callout {}\">{}</div>\n", tone_class(b.tone), rich(b.text));
        break;
    }
  }

  void table(const Table& t) {
    o_ += "<div class=\"table-wrap\">\n";
    o_ += t.id.empty() ? "<table>\n" : fmt::format("<table id=\"{}\">\n", esc(t.id));
    o_ += "<thead><tr>";
    for (const auto& c : t.columns)
      o_ += fmt::format("<th class=\"{} c-{}\">{}</th>", align_class(c.align), esc(c.key), esc(c.title));
    o_ += "</tr></thead>\n<tbody>\n";
    for (const auto& row : t.rows) {
      const std::string cls = tone_class(row.tone);
      o_ += cls.empty() ? "<tr>" : "<tr class=\"" + cls + "\">";
      for (std::size_t c = 0; c < t.columns.size(); ++c) {
        const std::string cell = c < row.cells.size() ? row.cells[c] : "";
        const Tone tone = c < row.cell_tone.size() ? row.cell_tone[c] : Tone::normal;
        std::string classes = std::string(align_class(t.columns[c].align)) + " c-" + esc(t.columns[c].key);
        if (tone != Tone::normal) classes += std::string(" ") + tone_class(tone);
        o_ += "<td class=\"" + classes + "\">" + esc(cell) + "</td>";
      }
      o_ += "</tr>\n";
    }
    o_ += "</tbody>\n</table>\n</div>\n";
    if (!t.caption.empty()) o_ += "<p class=\"table-note\">" + esc(t.caption) + "</p>\n";
  }

  void figures(const std::vector<Figure>& figs) {
    o_ += "<div class=\"fig-row\">\n";
    for (const auto& f : figs) {
      ++figure_;
      o_ += fmt::format("<figure class=\"fig\" id=\"figure-{}\" style=\"width: {:.0f}%\">\n", figure_,
                        figs.size() > 1 ? 100 * f.width_share - 1 : 100 * f.width_share);
      o_ += inline_svg(f.plot, figure_) + "\n";
      o_ += fmt::format("<figcaption><strong>Figure {}.</strong> {}</figcaption>\n</figure>\n", figure_, esc(f.caption));
    }
    o_ += "</div>\n";
  }

  const Document& d_;
  std::string o_;
  int figure_ = 0;
};

}  // namespace

std::string share_svg_glyphs(const std::string& html) {
  // Pass 1: every <symbol ... id="ID">BODY</symbol> is cut out; equal bodies get one shared id.
  std::map<std::string, std::string> id_of_body, shared_id;  // body -> new id; old id -> new id
  std::string defs, out;
  out.reserve(html.size());
  std::size_t at = 0;
  for (;;) {
    const std::size_t open = html.find("<symbol", at);
    const std::size_t close = open == std::string::npos ? open : html.find("</symbol>", open);
    const std::size_t id_at = open == std::string::npos ? open : html.find(" id=\"", open);
    const std::size_t tag_end = open == std::string::npos ? open : html.find('>', open);
    if (open == std::string::npos || close == std::string::npos || id_at == std::string::npos || id_at > tag_end) {
      out.append(html, at, std::string::npos);
      break;
    }
    const std::size_t id_end = html.find('"', id_at + 5);
    const std::string id = html.substr(id_at + 5, id_end - id_at - 5);
    const std::string body = html.substr(tag_end + 1, close - tag_end - 1);
    auto [it, fresh] = id_of_body.emplace(body, fmt::format("sg{}", id_of_body.size() + 1));
    if (fresh) defs += fmt::format("<symbol overflow=\"visible\" id=\"{}\">{}</symbol>\n", it->second, body);
    shared_id[id] = it->second;
    out.append(html, at, open - at);
    at = close + 9;
    while (at < html.size() && html[at] == '\n') ++at;
  }
  if (shared_id.empty()) return html;
  // Pass 2: references to a cut symbol point at its shared copy.
  std::string linked;
  linked.reserve(out.size());
  at = 0;
  for (;;) {
    const std::size_t ref = out.find("href=\"#", at);
    if (ref == std::string::npos) {
      linked.append(out, at, std::string::npos);
      break;
    }
    const std::size_t start = ref + 7, end = out.find('"', start);
    const auto hit = shared_id.find(out.substr(start, end - start));
    linked.append(out, at, start - at);
    linked += hit == shared_id.end() ? out.substr(start, end - start) : hit->second;
    at = end;
  }
  // The shared glyphs sit once in a hidden SVG at the top of the body.
  const std::size_t body = linked.find("<body>");
  if (body == std::string::npos) return html;
  linked.insert(body + 6, "\n<svg xmlns=\"http://www.w3.org/2000/svg\" xmlns:xlink=\"http://www.w3.org/1999/xlink\" "
                          "viewBox=\"0 0 1 1\" width=\"0\" height=\"0\" style=\"position:absolute\" aria-hidden=\"true\"><defs>\n" +
                              defs + "</defs></svg>");
  return linked;
}

std::string report_html(const Spec& spec, const CheckReport& report, const ReportMeta& meta, const std::vector<CaseEnvelopeRow>* cases) {
  return share_svg_glyphs(HtmlWriter(build_document(spec, report, meta, cases)).run());
}

}  // namespace swaybound
