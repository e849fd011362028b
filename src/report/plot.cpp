#include "src/report/plot.hpp"

#include <cairo-svg.h>
#include <cairo.h>
#include <pango/pangocairo.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <ctime>
#include <regex>

namespace cavitas::app::plot {

Rgb palette::verdict(const std::string& v) {
    if (v == "normal") return {0.17, 0.48, 0.47};        // sea green
    if (v == "incipient") return {0.80, 0.53, 0.13};     // ochre
    if (v == "developed") return {0.64, 0.20, 0.16};     // brick
    if (v == "indeterminate") return {0.42, 0.44, 0.50};  // slate
    if (v == "action") return {0.22, 0.36, 0.62};        // steel blue: normal, but another finding needs action
    return {0.35, 0.10, 0.35};                           // error: aubergine
}

namespace {

constexpr const char* kFont = "DejaVu Sans";

void set(cairo_t* cr, const Rgb& c, double alpha = 1.0) { cairo_set_source_rgba(cr, c.r, c.g, c.b, alpha); }

enum class Align { left, center, right };

// Text at (x, y); valign 0 = top, 0.5 = middle, 1 = bottom. Returns its width.
double text(cairo_t* cr, double x, double y, const std::string& s, double size, Align align = Align::left,
            double valign = 0.0, bool bold = false, const Rgb& colour = palette::ink, double angle = 0.0) {
    PangoLayout* layout = pango_cairo_create_layout(cr);
    PangoFontDescription* fd = pango_font_description_new();
    pango_font_description_set_family(fd, kFont);
    pango_font_description_set_absolute_size(fd, size * PANGO_SCALE);
    pango_font_description_set_weight(fd, bold ? PANGO_WEIGHT_BOLD : PANGO_WEIGHT_NORMAL);
    pango_layout_set_font_description(layout, fd);
    pango_layout_set_text(layout, s.c_str(), -1);
    int w = 0, h = 0;
    pango_layout_get_size(layout, &w, &h);
    const double tw = static_cast<double>(w) / PANGO_SCALE, th = static_cast<double>(h) / PANGO_SCALE;
    cairo_save(cr);
    cairo_translate(cr, x, y);
    cairo_rotate(cr, angle);
    const double dx = align == Align::left ? 0.0 : align == Align::center ? -tw / 2.0 : -tw;
    cairo_move_to(cr, dx, -valign * th);
    set(cr, colour);
    pango_cairo_show_layout(cr, layout);
    cairo_restore(cr);
    pango_font_description_free(fd);
    g_object_unref(layout);
    return tw;
}

double text_width(cairo_t* cr, const std::string& s, double size) {
    PangoLayout* layout = pango_cairo_create_layout(cr);
    PangoFontDescription* fd = pango_font_description_new();
    pango_font_description_set_family(fd, kFont);
    pango_font_description_set_absolute_size(fd, size * PANGO_SCALE);
    pango_layout_set_font_description(layout, fd);
    pango_layout_set_text(layout, s.c_str(), -1);
    int w = 0, h = 0;
    pango_layout_get_size(layout, &w, &h);
    pango_font_description_free(fd);
    g_object_unref(layout);
    return static_cast<double>(w) / PANGO_SCALE;
}

struct Frame {
    double x0, y0, x1, y1;  // plot area (y0 top)
    Axis xa, ya;
    double px(double v) const {
        const double t = xa.log ? (std::log10(std::max(v, 1e-300)) - std::log10(xa.lo)) / (std::log10(xa.hi) - std::log10(xa.lo))
                                : (v - xa.lo) / (xa.hi - xa.lo);
        return x0 + t * (x1 - x0);
    }
    double py(double v) const {
        const double t = ya.log ? (std::log10(std::max(v, 1e-300)) - std::log10(ya.lo)) / (std::log10(ya.hi) - std::log10(ya.lo))
                                : (v - ya.lo) / (ya.hi - ya.lo);
        return y1 - t * (y1 - y0);
    }
};

void shape(cairo_t* cr, double x, double y, const std::string& verdict, double r) {
    set(cr, palette::verdict(verdict));
    if (verdict == "incipient") {  // triangle
        cairo_move_to(cr, x, y - r * 1.2);
        cairo_line_to(cr, x + r * 1.1, y + r * 0.8);
        cairo_line_to(cr, x - r * 1.1, y + r * 0.8);
        cairo_close_path(cr);
        cairo_fill(cr);
    } else if (verdict == "developed") {  // diamond
        cairo_move_to(cr, x, y - r * 1.3);
        cairo_line_to(cr, x + r * 1.1, y);
        cairo_line_to(cr, x, y + r * 1.3);
        cairo_line_to(cr, x - r * 1.1, y);
        cairo_close_path(cr);
        cairo_fill(cr);
    } else if (verdict == "indeterminate" || verdict == "error") {  // hollow square
        cairo_set_line_width(cr, 1.2);
        cairo_rectangle(cr, x - r, y - r, 2 * r, 2 * r);
        cairo_stroke(cr);
    } else {  // normal: circle
        cairo_arc(cr, x, y, r, 0, 2 * M_PI);
        cairo_fill(cr);
    }
}

struct LegendItem {
    std::string name;
    Rgb colour;
    int kind;  // 0 line, 1 dashed line, 2 area, 3 point (verdict in name)
    std::string verdict;
};

void legend(cairo_t* cr, double x, double y, double max_x, const std::vector<LegendItem>& items) {
    double cx = x;
    double cy = y;
    for (const auto& it : items) {
        const double w = text_width(cr, it.name, 7.5) + 24.0;
        if (cx + w > max_x && cx > x) {
            cx = x;
            cy += 11.0;
        }
        if (it.kind == 2) {
            set(cr, it.colour, 0.35);
            cairo_rectangle(cr, cx, cy - 3.5, 14, 7);
            cairo_fill(cr);
        } else if (it.kind == 3) {
            shape(cr, cx + 7, cy, it.verdict, 3.0);
        } else {
            set(cr, it.colour);
            cairo_set_line_width(cr, 1.6);
            if (it.kind == 1) {
                const double d[] = {3.0, 2.0};
                cairo_set_dash(cr, d, 2, 0);
            }
            cairo_move_to(cr, cx, cy);
            cairo_line_to(cr, cx + 14, cy);
            cairo_stroke(cr);
            cairo_set_dash(cr, nullptr, 0, 0);
        }
        text(cr, cx + 17, cy, it.name, 7.5, Align::left, 0.5);
        cx += w + 6.0;
    }
}

double legend_height(cairo_t* cr, double x, double max_x, const std::vector<LegendItem>& items) {
    if (items.empty()) return 0.0;
    double cx = x;
    int rows = 1;
    for (const auto& it : items) {
        const double w = text_width(cr, it.name, 7.5) + 24.0;
        if (cx + w > max_x && cx > x) {
            cx = x;
            ++rows;
        }
        cx += w + 6.0;
    }
    return rows * 11.0;
}

void axes(cairo_t* cr, const Frame& f, double width) {
    (void)width;
    // Grid and ticks.
    cairo_set_line_width(cr, 0.5);
    for (double t : f.xa.hide_ticks ? std::vector<double>{} : ticks(f.xa)) {
        const double x = f.px(t);
        if (x < f.x0 - 0.5 || x > f.x1 + 0.5) continue;
        set(cr, palette::grid);
        cairo_move_to(cr, x, f.y0);
        cairo_line_to(cr, x, f.y1);
        cairo_stroke(cr);
        text(cr, x, f.y1 + 3.0, tick_label(f.xa, t), 7.0, Align::center, 0.0);
    }
    for (double t : ticks(f.ya)) {
        const double y = f.py(t);
        if (y < f.y0 - 0.5 || y > f.y1 + 0.5) continue;
        set(cr, palette::grid);
        cairo_move_to(cr, f.x0, y);
        cairo_line_to(cr, f.x1, y);
        cairo_stroke(cr);
        text(cr, f.x0 - 3.0, y, tick_label(f.ya, t), 7.0, Align::right, 0.5);
    }
    set(cr, palette::ink);
    cairo_set_line_width(cr, 0.8);
    cairo_rectangle(cr, f.x0, f.y0, f.x1 - f.x0, f.y1 - f.y0);
    cairo_stroke(cr);
    text(cr, 0.5 * (f.x0 + f.x1), f.y1 + 14.0, f.xa.label, 7.5, Align::center, 0.0);
    text(cr, 8.0, 0.5 * (f.y0 + f.y1), f.ya.label, 7.5, Align::center, 0.0, false, palette::ink, -M_PI / 2.0);
}

double nice_step(double span, int target) {
    const double raw = span / std::max(1, target);
    const double mag = std::pow(10.0, std::floor(std::log10(raw)));
    const double n = raw / mag;
    const double step = n < 1.5 ? 1.0 : n < 3.5 ? 2.0 : n < 7.5 ? 5.0 : 10.0;
    return step * mag;
}

std::string date_text(double days) {
    const std::time_t t = static_cast<std::time_t>(std::llround(days * 86400.0));
    std::tm tm{};
    gmtime_r(&t, &tm);
    char b[32];
    std::strftime(b, sizeof b, "%Y-%m-%d", &tm);
    return b;
}

}  // namespace

std::vector<double> ticks(const Axis& a) {
    std::vector<double> t;
    if (!(a.hi > a.lo) || !std::isfinite(a.lo) || !std::isfinite(a.hi)) return t;
    if (a.log) {
        if (!(a.lo > 0.0) || a.hi / a.lo > 1e40) return t;  // no log axis through 0, nor over 40 decades
        const int d0 = static_cast<int>(std::floor(std::log10(a.lo))), d1 = static_cast<int>(std::ceil(std::log10(a.hi)));
        const bool sparse = d1 - d0 > 3;
        for (int d = d0; d <= d1; ++d)
            for (double m : {1.0, 2.0, 5.0}) {
                if (sparse && m != 1.0) continue;
                const double v = m * std::pow(10.0, d);
                if (v >= a.lo * 0.999 && v <= a.hi * 1.001) t.push_back(v);
            }
        return t;
    }
    if (a.dates) {
        const double span = a.hi - a.lo;
        double step = 1.0;
        for (double s : {1.0, 2.0, 7.0, 14.0, 28.0, 56.0, 91.0, 182.0, 365.0})
            if (span / s <= 6.0) {
                step = s;
                break;
            } else {
                step = s;
            }
        // At most 64 ticks: over a span of millions of years (an edited date) v += step would not even move.
        for (double v = std::ceil(a.lo / step) * step; v <= a.hi + 1e-9 && t.size() < 64; v += step) t.push_back(v);
        return t;
    }
    const double step = nice_step(a.hi - a.lo, 6);
    if (!(step > 0.0) || !std::isfinite(step)) return t;
    for (double v = std::ceil(a.lo / step - 1e-9) * step; v <= a.hi + 1e-9 * step && t.size() < 64; v += step)
        t.push_back(std::abs(v) < 1e-12 * step ? 0.0 : v);
    return t;
}

std::string tick_label(const Axis& a, double v) {
    if (a.dates) return date_text(v);
    char b[32];
    const double av = std::abs(v);
    if (av >= 1000.0) {
        const double k = v / 1000.0;
        std::snprintf(b, sizeof b, std::abs(k - std::round(k)) < 1e-9 ? "%.0fk" : "%.1fk", k);
    } else if (av >= 1.0 || av == 0.0) {
        std::snprintf(b, sizeof b, std::abs(v - std::round(v)) < 1e-9 ? "%.0f" : "%.1f", v);
    } else {
        std::snprintf(b, sizeof b, "%g", v);
    }
    return b;
}

namespace {

// What can be drawn of a chart: every series and band cut to its shortest
// array, points that are not finite (or not above 0 on a log axis) left out,
// and axes that a log scale or a span can stand on. Charts come from files a
// user may have edited; drawing must not read past an array or loop on a
// range of -inf .. inf.
bool drawable_x(const Axis& a, double v) { return std::isfinite(v) && (!a.log || v > 0.0); }

Axis drawable_axis(Axis a) {
    if (!std::isfinite(a.lo) || !std::isfinite(a.hi)) a.lo = 0.0, a.hi = 1.0;
    if (a.log && !(a.lo > 0.0)) a.lo = a.hi > 0.0 ? a.hi / 1000.0 : 1.0;
    if (!(a.hi > a.lo)) a.hi = a.log ? a.lo * 10.0 : a.lo + 1.0;
    return a;
}

Chart drawable(const Chart& in) {
    Chart c = in;
    c.x = drawable_axis(c.x);
    c.y = drawable_axis(c.y);
    for (auto& s : c.series) {
        Series kept = s;
        kept.x.clear();
        kept.y.clear();
        kept.point_verdicts.clear();
        const std::size_t n = std::min(s.x.size(), s.y.size());
        for (std::size_t i = 0; i < n; ++i)
            if (drawable_x(c.x, s.x[i]) && drawable_x(c.y, s.y[i])) {
                kept.x.push_back(s.x[i]);
                kept.y.push_back(s.y[i]);
                if (i < s.point_verdicts.size()) kept.point_verdicts.push_back(s.point_verdicts[i]);
            }
        s = std::move(kept);
    }
    for (auto& b : c.bands) {
        Band kept = b;
        kept.x.clear();
        kept.lo.clear();
        kept.hi.clear();
        const std::size_t n = std::min({b.x.size(), b.lo.size(), b.hi.size()});
        for (std::size_t i = 0; i < n; ++i)
            if (drawable_x(c.x, b.x[i]) && std::isfinite(b.lo[i]) && std::isfinite(b.hi[i])) {
                kept.x.push_back(b.x[i]);
                kept.lo.push_back(b.lo[i]);
                kept.hi.push_back(b.hi[i]);
            }
        b = std::move(kept);
    }
    return c;
}

}  // namespace

void draw_stacked(cairo_t* cr, double width, double height, const std::vector<Chart>& charts) {
    if (charts.empty()) return;
    const double each = height / static_cast<double>(charts.size());
    for (std::size_t i = 0; i < charts.size(); ++i) {
        cairo_save(cr);
        cairo_translate(cr, 0.0, each * static_cast<double>(i));
        draw_chart(cr, width, each, charts[i]);
        cairo_restore(cr);
    }
}

void draw_chart(cairo_t* cr, double width, double height, const Chart& chart) {
    const Chart c = drawable(chart);
    set(cr, {1, 1, 1});
    cairo_rectangle(cr, 0, 0, width, height);
    cairo_fill(cr);
    text(cr, 4.0, 3.0, c.title, 9.0, Align::left, 0.0, true);
    std::vector<LegendItem> items;
    for (const auto& s : c.spans)
        if (!s.name.empty()) items.push_back({s.name, s.colour, 2, ""});
    for (const auto& b : c.bands)
        if (!b.name.empty()) items.push_back({b.name, b.colour, 2, ""});
    for (const auto& s : c.series) {
        if (s.name.empty()) continue;
        if (s.points && !s.point_verdicts.empty()) {
            std::vector<std::string> seen;
            for (const auto& v : s.point_verdicts)
                if (std::find(seen.begin(), seen.end(), v) == seen.end()) seen.push_back(v);
            for (const auto& v : seen) items.push_back({v, palette::verdict(v), 3, v});
        } else {
            items.push_back({s.name, s.colour, s.dashed ? 1 : 0, ""});
        }
    }
    for (const auto& h : c.hlines)
        if (!h.label.empty()) items.push_back({h.label, h.colour, 1, ""});
    const double legend_h = legend_height(cr, 46.0, width - 8.0, items);
    Frame f{46.0, 20.0 + legend_h + 12.0, width - 10.0, height - 30.0, c.x, c.y};
    legend(cr, 46.0, 20.0, width - 8.0, items);
    axes(cr, f, width);

    cairo_save(cr);
    cairo_rectangle(cr, f.x0, f.y0, f.x1 - f.x0, f.y1 - f.y0);
    cairo_clip(cr);
    for (const auto& s : c.spans) {
        set(cr, s.colour, 0.8);
        cairo_rectangle(cr, f.px(s.x0), f.y0, f.px(s.x1) - f.px(s.x0), f.y1 - f.y0);
        cairo_fill(cr);
    }
    for (const auto& b : c.bands) {
        if (b.x.empty()) continue;
        set(cr, b.colour, b.alpha);
        cairo_move_to(cr, f.px(b.x[0]), f.py(b.hi[0]));
        for (std::size_t i = 1; i < b.x.size(); ++i) cairo_line_to(cr, f.px(b.x[i]), f.py(b.hi[i]));
        for (std::size_t i = b.x.size(); i-- > 0;) cairo_line_to(cr, f.px(b.x[i]), f.py(b.lo[i]));
        cairo_close_path(cr);
        cairo_fill(cr);
    }
    for (const auto& h : c.hlines) {
        set(cr, h.colour);
        cairo_set_line_width(cr, 1.0);
        const double d[] = {4.0, 3.0};
        cairo_set_dash(cr, d, 2, 0);
        cairo_move_to(cr, f.x0, f.py(h.y));
        cairo_line_to(cr, f.x1, f.py(h.y));
        cairo_stroke(cr);
        cairo_set_dash(cr, nullptr, 0, 0);
    }
    for (const auto& m : c.markers) {
        const double x = f.px(m.x);
        set(cr, m.colour, m.strong ? 0.9 : 0.6);
        cairo_set_line_width(cr, m.strong ? 1.0 : 0.6);
        const double d[] = {2.0, 2.0};
        if (!m.strong) cairo_set_dash(cr, d, 2, 0);
        cairo_move_to(cr, x, f.y0);
        cairo_line_to(cr, x, f.y1);
        cairo_stroke(cr);
        cairo_set_dash(cr, nullptr, 0, 0);
    }
    for (const auto& s : c.series) {
        if (s.points) {
            for (std::size_t i = 0; i < s.x.size(); ++i)
                shape(cr, f.px(s.x[i]), f.py(s.y[i]), i < s.point_verdicts.size() ? s.point_verdicts[i] : "normal", 3.6);
            continue;
        }
        if (s.x.size() < 2) continue;
        set(cr, s.colour);
        cairo_set_line_width(cr, s.width);
        cairo_set_line_join(cr, CAIRO_LINE_JOIN_ROUND);
        if (s.dashed) {
            const double d[] = {4.0, 2.5};
            cairo_set_dash(cr, d, 2, 0);
        }
        cairo_move_to(cr, f.px(s.x[0]), f.py(s.y[0]));
        for (std::size_t i = 1; i < s.x.size(); ++i) cairo_line_to(cr, f.px(s.x[i]), f.py(s.y[i]));
        cairo_stroke(cr);
        cairo_set_dash(cr, nullptr, 0, 0);
    }
    cairo_restore(cr);
    // Marker labels above the plot area, skipping any that would overlap the one before.
    double last_right = -1e9;
    for (const auto& m : c.markers) {
        if (m.label.empty()) continue;
        const double x = f.px(m.x);
        if (x < f.x0 || x > f.x1) continue;
        const double w = text_width(cr, m.label, 6.5);
        if (x - w / 2 < last_right + 2) continue;
        text(cr, x, f.y0 - 1.5, m.label, 6.5, Align::center, 1.0, false, m.colour);
        last_right = x + w / 2;
    }
}

void draw_heatmap(cairo_t* cr, double width, double height, const HeatMap& m) {
    set(cr, {1, 1, 1});
    cairo_rectangle(cr, 0, 0, width, height);
    cairo_fill(cr);
    text(cr, 4.0, 3.0, m.title, 9.0, Align::left, 0.0, true);
    const double bar_w = 10.0, bar_gap = 40.0;
    Axis ya;
    ya.lo = 0;
    ya.hi = static_cast<double>(std::max<std::size_t>(1, m.rows.size()));
    ya.label = m.y_label;
    Frame f{46.0, 30.0, width - bar_w - bar_gap, height - 30.0, m.x, ya};
    double vmax = 0.0;
    for (const auto& r : m.rows)
        for (double v : r.values) vmax = std::max(vmax, v);
    if (!(vmax > 0.0)) vmax = 1.0;
    // Our colour scale: pale sand -> teal -> deep indigo.
    auto colour = [](double t) {
        const Rgb a{0.97, 0.95, 0.89}, b{0.25, 0.58, 0.56}, c{0.11, 0.16, 0.33};
        t = std::clamp(t, 0.0, 1.0);
        const Rgb& p = t < 0.5 ? a : b;
        const Rgb& q = t < 0.5 ? b : c;
        const double u = t < 0.5 ? 2 * t : 2 * t - 1;
        return Rgb{p.r + u * (q.r - p.r), p.g + u * (q.g - p.g), p.b + u * (q.b - p.b)};
    };
    const double row_h = (f.y1 - f.y0) / ya.hi;
    for (std::size_t r = 0; r < m.rows.size(); ++r) {
        const auto& row = m.rows[r];
        const double y = f.y0 + static_cast<double>(r) * row_h;
        // At most 1024 cells a row are drawn (each the largest of the values it
        // covers): a chart is a few hundred points wide, and a file may hold more.
        const std::size_t per = (row.values.size() + 1023) / 1024;
        const std::vector<double> shown = per <= 1 ? row.values : [&] {
            std::vector<double> v;
            for (std::size_t k = 0; k < row.values.size(); k += per)
                v.push_back(*std::max_element(row.values.begin() + static_cast<std::ptrdiff_t>(k),
                                              row.values.begin() + static_cast<std::ptrdiff_t>(std::min(k + per, row.values.size()))));
            return v;
        }();
        const double cell = (row.x1 - row.x0) / static_cast<double>(std::max<std::size_t>(1, shown.size()));
        for (std::size_t b = 0; b < shown.size(); ++b) {
            const double xa = f.px(row.x0 + cell * static_cast<double>(b)), xb = f.px(row.x0 + cell * static_cast<double>(b + 1));
            set(cr, colour(shown[b] / vmax));
            cairo_rectangle(cr, xa, y, xb - xa + 0.3, row_h + 0.3);
            cairo_fill(cr);
        }
        text(cr, f.x0 - 3.0, y + row_h / 2, row.label, 6.5, Align::right, 0.5);
    }
    for (const auto& mk : m.markers) {
        set(cr, mk.colour);
        cairo_set_line_width(cr, 0.9);
        const double d[] = {3.0, 2.0};
        cairo_set_dash(cr, d, 2, 0);
        cairo_move_to(cr, f.px(mk.x), f.y0);
        cairo_line_to(cr, f.px(mk.x), f.y1);
        cairo_stroke(cr);
        cairo_set_dash(cr, nullptr, 0, 0);
        text(cr, f.px(mk.x), f.y0 - 1.5, mk.label, 6.5, Align::center, 1.0, false, mk.colour);
    }
    if (m.outline) {
        const double y = f.y0 + static_cast<double>(m.outline->first) * row_h;
        set(cr, {0.85, 0.15, 0.10});
        cairo_set_line_width(cr, 1.8);
        cairo_rectangle(cr, f.px(m.outline->second.first), y, f.px(m.outline->second.second) - f.px(m.outline->second.first),
                        row_h);
        cairo_stroke(cr);
    }
    // Axes: x ticks below, y label, frame.
    set(cr, palette::ink);
    cairo_set_line_width(cr, 0.8);
    cairo_rectangle(cr, f.x0, f.y0, f.x1 - f.x0, f.y1 - f.y0);
    cairo_stroke(cr);
    for (double t : ticks(m.x)) {
        const double x = f.px(t);
        if (x < f.x0 - 0.5 || x > f.x1 + 0.5) continue;
        cairo_move_to(cr, x, f.y1);
        cairo_line_to(cr, x, f.y1 + 3);
        cairo_stroke(cr);
        text(cr, x, f.y1 + 4.0, tick_label(m.x, t), 7.0, Align::center, 0.0);
    }
    text(cr, 0.5 * (f.x0 + f.x1), f.y1 + 15.0, m.x.label, 7.5, Align::center, 0.0);
    text(cr, 8.0, 0.5 * (f.y0 + f.y1), m.y_label, 7.5, Align::center, 0.0, false, palette::ink, -M_PI / 2.0);
    // Colour bar.
    const double bx = width - bar_w - 28.0;
    for (int i = 0; i < 64; ++i) {
        const double t = (i + 0.5) / 64.0;
        set(cr, colour(t));
        const double y = f.y1 - (f.y1 - f.y0) * (i + 1) / 64.0;
        cairo_rectangle(cr, bx, y, bar_w, (f.y1 - f.y0) / 64.0 + 0.3);
        cairo_fill(cr);
    }
    set(cr, palette::ink);
    cairo_set_line_width(cr, 0.6);
    cairo_rectangle(cr, bx, f.y0, bar_w, f.y1 - f.y0);
    cairo_stroke(cr);
    Axis va;
    va.lo = 0;
    va.hi = vmax;
    for (double t : ticks(va)) {
        const double y = f.y1 - (f.y1 - f.y0) * t / vmax;
        text(cr, bx + bar_w + 2.0, y, tick_label(va, t), 6.5, Align::left, 0.5);
    }
    text(cr, bx + bar_w / 2, f.y0 - 2.0, m.value_label, 6.5, Align::center, 1.0);
}

std::string to_svg(double width, double height, const std::function<void(cairo_t*)>& draw, const std::string& id_prefix) {
    std::string out;
    cairo_surface_t* s = cairo_svg_surface_create_for_stream(
        [](void* closure, const unsigned char* data, unsigned int length) -> cairo_status_t {
            static_cast<std::string*>(closure)->append(reinterpret_cast<const char*>(data), length);
            return CAIRO_STATUS_SUCCESS;
        },
        &out, width, height);
    cairo_t* cr = cairo_create(s);
    draw(cr);
    cairo_destroy(cr);
    cairo_surface_finish(s);
    cairo_surface_destroy(s);
    // Drop the XML declaration; make ids unique to this figure; size by CSS.
    const auto start = out.find("<svg");
    if (start != std::string::npos) out.erase(0, start);
    out = std::regex_replace(out, std::regex("id=\"([^\"]+)\""), "id=\"" + id_prefix + "$1\"");
    out = std::regex_replace(out, std::regex("href=\"#([^\"]+)\""), "href=\"#" + id_prefix + "$1\"");
    out = std::regex_replace(out, std::regex("url\\(#([^)]+)\\)"), "url(#" + id_prefix + "$1)");
    const auto tag_end = out.find('>');
    if (tag_end != std::string::npos) {
        std::string tag = out.substr(0, tag_end);
        tag = std::regex_replace(tag, std::regex(" width=\"[^\"]*\""), "");
        tag = std::regex_replace(tag, std::regex(" height=\"[^\"]*\""), "");
        out = tag + " class=\"chart\" role=\"img\"" + out.substr(tag_end);
    }
    return out;
}

}  // namespace cavitas::app::plot
