#include "src/report/document.hpp"

#include <cairo-pdf.h>
#include <cairo.h>
#include <pango/pangocairo.h>

#include <algorithm>
#include <cmath>
#include <map>
#include <sstream>
#include <utility>
#include <vector>

#include "src/report/plot.hpp"

namespace cavitas::app::doc {

std::string escape(const std::string& s) {
    std::string o;
    o.reserve(s.size());
    for (char c : s) {
        switch (c) {
            case '&': o += "&amp;"; break;
            case '<': o += "&lt;"; break;
            case '>': o += "&gt;"; break;
            case '"': o += "&quot;"; break;
            default: o += c;
        }
    }
    return o;
}

namespace {

std::string css_colour(const plot::Rgb& c) {
    char b[16];
    std::snprintf(b, sizeof b, "#%02x%02x%02x", static_cast<int>(std::lround(c.r * 255)),
                  static_cast<int>(std::lround(c.g * 255)), static_cast<int>(std::lround(c.b * 255)));
    return b;
}

// A long path or identifier may wrap after its slashes, where a path is broken by convention.
constexpr std::size_t kLongToken = 30;

// One word: a browser may break after a hyphen ("OW-P101"), so a word with one is kept whole.
std::string whole_word(const std::string& w) {
    return w.find('-') == std::string::npos ? escape(w) : "<span class=\"nb\">" + escape(w) + "</span>";
}

// The pieces a word may wrap between: a long path after each of its slashes, any other word whole.
// The HTML (breakable) and the PDF (widest_words) wrap alike.
std::vector<std::string> wrap_pieces(const std::string& word) {
    if (word.size() <= kLongToken || word.find('/') == std::string::npos) return {word};
    std::vector<std::string> pieces;
    std::size_t from = 0;
    for (std::size_t at = word.find('/'); at != std::string::npos; at = word.find('/', from)) {
        pieces.push_back(word.substr(from, at + 1 - from));
        from = at + 1;
    }
    if (from < word.size()) pieces.push_back(word.substr(from));
    return pieces;
}

// Escaped text whose words never break inside; a long path wraps after its slashes only.
std::string breakable(const std::string& s) {
    std::string out, word;
    auto flush = [&] {
        const std::vector<std::string> pieces = wrap_pieces(word);
        for (std::size_t i = 0; i < pieces.size(); ++i) out += (i ? "<wbr>" : "") + whole_word(pieces[i]);
        word.clear();
    };
    for (const char c : s) {
        if (c == ' ' || c == '\n' || c == '\t') {
            flush();
            out += c;
        } else {
            word += c;
        }
    }
    flush();
    return out;
}

const char* kCss = R"css(
:root { --ink: #22262e; --muted: #5b616b; --rule: #d5d8dd; --soft: #f3f4f6; }
* { box-sizing: border-box; }
body { margin: 0; background: #fff; color: var(--ink);
       font: 10.5pt/1.45 "DejaVu Sans", "Segoe UI", Helvetica, Arial, sans-serif; }
main { margin: 0; padding: 8mm 4vw 14mm; }
p, ul { max-width: 120ch; }
h1 { font-size: 17pt; margin: 0 0 2mm; letter-spacing: .01em; }
h2 { font-size: 12.5pt; margin: 7mm 0 2mm; padding-bottom: 1mm; border-bottom: 1.5pt solid var(--ink); }
p { margin: 1.5mm 0; }
.fields { display: grid; grid-template-columns: max-content minmax(0, 1fr) max-content minmax(0, 1fr); gap: 1mm 4mm;
          padding: 2.5mm 3mm; background: var(--soft); border-left: 3pt solid var(--ink); margin: 2mm 0 4mm; }
.fields dt { color: var(--muted); font-size: 8.5pt; text-transform: uppercase; letter-spacing: .05em; align-self: center; }
.fields dd { margin: 0; font-weight: 600; min-width: 0; overflow-wrap: anywhere; }  /* hashes and paths */
@media (max-width: 700px) { .fields { grid-template-columns: max-content minmax(0, 1fr); } }
.verdict { color: #fff; padding: 3mm 4mm; margin: 3mm 0; border-radius: 1.5mm; }
.verdict .head { font-size: 15pt; font-weight: 700; letter-spacing: .02em; }
.verdict .detail { font-size: 10pt; margin-top: 1mm; }
ul { margin: 1mm 0; padding-left: 5mm; }
li { margin: .6mm 0; }
.cautions { border: 1pt solid #a3342a; border-left: 4pt solid #a3342a; padding: 2mm 3mm; margin: 3mm 0; background: #fbf3f1; }
.cautions strong { color: #a3342a; }
.table-box { overflow-x: auto; margin: 2mm 0 3mm; }
table { width: 100%; border-collapse: collapse; font-size: 8.8pt; table-layout: auto; }
th, td { overflow-wrap: normal; word-break: normal; hyphens: manual; }
td.num, .nb { white-space: nowrap; }
th { text-align: left; background: var(--soft); border-bottom: 1pt solid var(--ink); padding: 1mm 1.5mm; }
td { border-bottom: .5pt solid var(--rule); padding: .9mm 1.5mm; vertical-align: top; }
td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; }
td.mark { width: 2.2mm; padding: 0; }
figure { margin: 3mm 0; break-inside: avoid; page-break-inside: avoid; }
figure svg.chart { width: 100%; height: auto; display: block; border: .5pt solid var(--rule); }
figcaption { font-size: 8.5pt; color: var(--muted); margin-top: 1mm; }
.pair { display: grid; grid-template-columns: 1fr 1fr; gap: 3mm; }
footer { margin-top: 8mm; padding-top: 2mm; border-top: .5pt solid var(--rule); font-size: 8pt; color: var(--muted); }
.page-break { break-after: page; page-break-after: always; height: 0; }
@media print {
  @page { margin: 14mm; }
  main { padding: 0; }
  .table-box { overflow: visible; }
  td { overflow-wrap: anywhere; }  /* on paper a hash or a path may break; on screen its box scrolls */
  h2 { break-after: avoid; page-break-after: avoid; }
  tr { break-inside: avoid; page-break-inside: avoid; }
  .verdict, .cautions, .fields { -webkit-print-color-adjust: exact; print-color-adjust: exact; }
}
)css";

}  // namespace

std::string to_html(const Document& d) {
    std::string h = "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n<title>" + escape(d.title) +
                    "</title>\n<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n<style>" + kCss +
                    "</style>\n</head>\n<body>\n<main>\n<h1>" + escape(d.title) + "</h1>\n";
    if (!d.header.empty()) {
        h += "<dl class=\"fields\">";
        for (const auto& f : d.header) h += "<dt>" + escape(f.label) + "</dt><dd>" + breakable(f.value) + "</dd>";
        h += "</dl>\n";
    }
    int fig = 0;
    auto figure_html = [&fig](const Figure& f) {
        const double w = f.width_pt, hgt = f.width_pt * f.aspect;
        const std::string svg = plot::to_svg(w, hgt, [&](cairo_t* cr) { f.draw(cr, w, hgt); }, "f" + std::to_string(++fig) + "-");
        return "<figure>" + svg + "<figcaption>" + escape(f.caption) + "</figcaption></figure>";
    };
    for (const auto& b : d.blocks) {
        switch (b.kind) {
            case Kind::heading: h += "<h2>" + escape(b.text) + "</h2>\n"; break;
            case Kind::paragraph: h += "<p>" + breakable(b.text) + "</p>\n"; break;
            case Kind::bullets:
                h += "<ul>";
                for (const auto& i : b.items) h += "<li>" + breakable(i) + "</li>";
                h += "</ul>\n";
                break;
            case Kind::cautions:
                h += "<div class=\"cautions\"><strong>" + escape(b.text) + "</strong><ul>";
                for (const auto& i : b.items) h += "<li>" + breakable(i) + "</li>";
                h += "</ul></div>\n";
                break;
            case Kind::verdict:
                h += "<div class=\"verdict\" style=\"background:" + css_colour(plot::palette::verdict(b.verdict)) +
                     "\"><div class=\"head\">" + escape(b.text) + "</div><div class=\"detail\">" + breakable(b.detail) +
                     "</div></div>\n";
                break;
            case Kind::fields:
                h += "<dl class=\"fields\">";
                for (const auto& f : b.fields) h += "<dt>" + escape(f.label) + "</dt><dd>" + breakable(f.value) + "</dd>";
                h += "</dl>\n";
                break;
            case Kind::table: {
                const Table& t = b.table;
                const bool marks = !t.row_verdict.empty();
                // Columns take the width their words need (no word is ever broken on screen); a table
                // wider than the window scrolls inside its own box, never the page.
                h += "<div class=\"table-box\"><table>";
                h += "<thead><tr>";
                if (marks) h += "<th class=\"mark\"></th>";
                for (std::size_t c = 0; c < t.header.size(); ++c)
                    h += std::string("<th") + (c < t.numeric.size() && t.numeric[c] ? " class=\"num\"" : "") + ">" +
                         escape(t.header[c]) + "</th>";
                h += "</tr></thead><tbody>";
                for (std::size_t r = 0; r < t.rows.size(); ++r) {
                    h += "<tr>";
                    if (marks) {
                        const std::string v = r < t.row_verdict.size() ? t.row_verdict[r] : "";
                        h += "<td class=\"mark\"" +
                             (v.empty() ? std::string() : " style=\"background:" + css_colour(plot::palette::verdict(v)) + "\"") +
                             "></td>";
                    }
                    for (std::size_t c = 0; c < t.rows[r].size(); ++c)
                        h += std::string("<td") + (c < t.numeric.size() && t.numeric[c] ? " class=\"num\"" : "") + ">" +
                             breakable(t.rows[r][c]) + "</td>";
                    h += "</tr>";
                }
                h += "</tbody></table></div>\n";
                break;
            }
            case Kind::figures:
                if (b.figures.size() == 2) h += "<div class=\"pair\">" + figure_html(b.figures[0]) + figure_html(b.figures[1]) + "</div>\n";
                else
                    for (const auto& f : b.figures) h += figure_html(f) + "\n";
                break;
            case Kind::page_break: h += "<div class=\"page-break\"></div>\n"; break;
        }
    }
    h += "<footer>" + breakable(d.footer) + "</footer>\n</main>\n</body>\n</html>\n";
    return h;
}

namespace {

struct Pdf {
    cairo_t* cr;
    double page_w, page_h;
    double margin = 42.0;
    double y = 0.0;
    int page = 1;
    int total = 0;  // known in the second pass
    const Document* doc;

    double width() const { return page_w - 2 * margin; }
    double bottom() const { return page_h - margin - 16.0; }

    PangoLayout* layout(const std::string& text, double size, bool bold, double wrap_width, bool italic = false) {
        PangoLayout* l = pango_cairo_create_layout(cr);
        PangoFontDescription* fd = pango_font_description_new();
        pango_font_description_set_family(fd, "DejaVu Sans");
        pango_font_description_set_absolute_size(fd, size * PANGO_SCALE);
        pango_font_description_set_weight(fd, bold ? PANGO_WEIGHT_BOLD : PANGO_WEIGHT_NORMAL);
        if (italic) pango_font_description_set_style(fd, PANGO_STYLE_ITALIC);
        pango_layout_set_font_description(l, fd);
        pango_font_description_free(fd);
        pango_layout_set_width(l, static_cast<int>(wrap_width * PANGO_SCALE));
        pango_layout_set_wrap(l, PANGO_WRAP_WORD_CHAR);
        pango_layout_set_text(l, text.c_str(), -1);
        return l;
    }
    static double height(PangoLayout* l) {
        int w = 0, h = 0;
        pango_layout_get_size(l, &w, &h);
        return static_cast<double>(h) / PANGO_SCALE;
    }
    void show(PangoLayout* l, double x, double yy, const plot::Rgb& c = plot::palette::ink) {
        cairo_move_to(cr, x, yy);
        cairo_set_source_rgb(cr, c.r, c.g, c.b);
        pango_cairo_show_layout(cr, l);
    }
    double text_block(const std::string& t, double x, double yy, double w, double size, bool bold = false,
                      const plot::Rgb& c = plot::palette::ink, bool italic = false) {
        PangoLayout* l = layout(t, size, bold, w, italic);
        const double h = height(l);
        show(l, x, yy, c);
        g_object_unref(l);
        return h;
    }
    double measure(const std::string& t, double w, double size, bool bold = false) {
        PangoLayout* l = layout(t, size, bold, w);
        const double h = height(l);
        g_object_unref(l);
        return h;
    }

    void footer() {
        char b[64];
        std::snprintf(b, sizeof b, "page %d of %d", page, total > 0 ? total : page);
        cairo_set_source_rgb(cr, 0.84, 0.85, 0.87);
        cairo_set_line_width(cr, 0.5);
        cairo_move_to(cr, margin, page_h - margin + 2);
        cairo_line_to(cr, page_w - margin, page_h - margin + 2);
        cairo_stroke(cr);
        text_block(doc->footer, margin, page_h - margin + 5, width() - 70, 7.0, false, {0.36, 0.38, 0.42});
        PangoLayout* l = layout(b, 7.0, false, 70);
        pango_layout_set_alignment(l, PANGO_ALIGN_RIGHT);
        show(l, page_w - margin - 70, page_h - margin + 5, {0.36, 0.38, 0.42});
        g_object_unref(l);
    }
    void new_page() {
        footer();
        cairo_show_page(cr);
        ++page;
        y = margin;
    }
    void ensure(double h) {
        if (y + h > bottom() && y > margin + 1.0) new_page();
    }

    void fields(const std::vector<Field>& fs) {
        // Two columns when every value is short, else one, each row as tall as its value.
        bool short_values = true;
        for (const auto& f : fs) short_values = short_values && f.value.size() <= 38;
        const int cols = short_values ? 2 : 1;
        const double col = width() / cols, label_w = 78.0, value_w = col - label_w - 14.0;
        std::vector<double> row_h;
        for (std::size_t i = 0; i < fs.size(); i += static_cast<std::size_t>(cols)) {
            double h = 0.0;
            for (std::size_t k = i; k < std::min(fs.size(), i + static_cast<std::size_t>(cols)); ++k)
                h = std::max(h, measure(fs[k].value, value_w, 8.6, true));
            row_h.push_back(h + 3.0);
        }
        double block_h = 10.0;
        for (double h : row_h) block_h += h;
        ensure(block_h);
        cairo_set_source_rgb(cr, 0.953, 0.957, 0.965);
        cairo_rectangle(cr, margin, y, width(), block_h);
        cairo_fill(cr);
        cairo_set_source_rgb(cr, 0.13, 0.15, 0.18);
        cairo_rectangle(cr, margin, y, 2.5, block_h);
        cairo_fill(cr);
        double yy = y + 5.0;
        for (std::size_t r = 0; r < row_h.size(); ++r) {
            for (int c = 0; c < cols; ++c) {
                const std::size_t i = r * static_cast<std::size_t>(cols) + static_cast<std::size_t>(c);
                if (i >= fs.size()) break;
                const double x = margin + 10.0 + c * col;
                text_block(fs[i].label, x, yy + 1.0, label_w - 4, 6.8, false, {0.36, 0.38, 0.42});
                text_block(fs[i].value, x + label_w, yy, value_w, 8.6, true);
            }
            yy += row_h[r];
        }
        y += block_h + 8.0;
    }

    // The least height the block needs on a page (to keep a heading with it).
    double min_height(const Block& b) {
        switch (b.kind) {
            case Kind::figures: {
                double h = 0.0;
                const double n = static_cast<double>(std::max<std::size_t>(1, b.figures.size()));
                const double fw = (width() - 10.0 * (n - 1)) / n;
                for (const auto& f : b.figures) h = std::max(h, fw * f.aspect + 24.0);
                return h;
            }
            case Kind::table: return 40.0;
            case Kind::verdict: return 60.0;
            default: return 40.0;
        }
    }

    // The width of one unbroken line of text.
    double line_width(const std::string& text, double size, bool bold) {
        PangoLayout* l = layout(text, size, bold, 1.0);
        pango_layout_set_width(l, -1);
        int lw = 0, lh = 0;
        pango_layout_get_size(l, &lw, &lh);
        g_object_unref(l);
        return static_cast<double>(lw) / PANGO_SCALE;
    }
    // The widest word of each column (header in bold) plus padding: narrower, and a word would break inside.
    std::vector<double> widest_words(const Table& t, double size, double pad) {
        std::vector<double> m(t.header.size(), 0.0);
        std::map<std::pair<std::string, bool>, double> seen;
        auto take = [&](const std::vector<std::string>& cells, bool bold) {
            for (std::size_t c = 0; c < cells.size() && c < m.size(); ++c) {
                std::istringstream words(cells[c]);
                for (std::string word; words >> word;)
                    for (const std::string& piece : wrap_pieces(word)) {
                        auto [it, fresh] = seen.try_emplace({piece, bold}, 0.0);
                        if (fresh) it->second = line_width(piece, size, bold);
                        m[c] = std::max(m[c], it->second + 2 * pad + 0.5);
                    }
            }
        };
        take(t.header, true);
        for (const auto& r : t.rows) take(r, false);
        return m;
    }
    // The table's relative widths, widened where a column's widest word needs it and narrowed where
    // there is room to spare; only when the words alone do not fit are they scaled (and then break).
    std::vector<double> column_widths(const Table& t, double avail, double size, double pad) {
        std::vector<double> w(t.header.size(), 1.0);
        if (t.widths.size() == t.header.size()) w = t.widths;
        double sum = 0.0;
        for (double v : w) sum += v;
        for (double& v : w) v = v / sum * avail;
        const std::vector<double> least = widest_words(t, size, pad);
        double wanted = 0.0, least_total = 0.0;
        for (std::size_t c = 0; c < w.size(); ++c) {
            w[c] = std::max(w[c], least[c]);
            wanted += w[c];
            least_total += least[c];
        }
        if (wanted <= avail) return w;
        if (least_total >= avail) {
            for (std::size_t c = 0; c < w.size(); ++c) w[c] = least[c] * avail / least_total;
            return w;
        }
        const double cut = (wanted - avail) / (wanted - least_total);  // the share of each column's slack given up
        for (std::size_t c = 0; c < w.size(); ++c) w[c] -= (w[c] - least[c]) * cut;
        return w;
    }

    void table(const Table& t) {
        const bool marks = !t.row_verdict.empty();
        const double mark_w = marks ? 5.0 : 0.0;
        const double pad = 3.0, size = 7.6;
        const std::vector<double> w = column_widths(t, width() - mark_w, size, pad);
        auto row_height = [&](const std::vector<std::string>& cells, bool bold) {
            double h = 0.0;
            for (std::size_t c = 0; c < cells.size() && c < w.size(); ++c)
                h = std::max(h, measure(cells[c], w[c] - 2 * pad, size, bold));
            return h + 2 * pad;
        };
        auto draw_row = [&](const std::vector<std::string>& cells, bool bold, const std::string& verdict, double h) {
            if (bold) {
                cairo_set_source_rgb(cr, 0.953, 0.957, 0.965);
                cairo_rectangle(cr, margin, y, width(), h);
                cairo_fill(cr);
            }
            if (marks && !verdict.empty()) {
                const auto c = plot::palette::verdict(verdict);
                cairo_set_source_rgb(cr, c.r, c.g, c.b);
                cairo_rectangle(cr, margin, y + 1, mark_w - 1.5, h - 2);
                cairo_fill(cr);
            }
            double x = margin + mark_w;
            for (std::size_t c = 0; c < cells.size() && c < w.size(); ++c) {
                PangoLayout* l = layout(cells[c], size, bold, w[c] - 2 * pad);
                if (c < t.numeric.size() && t.numeric[c]) pango_layout_set_alignment(l, PANGO_ALIGN_RIGHT);
                show(l, x + pad, y + pad);
                g_object_unref(l);
                x += w[c];
            }
            cairo_set_source_rgb(cr, bold ? 0.13 : 0.84, bold ? 0.15 : 0.85, bold ? 0.18 : 0.87);
            cairo_set_line_width(cr, bold ? 0.9 : 0.4);
            cairo_move_to(cr, margin, y + h);
            cairo_line_to(cr, margin + width(), y + h);
            cairo_stroke(cr);
            y += h;
        };
        const double hh = row_height(t.header, true);
        ensure(hh + (t.rows.empty() ? 0.0 : row_height(t.rows.front(), false)));
        draw_row(t.header, true, "", hh);
        for (std::size_t r = 0; r < t.rows.size(); ++r) {
            const double h = row_height(t.rows[r], false);
            if (y + h > bottom()) {
                new_page();
                draw_row(t.header, true, "", hh);
            }
            draw_row(t.rows[r], false, r < t.row_verdict.size() ? t.row_verdict[r] : "", h);
        }
        y += 8.0;
    }

    void figures(const std::vector<Figure>& figs) {
        const double gap = 10.0;
        const double n = static_cast<double>(figs.size());
        const double fw = (width() - gap * (n - 1)) / n;
        double tallest = 0.0;
        for (const auto& f : figs)
            tallest = std::max(tallest, fw * f.aspect + 4 + measure(f.caption, fw, 7.2));
        ensure(tallest);
        double x = margin;
        for (const auto& f : figs) {
            // Drawn at the HTML width and scaled, so that the two renderers lay the chart out alike.
            const double scale = fw / f.width_pt;
            cairo_save(cr);
            cairo_translate(cr, x, y);
            cairo_scale(cr, scale, scale);
            f.draw(cr, f.width_pt, f.width_pt * f.aspect);
            cairo_restore(cr);
            cairo_set_source_rgb(cr, 0.84, 0.85, 0.87);
            cairo_set_line_width(cr, 0.4);
            cairo_rectangle(cr, x, y, fw, fw * f.aspect);
            cairo_stroke(cr);
            text_block(f.caption, x, y + fw * f.aspect + 3, fw, 7.2, false, {0.36, 0.38, 0.42}, true);
            x += fw + gap;
        }
        y += tallest + 8.0;
    }

    void render() {
        y = margin;
        y += text_block(doc->title, margin, y, width(), 16.0, true) + 6.0;
        if (!doc->header.empty()) fields(doc->header);
        for (std::size_t bi = 0; bi < doc->blocks.size(); ++bi) {
            const Block& b = doc->blocks[bi];
            switch (b.kind) {
                case Kind::heading: {
                    const double h = measure(b.text, width(), 11.5, true);
                    // Keep a heading with what follows it.
                    const double next = bi + 1 < doc->blocks.size() ? min_height(doc->blocks[bi + 1]) : 0.0;
                    ensure(h + 13.0 + next);
                    y += 6.0;
                    text_block(b.text, margin, y, width(), 11.5, true);
                    y += h + 2.0;
                    cairo_set_source_rgb(cr, 0.13, 0.15, 0.18);
                    cairo_set_line_width(cr, 1.2);
                    cairo_move_to(cr, margin, y);
                    cairo_line_to(cr, margin + width(), y);
                    cairo_stroke(cr);
                    y += 5.0;
                    break;
                }
                case Kind::paragraph: {
                    const double h = measure(b.text, width(), 8.8);
                    ensure(h);
                    text_block(b.text, margin, y, width(), 8.8);
                    y += h + 4.0;
                    break;
                }
                case Kind::bullets:
                case Kind::cautions: {
                    const bool caution = b.kind == Kind::cautions;
                    const double indent = 12.0, inner = caution ? 10.0 : 0.0;
                    double total_h = caution ? measure(b.text, width() - 2 * inner, 9.0, true) + 6.0 : 0.0;
                    for (const auto& i : b.items) total_h += measure(i, width() - indent - 2 * inner, 8.6) + 2.5;
                    if (caution) {
                        ensure(total_h + 2 * inner);
                        cairo_set_source_rgb(cr, 0.984, 0.953, 0.945);
                        cairo_rectangle(cr, margin, y, width(), total_h + inner);
                        cairo_fill(cr);
                        cairo_set_source_rgb(cr, 0.64, 0.20, 0.16);
                        cairo_rectangle(cr, margin, y, 3.5, total_h + inner);
                        cairo_fill(cr);
                        y += inner / 2;
                        y += text_block(b.text, margin + inner, y, width() - 2 * inner, 9.0, true, {0.64, 0.20, 0.16}) + 6.0;
                    }
                    for (const auto& i : b.items) {
                        const double h = measure(i, width() - indent - 2 * inner, 8.6);
                        if (!caution) ensure(h);
                        text_block("\u2022", margin + inner + 2, y, 10, 8.6);
                        text_block(i, margin + inner + indent, y, width() - indent - 2 * inner, 8.6);
                        y += h + 2.5;
                    }
                    y += caution ? inner : 4.0;
                    break;
                }
                case Kind::verdict: {
                    const double h1 = measure(b.text, width() - 24, 15.0, true), h2 = measure(b.detail, width() - 24, 9.2);
                    const double h = h1 + h2 + 20.0;
                    ensure(h);
                    const auto c = plot::palette::verdict(b.verdict);
                    cairo_set_source_rgb(cr, c.r, c.g, c.b);
                    cairo_rectangle(cr, margin, y, width(), h);
                    cairo_fill(cr);
                    text_block(b.text, margin + 12, y + 8, width() - 24, 15.0, true, {1, 1, 1});
                    text_block(b.detail, margin + 12, y + 10 + h1, width() - 24, 9.2, false, {1, 1, 1});
                    y += h + 8.0;
                    break;
                }
                case Kind::fields: fields(b.fields); break;
                case Kind::table: table(b.table); break;
                case Kind::figures: figures(b.figures); break;
                case Kind::page_break: new_page(); break;
            }
        }
        footer();
        cairo_show_page(cr);
    }
};

int render_pdf(const Document& d, Paper paper, int total, std::string* out) {
    const double w = paper == Paper::a4 ? 595.276 : 612.0, h = paper == Paper::a4 ? 841.89 : 792.0;
    std::string sink;
    std::string* target = out ? out : &sink;
    cairo_surface_t* s = cairo_pdf_surface_create_for_stream(
        [](void* closure, const unsigned char* data, unsigned int length) -> cairo_status_t {
            static_cast<std::string*>(closure)->append(reinterpret_cast<const char*>(data), length);
            return CAIRO_STATUS_SUCCESS;
        },
        target, w, h);
    cairo_pdf_surface_set_metadata(s, CAIRO_PDF_METADATA_TITLE, d.title.c_str());
    cairo_pdf_surface_set_metadata(s, CAIRO_PDF_METADATA_CREATOR, "cavitas");
    cairo_t* cr = cairo_create(s);
    Pdf pdf{cr, w, h, 42.0, 0.0, 1, 0, &d};
    pdf.total = total;
    pdf.render();
    const int pages = pdf.page;
    cairo_destroy(cr);
    cairo_surface_finish(s);
    cairo_surface_destroy(s);
    return pages;
}

}  // namespace

std::string to_pdf(const Document& d, Paper paper, int* pages) {
    // Twice: the first pass counts the pages for "page N of M".
    const int total = render_pdf(d, paper, 0, nullptr);
    std::string out;
    render_pdf(d, paper, total, &out);
    if (pages) *pages = total;
    return out;
}

}  // namespace cavitas::app::doc
