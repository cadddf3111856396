// Long for a reason: page composition, pagination and every block kind of the document model.
// report.pdf: the packet's document (report_model.hpp) set on pages with cairo and Pango.
//
// Pages are composed twice with the same code: the first pass only counts the pages (its output
// is discarded), so the second can print "page X of Y" in every footer.
#include <cairo-pdf.h>
#include <cairo.h>

#include <cmath>
#include <map>
#include <regex>

#include <fmt/format.h>

#include "report_model.hpp"
#include "swaybound/core/cancel.hpp"
#include "swaybound/core/error.hpp"
#include "swaybound/report/document.hpp"
#include "text.hpp"

namespace swaybound {

namespace {

using namespace report_doc;
using report_text::Font;
using report_text::LayoutPtr;

struct Colour {
  double r, g, b;
};
constexpr Colour kInk{0.12, 0.12, 0.14};
constexpr Colour kSoft{0.38, 0.39, 0.42};
constexpr Colour kAccent{0.11, 0.31, 0.43};
constexpr Colour kRule{0.72, 0.75, 0.78};
constexpr Colour kHeadFill{0.91, 0.93, 0.95};
constexpr Colour kZebra{0.965, 0.972, 0.98};
constexpr Colour kPassText{0.0, 0.42, 0.29}, kPassFill{0.89, 0.95, 0.92};
constexpr Colour kFailText{0.66, 0.25, 0.0}, kFailFill{0.99, 0.90, 0.85};
constexpr Colour kWarnText{0.50, 0.33, 0.0}, kWarnFill{1.0, 0.95, 0.84};

void set(cairo_t* cr, const Colour& c) { cairo_set_source_rgb(cr, c.r, c.g, c.b); }

std::string markup(const Rich& rich) {
  std::string out;
  for (const auto& s : rich) {
    std::string t = report_text::escape(s.text);
    if (s.mono) t = "<tt>" + t + "</tt>";
    if (s.italic) t = "<i>" + t + "</i>";
    if (s.bold) t = "<b>" + t + "</b>";
    out += t;
  }
  return out;
}

std::string esc(const std::string& s) { return report_text::escape(s); }

const Colour& tone_text(Tone t) {
  switch (t) {
    case Tone::pass: return kPassText;
    case Tone::fail: return kFailText;
    case Tone::warn: return kWarnText;
    case Tone::muted: return kSoft;
    default: return kInk;
  }
}

const Colour& tone_fill(Tone t) {
  switch (t) {
    case Tone::pass: return kPassFill;
    case Tone::fail: return kFailFill;
    case Tone::warn: return kWarnFill;
    default: return kZebra;
  }
}

struct PageSize {
  double w, h;
};

class Composer {
 public:
  /// `total_pages` and `section_pages` come from a first pass (0 and empty in the first pass).
  Composer(cairo_surface_t* surface, cairo_t* cr, const Document& d, PageSize size, int total_pages,
           std::map<std::string, std::pair<int, double>> section_pages)
      : surface_(surface), cr_(cr), d_(d), size_(size), total_(total_pages), known_(std::move(section_pages)) {
    left_ = 54;
    right_ = size.w - 54;
    top_ = 66;
    bottom_ = size.h - 58;
  }

  int run() {
    begin_page();
    title();
    for (const auto& s : d_.sections) {
      section(s);
      if (s.id == "title") contents();
    }
    end_page();
    return page_;
  }

  /// Page and position of every section's heading.
  const std::map<std::string, std::pair<int, double>>& section_pages() const { return found_; }

 private:
  double width() const { return right_ - left_; }

  LayoutPtr text(const std::string& m, const Font& f, double w = -1) { return report_text::layout(cr_, m, f, w); }

  void show(PangoLayout* l, double x, double y, const Colour& c = kInk) {
    set(cr_, c);
    report_text::show(cr_, l, x, y);
  }

  void rule(double x0, double x1, double y, const Colour& c = kRule, double w = 0.6) {
    cairo_save(cr_);
    set(cr_, c);
    cairo_set_line_width(cr_, w);
    cairo_move_to(cr_, x0, y);
    cairo_line_to(cr_, x1, y);
    cairo_stroke(cr_);
    cairo_restore(cr_);
  }

  void fill_rect(double x, double y, double w, double h, const Colour& c) {
    cairo_rectangle(cr_, x, y, w, h);
    set(cr_, c);
    cairo_fill(cr_);
  }

