// libFuzzer target: arbitrary bytes as an NPSH3 curve (CSV: a header
// 'flow [UNIT], npsh3 [UNIT]' and points), read by parse_npsh3_curve.
//
// Its only way to refuse text is InputError naming the file. A curve that is
// read has at least two points, finite flows that rise strictly from 0 or
// more, and finite NPSH3 above 0; it gives back each point's NPSH3 at its
// flow, an NPSH3 between its neighbours' between two points (straight-line
// interpolation), and std::out_of_range outside its flows, never an
// extrapolation.
#include <algorithm>
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <stdexcept>
#include <string>

#include "models/hydraulics.hpp"
#include "src/io/errors.hpp"
#include "src/io/operating_point_io.hpp"

namespace {

[[noreturn]] void bug(const char* what, const std::string& detail) {
    std::fprintf(stderr, "\nfuzz_curve: BUG: %s: %s\n", what, detail.c_str());
    std::fflush(stderr);
    std::abort();
}

std::string point_text(std::size_t i, double q, double h) {
    char b[120];
    std::snprintf(b, sizeof b, "point %zu: flow %.17g m3/s, NPSH3 %.17g m", i + 1, q, h);
    return b;
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    const std::string text(reinterpret_cast<const char*>(data), size);
    const std::string name = "fuzz/pump.npsh3.csv";
    cavitas::models::Npsh3Curve curve({{0.0, 1.0}, {1.0, 1.0}});
    try {
        curve = cavitas::app::parse_npsh3_curve(text, name);
    } catch (const cavitas::app::InputError& e) {
        if (std::string(e.what()).rfind(name, 0) != 0) bug("a refusal does not name the file", e.what());
        return 0;
    }
    const auto& p = curve.points();
    if (p.size() < 2) bug("a curve of fewer than two points was read", std::to_string(p.size()));
    for (std::size_t i = 0; i < p.size(); ++i) {
        const double q = p[i].flow_m3_s, h = p[i].npsh3_m;
        if (!std::isfinite(q) || q < 0.0 || !std::isfinite(h) || !(h > 0.0)) bug("a point out of range was read", point_text(i, q, h));
        if (i > 0 && !(q > p[i - 1].flow_m3_s)) bug("flows that do not rise were read", point_text(i, q, h));
        if (!curve.covers(q)) bug("the curve does not cover its own point", point_text(i, q, h));
        const double at = curve.at(q);
        if (!std::isfinite(at) || std::abs(at - h) > 1e-9 * std::max(1.0, h)) bug("a point's NPSH3 is not given back", point_text(i, q, h));
        if (i > 0) {
            const double mid = p[i - 1].flow_m3_s + 0.5 * (q - p[i - 1].flow_m3_s);
            const double v = curve.at(mid);
            const double lo = std::min(h, p[i - 1].npsh3_m), hi = std::max(h, p[i - 1].npsh3_m);
            if (!std::isfinite(v) || v < lo * (1 - 1e-12) || v > hi * (1 + 1e-12))
                bug("an interpolated NPSH3 outside its neighbours", point_text(i, mid, v));
        }
    }
    const double past = p.back().flow_m3_s * 2.0 + 1.0;
    if (curve.covers(past)) bug("the curve covers a flow past its last point", std::to_string(past));
    try {
        (void)curve.at(past);
        bug("a flow past the curve was extrapolated", std::to_string(past));
    } catch (const std::out_of_range&) {
    }
    return 0;
}
