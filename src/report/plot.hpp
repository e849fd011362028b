// Charts for reports, drawn with cairo (text with pango): the same drawing
// code paints an SVG for the HTML report and a vector figure on a PDF page.
// Axes carry their unit, ticks are readable numbers, every chart has a legend.
#pragma once

#include <functional>
#include <optional>
#include <string>
#include <vector>

typedef struct _cairo cairo_t;

namespace cavitas::app::plot {

struct Rgb {
    double r = 0, g = 0, b = 0;
};

/// The report's palette (our own): a colour per verdict and neutral inks.
namespace palette {
inline constexpr Rgb ink{0.13, 0.15, 0.18};
inline constexpr Rgb grid{0.86, 0.87, 0.89};
inline constexpr Rgb recording{0.09, 0.27, 0.55};   // deep blue: this recording
inline constexpr Rgb baseline{0.42, 0.45, 0.50};    // grey: the known-good reference
inline constexpr Rgb band_shade{0.98, 0.93, 0.80};  // pale sand: the HF band
inline constexpr Rgb marker_blade{0.62, 0.22, 0.50};  // plum: blade-pass family
inline constexpr Rgb marker_shaft{0.30, 0.55, 0.35};  // moss: shaft orders
Rgb verdict(const std::string& verdict);  ///< normal, incipient, developed, indeterminate, error
}  // namespace palette

struct Axis {
    double lo = 0.0, hi = 1.0;
    bool log = false;
    std::string label;  ///< with its unit, e.g. "frequency, Hz"
    /// Tick labels for date axes (days since 1970): "2026-11-02".
    bool dates = false;
    bool hide_ticks = false;  ///< categories drawn by the chart itself
};

struct Series {
    std::vector<double> x, y;
    std::string name;
    Rgb colour = palette::recording;
    double width = 1.4;
    bool dashed = false;
    bool points = false;            ///< markers instead of a line
    std::vector<std::string> point_verdicts;  ///< per point: shape and colour by verdict
};

struct Band {  ///< a filled area between two curves
    std::vector<double> x, lo, hi;
    std::string name;
    Rgb colour = palette::baseline;
    double alpha = 0.22;
};

struct Span {  ///< a shaded x-range
    double x0 = 0, x1 = 0;
    std::string name;
    Rgb colour = palette::band_shade;
};

struct Marker {  ///< a vertical line with a label at its top
    double x = 0;
    std::string label;
    Rgb colour = palette::marker_blade;
    bool strong = true;
};

struct HLine {
    double y = 0;
    std::string label;
    Rgb colour = palette::verdict("developed");
};

struct Chart {
    std::string title;
    Axis x, y;
    std::vector<Span> spans;
    std::vector<Band> bands;
    std::vector<Series> series;
    std::vector<Marker> markers;
    std::vector<HLine> hlines;
};

/// Draw a chart into the rectangle (0, 0, width, height) of cr, in points.
void draw_chart(cairo_t* cr, double width, double height, const Chart& chart);
/// Charts one above the other in the rectangle (0, 0, width, height), each
/// getting an equal share of the height (traces that share their x axis).
void draw_stacked(cairo_t* cr, double width, double height, const std::vector<Chart>& charts);

/// A map of cells (the kurtogram): rows from the top, each with cells spanning
/// the x axis evenly; a colour bar on the right; an optional outlined cell.
struct HeatRow {
    std::string label;         ///< e.g. "1.6"
    double x0 = 0, x1 = 0;     ///< the row's extent on the x axis
    std::vector<double> values;
};
struct HeatMap {
    std::string title;
    Axis x;
    std::string y_label;
    std::string value_label;   ///< for the colour bar
    std::vector<HeatRow> rows;
    std::optional<std::pair<std::size_t, std::pair<double, double>>> outline;  ///< row, x range
    std::vector<Marker> markers;
};
void draw_heatmap(cairo_t* cr, double width, double height, const HeatMap& map);

/// Nice tick positions for a linear axis (1-2-5 steps), and for a log axis (decades, 2 and 5).
std::vector<double> ticks(const Axis& a);
/// A tick label: "200", "1.5k", "12k", "0.05", or a date.
std::string tick_label(const Axis& a, double v);

/// An SVG document of a drawing (cairo's SVG surface), with every id given
/// `id_prefix` so that several figures can live in one HTML page, and the root
/// element sized by CSS (width 100 %).
std::string to_svg(double width, double height, const std::function<void(cairo_t*)>& draw, const std::string& id_prefix);

}  // namespace cavitas::app::plot