  void begin_page() {
    ++page_;
    y_ = top_;
    // Header: mechanism on the left, revision and spec hash on the right.
    const Font hf{7.2};
    auto l = text("<b>" + esc(d_.mechanism) + "</b>", hf, width() * 0.6);
    pango_layout_set_ellipsize(l.get(), PANGO_ELLIPSIZE_END);
    show(l.get(), left_, 36, kSoft);
    auto r = text(esc(fmt::format("rev {}  ·  spec SHA-256 {}", d_.revision.empty() ? "-" : d_.revision,
                                  d_.sha_prefix.empty() ? "-" : d_.sha_prefix)),
                  hf);
    show(r.get(), right_ - report_text::width_of(r.get()), 36, kSoft);
    rule(left_, right_, 48);
  }

  void end_page() {
    const Font ff{7.2};
    rule(left_, right_, size_.h - 44);
    auto l = text(esc(fmt::format("swaybound {} ({})  ·  {}  ·  screening aid, not a certification", d_.tool_version,
                                  d_.commit, d_.date.empty() ? "undated" : d_.date)),
                  ff);
    show(l.get(), left_, size_.h - 40, kSoft);
    auto r = text(esc(total_ > 0 ? fmt::format("page {} of {}", page_, total_) : fmt::format("page {} of ?", page_)), ff);
    show(r.get(), right_ - report_text::width_of(r.get()), size_.h - 40, kSoft);
    cairo_show_page(cr_);
  }

  void new_page() {
    end_page();
    begin_page();
  }

  /// Makes room for `h` points, starting a new page if needed (never for an empty page).
  void need(double h) {
    if (y_ + h > bottom_ && y_ > top_ + 1) new_page();
  }

  // ---- title

  void title() {
    auto kicker = text(esc("DESIGN CHECK OF A PENDULUM CHAIN  ·  REVIEW PACKET"), Font{7.8, true});
    show(kicker.get(), left_, y_, kAccent);
    y_ += report_text::height_of(kicker.get()) + 6;
    auto t = text(esc(d_.title), Font{20, true}, width());
    show(t.get(), left_, y_);
    y_ += report_text::height_of(t.get()) + 4;
    if (d_.title != d_.mechanism) {
      auto m = text(esc(d_.mechanism), Font{11}, width());
      show(m.get(), left_, y_, kSoft);
      y_ += report_text::height_of(m.get()) + 4;
    }
    y_ += 4;
    cairo_save(cr_);
    set(cr_, kAccent);
    cairo_rectangle(cr_, left_, y_, 56, 2.5);
    cairo_fill(cr_);
    cairo_restore(cr_);
    y_ += 14;
  }

  // ---- contents (on the title page; page numbers from the first pass)

  void contents() {
    constexpr double row = 13.5;
    std::size_t rows = 0;
    for (const auto& s : d_.sections) rows += s.id != "title";
    need(30 + row * static_cast<double>(rows));
    auto caption = text(esc("Contents"), Font{9.8, true});
    show(caption.get(), left_, y_, kAccent);
    y_ += report_text::height_of(caption.get()) + 5;
    const double number_x = left_, title_x = left_ + 22, page_x = left_ + width() * 0.62;
    for (const auto& s : d_.sections) {
      if (s.id == "title") continue;
      const auto at = known_.find(s.id);
      const std::string page = at == known_.end() ? "?" : std::to_string(at->second.first);
      auto n = text(esc(s.number), Font{8.8, true});
      auto t = text(esc(s.title), Font{8.8});
      auto p = text(esc(page), Font{8.8});
      const double tw = report_text::width_of(t.get()), pw = report_text::width_of(p.get());
      if (at != known_.end())
        cairo_tag_begin(cr_, CAIRO_TAG_LINK,
                        fmt::format("page={} pos=[{:.1f} {:.1f}]", at->second.first, left_, at->second.second).c_str());
      show(n.get(), number_x, y_, kAccent);
      show(t.get(), title_x, y_);
      // Dot leader.
      cairo_save(cr_);
      set(cr_, kRule);
      cairo_set_line_width(cr_, 0.8);
      const double dots[] = {0.8, 3};
      cairo_set_dash(cr_, dots, 2, 0);
      cairo_move_to(cr_, title_x + tw + 6, y_ + 9);
      cairo_line_to(cr_, page_x - pw - 6, y_ + 9);
      cairo_stroke(cr_);
      cairo_restore(cr_);
      show(p.get(), page_x - pw, y_);
      if (at != known_.end()) cairo_tag_end(cr_, CAIRO_TAG_LINK);
      y_ += row;
    }
    y_ += 10;
  }

