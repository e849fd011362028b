// A report as a list of blocks (headings, paragraphs, lists, tables, charts),
// rendered twice from the same content: a self-contained HTML page (inline
// CSS and SVG; no scripts, fonts, images or links outside the file) and a
// vector PDF (cairo + pango), so that the two say exactly the same.
#pragma once

#include <functional>
#include <string>
#include <vector>

typedef struct _cairo cairo_t;

namespace cavitas::app::doc {

struct Field {
    std::string label, value;
};

struct Table {
    std::vector<std::string> header;
    std::vector<std::vector<std::string>> rows;
    std::vector<std::string> row_verdict;  ///< per row: marks the row with the verdict's colour ("" = none)
    std::vector<double> widths;            ///< relative column widths (empty = equal)
    std::vector<bool> numeric;             ///< right-aligned columns
};

struct Figure {
    std::string caption;
    double aspect = 0.55;  ///< height / width
    double width_pt = 500.0;  ///< the width the chart is drawn at (then scaled to its place): smaller for a pair
    std::function<void(cairo_t*, double width_pt, double height_pt)> draw;
};

enum class Kind { heading, paragraph, bullets, cautions, verdict, fields, table, figures, page_break };

struct Block {
    Kind kind = Kind::paragraph;
    std::string text;                 ///< heading, paragraph, verdict headline
    std::string detail;               ///< verdict: the sentence under the headline
    std::string verdict;              ///< verdict: normal, incipient, developed, indeterminate (colour)
    std::vector<std::string> items;   ///< bullets, cautions
    std::vector<Field> fields;
    Table table;
    std::vector<Figure> figures;      ///< one, or two side by side
};

/// A block of the given kind (with its text, for headings, paragraphs, verdicts).
inline Block make(Kind k, std::string text = {}) {
    Block b;
    b.kind = k;
    b.text = std::move(text);
    return b;
}
inline Block figures_block(std::vector<Figure> figures) {
    Block b = make(Kind::figures);
    b.figures = std::move(figures);
    return b;
}

struct Document {
    std::string title;
    std::vector<Field> header;  ///< work order, site, machine, point, date, analyst
    std::vector<Block> blocks;
    std::string footer;         ///< one line at the foot of each page / the end of the HTML

    void heading(const std::string& t) { blocks.push_back(make(Kind::heading, t)); }
    void paragraph(const std::string& t) { blocks.push_back(make(Kind::paragraph, t)); }
    void bullets(std::vector<std::string> items) {
        Block b = make(Kind::bullets);
        b.items = std::move(items);
        blocks.push_back(std::move(b));
    }
};

enum class Paper { a4, letter };

std::string to_html(const Document& d);
/// PDF bytes. pages (when given) receives the page count.
std::string to_pdf(const Document& d, Paper paper, int* pages = nullptr);

/// HTML-escaped text.
std::string escape(const std::string& s);

}  // namespace cavitas::app::doc