  // ---- sections

  void section(const Section& s) {
    if (s.new_page && y_ > top_ + 1) new_page();
    heading(s);
    for (std::size_t i = 0; i < s.blocks.size(); ++i) {
      throw_if_cancelled();  // a long report stops promptly on SIGINT/SIGTERM
      const Block& b = s.blocks[i];
      // A subheading stays with what follows it.
      if (b.kind == Block::Kind::subheading && i + 1 < s.blocks.size()) need(22 + first_height(s.blocks[i + 1]));
      block(b);
    }
    y_ += 6;
  }

  void heading(const Section& s) {
    auto number = text(esc(s.number), Font{13, true});
    auto title = text(esc(s.title), Font{13, true}, width() - 30);
    const double h = report_text::height_of(title.get());
    need(h + 60);
    const auto outline_title = s.number + "  " + s.title;
    if (total_ > 0)
      cairo_pdf_surface_add_outline(surface_, CAIRO_PDF_OUTLINE_ROOT, outline_title.c_str(),
                                    fmt::format("page={} pos=[{} {}]", page_, left_, y_).c_str(), CAIRO_PDF_OUTLINE_FLAG_OPEN);
    found_[s.id] = {page_, y_};
    show(number.get(), left_, y_, kAccent);
    show(title.get(), left_ + 28, y_);
    y_ += h + 3;
    rule(left_, right_, y_, kAccent, 0.9);
    y_ += 9;
  }

  /// Height of the first unit of a block (for keep-with-next).
  double first_height(const Block& b) {
    switch (b.kind) {
      case Block::Kind::figures: {
        double h = 0;
        for (const auto& f : b.figures) h = std::max(h, f.height);
        return h + 34;
      }
      case Block::Kind::table: return 40;
      default: return 30;
    }
  }

  void block(const Block& b) {
    switch (b.kind) {
      case Block::Kind::paragraph: paragraph(b.text); break;
      case Block::Kind::subheading: subheading(b.text); break;
      case Block::Kind::bullets: bullet_list(b.items); break;
      case Block::Kind::table: table(b.table); break;
      case Block::Kind::figures: figure_row(b.figures); break;
      case Block::Kind::fields: fields(b.field_list); break;
      case Block::Kind::signatures: signatures(b); break;
      case Block::Kind::callout: callout(b.text, b.tone); break;
    }
  }

  void paragraph(const Rich& r) {
    auto l = text(markup(r), Font{8.8}, width());
    pango_layout_set_spacing(l.get(), static_cast<int>(1.4 * PANGO_SCALE));
    const double h = report_text::height_of(l.get());
    need(h);
    show(l.get(), left_, y_);
    y_ += h + 7;
  }

  void subheading(const Rich& r) {
    auto l = text(markup(r), Font{9.8, true}, width());
    const double h = report_text::height_of(l.get());
    need(h + 30);
    y_ += 3;
    show(l.get(), left_, y_, kAccent);
    y_ += h + 4;
  }

  void bullet_list(const std::vector<Rich>& items) {
    for (const auto& item : items) {
      auto l = text(markup(item), Font{8.8}, width() - 14);
      pango_layout_set_spacing(l.get(), static_cast<int>(1.2 * PANGO_SCALE));
      const double h = report_text::height_of(l.get());
      need(h);
      cairo_save(cr_);
      set(cr_, kAccent);
      cairo_rectangle(cr_, left_ + 3, y_ + 4.2, 3.2, 3.2);
      cairo_fill(cr_);
      cairo_restore(cr_);
      show(l.get(), left_ + 14, y_);
      y_ += h + 3.5;
    }
    y_ += 4;
  }

  void callout(const Rich& r, Tone tone) {
    auto l = text(markup(r), Font{9.2}, width() - 26);
    const double h = report_text::height_of(l.get()) + 14;
    need(h);
    fill_rect(left_, y_, width(), h, tone == Tone::normal ? kHeadFill : tone_fill(tone));
    fill_rect(left_, y_, 4, h, tone == Tone::normal ? kAccent : tone_text(tone));
    show(l.get(), left_ + 16, y_ + 7, tone == Tone::normal ? kInk : tone_text(tone));
    y_ += h + 9;
  }

  void fields(const std::vector<Field>& list) {
    const double label_w = 92;
    for (const auto& f : list) {
      auto label = text(esc(f.label), Font{8.4, true}, label_w - 6);
      auto value = text(esc(f.value), Font{8.6}, width() - label_w);
      const double h = std::max(report_text::height_of(label.get()), report_text::height_of(value.get())) + 5;
      need(h);
      show(label.get(), left_, y_ + 2.5, kSoft);
      show(value.get(), left_ + label_w, y_ + 2.5);
      rule(left_, right_, y_ + h, Colour{0.86, 0.88, 0.9}, 0.5);
      y_ += h;
    }
    y_ += 10;
  }

  void signatures(const Block& b) {
    const double row_h = 34, head_h = 16;
    const double w_role = 92, w_name = 150, w_date = 92;
    const double w_sign = width() - w_role - w_name - w_date;
    need(head_h + row_h * static_cast<double>(b.roles.size()) + 10);
    auto caption = text(esc("Sign-off"), Font{9.8, true});
    show(caption.get(), left_, y_, kAccent);
    y_ += report_text::height_of(caption.get()) + 5;
    const double xs[] = {left_, left_ + w_role, left_ + w_role + w_name, left_ + w_role + w_name + w_sign, right_};
    const char* heads[] = {"role", "name", "signature", "date"};
    fill_rect(left_, y_, width(), head_h, kHeadFill);
    for (int k = 0; k < 4; ++k) {
      auto h = text(esc(heads[k]), Font{7.6, true});
      show(h.get(), xs[k] + 5, y_ + 3.5, kSoft);
    }
    y_ += head_h;
    for (std::size_t i = 0; i < b.roles.size(); ++i) {
      auto role = text(esc(b.roles[i]), Font{8.6, true});
      show(role.get(), xs[0] + 5, y_ + 6);
      const std::string name = i < b.names.size() ? b.names[i] : "";
      if (!name.empty()) {
        auto n = text(esc(name), Font{8.6}, w_name - 10);
        show(n.get(), xs[1] + 5, y_ + 6);
      }
      // Lines to write on.
      for (int k = 1; k <= 3; ++k)
        if (k != 1 || name.empty()) rule(xs[k] + 6, xs[k + 1] - 8, y_ + row_h - 7, kSoft, 0.6);
      rule(left_, right_, y_ + row_h, kRule, 0.5);
      y_ += row_h;
    }
    cairo_save(cr_);
    set(cr_, kRule);
    cairo_set_line_width(cr_, 0.6);
    cairo_rectangle(cr_, left_, y_ - row_h * static_cast<double>(b.roles.size()) - head_h, width(),
                    row_h * static_cast<double>(b.roles.size()) + head_h);
    cairo_stroke(cr_);
    cairo_restore(cr_);
    y_ += 12;
  }

  // ---- tables

  struct RowLayout {
    std::vector<LayoutPtr> cells;
    LayoutPtr note;
    double height = 0;
  };

  void table(const Table& t) {
    constexpr double pad_x = 3.5, pad_y = 2.6;
    std::vector<std::size_t> main;
    for (std::size_t c = 0; c < t.columns.size(); ++c)
      if (!t.columns[c].pdf_note) main.push_back(c);
    double total = 0;
    for (std::size_t c : main) total += t.columns[c].weight;
    std::vector<double> x{left_};
    for (std::size_t c : main) x.push_back(x.back() + width() * t.columns[c].weight / total);
    const Font cell_font{t.font_size}, head_font{t.font_size, true};
    const Font note_font{t.font_size - 0.6, false, true};

    const auto align = [](PangoLayout* l, Align a) {
      pango_layout_set_alignment(l, a == Align::right ? PANGO_ALIGN_RIGHT : a == Align::center ? PANGO_ALIGN_CENTER : PANGO_ALIGN_LEFT);
    };
    // Header.
    std::vector<LayoutPtr> head;
    double head_h = 0;
    for (std::size_t k = 0; k < main.size(); ++k) {
      head.push_back(text(esc(t.columns[main[k]].title), head_font, x[k + 1] - x[k] - 2 * pad_x));
      align(head.back().get(), t.columns[main[k]].align);
      head_h = std::max(head_h, report_text::height_of(head.back().get()));
    }
    head_h += 2 * pad_y;
    const auto draw_head = [&]() {
      fill_rect(left_, y_, width(), head_h, kHeadFill);
      for (std::size_t k = 0; k < main.size(); ++k) show(head[k].get(), x[k] + pad_x, y_ + pad_y, kInk);
      rule(left_, right_, y_ + head_h, kSoft, 0.7);
      y_ += head_h;
    };
    // Rows.
    std::vector<RowLayout> rows;
    const double note_x = main.size() > 1 ? x[1] : x[0];
    for (const auto& row : t.rows) {
      throw_if_cancelled();
      RowLayout rl;
      double h = 0;
      for (std::size_t k = 0; k < main.size(); ++k) {
        const std::size_t c = main[k];
        const std::string cell = c < row.cells.size() ? row.cells[c] : "";
        const Tone tone = c < row.cell_tone.size() ? row.cell_tone[c] : Tone::normal;
        const std::string m = tone == Tone::fail || tone == Tone::warn ? "<b>" + esc(cell) + "</b>" : esc(cell);
        rl.cells.push_back(text(m, cell_font, x[k + 1] - x[k] - 2 * pad_x));
        align(rl.cells.back().get(), t.columns[c].align);
        h = std::max(h, report_text::height_of(rl.cells.back().get()));
      }
      std::vector<std::string> notes;
      for (std::size_t c = 0; c < t.columns.size(); ++c)
        if (t.columns[c].pdf_note && c < row.cells.size() && !row.cells[c].empty() && row.cells[c] != "-")
          notes.push_back(esc(t.columns[c].title) + ": " + esc(row.cells[c]));
      if (!notes.empty()) {
        rl.note = text(fmt::format("{}", fmt::join(notes, "   ·   ")), note_font, right_ - note_x - 2 * pad_x);
        h += report_text::height_of(rl.note.get()) + 1;
      }
      rl.height = h + 2 * pad_y;
      rows.push_back(std::move(rl));
    }
    need(head_h + (rows.empty() ? 0 : rows.front().height));
    draw_head();
    for (std::size_t i = 0; i < rows.size(); ++i) {
      const RowLayout& rl = rows[i];
      if (y_ + rl.height > bottom_) {
        new_page();
        draw_head();
      }
      const Tone tone = t.rows[i].tone;
      if (tone != Tone::normal)
        fill_rect(left_, y_, width(), rl.height, tone_fill(tone));
      else if (i % 2 == 1)
        fill_rect(left_, y_, width(), rl.height, kZebra);
      double cell_h = 0;
      for (std::size_t k = 0; k < main.size(); ++k) {
        const std::size_t c = main[k];
        const Tone ct = c < t.rows[i].cell_tone.size() ? t.rows[i].cell_tone[c] : Tone::normal;
        show(rl.cells[k].get(), x[k] + pad_x, y_ + pad_y, ct == Tone::normal ? kInk : tone_text(ct));
        cell_h = std::max(cell_h, report_text::height_of(rl.cells[k].get()));
      }
      if (rl.note) show(rl.note.get(), note_x + pad_x, y_ + pad_y + cell_h + 1, kSoft);
      y_ += rl.height;
      rule(left_, right_, y_, Colour{0.85, 0.87, 0.89}, 0.4);
    }
    rule(left_, right_, y_, kSoft, 0.7);
    y_ += 4;
    if (!t.caption.empty()) {
      auto c = text(esc(t.caption), Font{7.2, false, true}, width());
      const double h = report_text::height_of(c.get());
      need(h);
      show(c.get(), left_, y_, kSoft);
      y_ += h;
    }
    y_ += 9;
  }

  // ---- figures

  void figure_row(const std::vector<Figure>& figs) {
    constexpr double gap = 12;
    double share = 0;
    for (const auto& f : figs) share += f.width_share;
    std::vector<LayoutPtr> captions;
    std::vector<double> widths;
    double plot_h = 0, cap_h = 0;
    for (const auto& f : figs) {
      const double w = width() * f.width_share - (figs.size() > 1 ? gap / 2 : 0);
      widths.push_back(w);
      ++figure_;
      captions.push_back(text("<b>" + esc(fmt::format("Figure {}.", figure_)) + "</b> " + esc(f.caption), Font{7.4, false, false}, w));
      plot_h = std::max(plot_h, f.height);
      cap_h = std::max(cap_h, report_text::height_of(captions.back().get()));
    }
    need(plot_h + cap_h + 8);
    double x = left_ + (share < 1 ? width() * (1 - share) / 2 : 0);
    for (std::size_t k = 0; k < figs.size(); ++k) {
      plot::draw(figs[k].plot, cr_, x, y_, widths[k], figs[k].height);
      cairo_save(cr_);
      set(cr_, Colour{0.85, 0.87, 0.89});
      cairo_set_line_width(cr_, 0.5);
      cairo_rectangle(cr_, x, y_, widths[k], figs[k].height);
      cairo_stroke(cr_);
      cairo_restore(cr_);
      show(captions[k].get(), x, y_ + figs[k].height + 4, kSoft);
      x += widths[k] + gap;
    }
    y_ += plot_h + cap_h + 14;
  }

  cairo_surface_t* surface_;
  cairo_t* cr_;
  const Document& d_;
  PageSize size_;
  int total_;
  std::map<std::string, std::pair<int, double>> known_, found_;
  int page_ = 0;
  int figure_ = 0;
  double left_, right_, top_, bottom_, y_ = 0;
};

cairo_status_t discard(void*, const unsigned char*, unsigned int) { return CAIRO_STATUS_SUCCESS; }

PageSize page_size(Paper p) { return p == Paper::letter ? PageSize{612, 792} : PageSize{595.2756, 841.8898}; }

using SectionPages = std::map<std::string, std::pair<int, double>>;

int compose(cairo_surface_t* surface, const Document& d, int total, SectionPages& sections) {
  cairo_t* cr = cairo_create(surface);
  Composer c(surface, cr, d, page_size(d.paper), total, sections);
  const int pages = c.run();
  sections = c.section_pages();
  cairo_destroy(cr);
  return pages;
}

}  // namespace

void write_report_pdf(const Spec& spec, const CheckReport& report, const std::string& path, const ReportMeta& meta,
                      const std::vector<CaseEnvelopeRow>* cases) {
  const Document d = build_document(spec, report, meta, cases);
  const PageSize size = page_size(d.paper);

  cairo_surface_t* counting = cairo_pdf_surface_create_for_stream(discard, nullptr, size.w, size.h);
  SectionPages sections;
  const int pages = compose(counting, d, 0, sections);
  cairo_surface_destroy(counting);

  cairo_surface_t* surface = cairo_pdf_surface_create(path.c_str(), size.w, size.h);
  if (cairo_surface_status(surface) != CAIRO_STATUS_SUCCESS) {
    const std::string why = cairo_status_to_string(cairo_surface_status(surface));
    cairo_surface_destroy(surface);
    throw RunError(fmt::format("cannot write {}: {}", path, why));
  }
  cairo_pdf_surface_set_metadata(surface, CAIRO_PDF_METADATA_TITLE, d.title.c_str());
  cairo_pdf_surface_set_metadata(surface, CAIRO_PDF_METADATA_SUBJECT,
                                 (fmt::format("Design check of {}", d.mechanism) + (d.revision.empty() ? "" : ", revision " + d.revision)).c_str());
  if (!d.prepared_by.empty()) cairo_pdf_surface_set_metadata(surface, CAIRO_PDF_METADATA_AUTHOR, d.prepared_by.c_str());
  cairo_pdf_surface_set_metadata(surface, CAIRO_PDF_METADATA_CREATOR, fmt::format("swaybound {}", d.tool_version).c_str());
  // The date comes from the caller; an ISO date also becomes the document's creation date.
  if (std::regex_match(d.date, std::regex(R"(\d{4}-\d{2}-\d{2})")))
    cairo_pdf_surface_set_metadata(surface, CAIRO_PDF_METADATA_CREATE_DATE, (d.date + "T00:00:00Z").c_str());
  else if (std::regex_match(d.date, std::regex(R"(\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}Z)")))
    cairo_pdf_surface_set_metadata(surface, CAIRO_PDF_METADATA_CREATE_DATE, d.date.c_str());
  compose(surface, d, pages, sections);
  cairo_surface_finish(surface);
  const cairo_status_t status = cairo_surface_status(surface);
  cairo_surface_destroy(surface);
  if (status != CAIRO_STATUS_SUCCESS)
    throw RunError(fmt::format("writing {} failed: {}", path, cairo_status_to_string(status)));
}

}  // namespace swaybound
