// libFuzzer target: arbitrary bytes as an operating-point sidecar (TOML) and as
// an NPSH3 curve (CSV), then through the hydraulics.
//
// The readers' only documented way to refuse text is InputError naming the
// file; evaluate_operating_point's is std::invalid_argument. Anything else
// escaping (a toml++ exception, std::out_of_range, a crash, a sanitizer
// report) is a bug. What is accepted must give finite numbers or none.
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <stdexcept>
#include <string>

#include "models/operating_point.hpp"
#include "src/io/errors.hpp"
#include "src/io/operating_point_io.hpp"

namespace {

[[noreturn]] void bug(const char* what) {
    std::fprintf(stderr, "\nfuzz_operating_point: BUG: %s\n", what);
    std::fflush(stderr);
    std::abort();
}

void finite(const std::optional<double>& v, const char* what) {
    if (v && !std::isfinite(*v)) bug(what);
}

void evaluate(const cavitas::models::OperatingPoint& op) {
    try {
        const auto h = cavitas::models::evaluate_operating_point(op);
        finite(h.absolute_suction_pa, "absolute suction pressure not finite");
        if (h.npsh && !std::isfinite(h.npsh->npsha_m)) bug("NPSHa not finite");
        if (h.margin && !std::isfinite(h.margin->ratio)) bug("margin ratio not finite");
        finite(h.thoma_sigma, "Thoma number not finite");
    } catch (const std::invalid_argument&) {
    }
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    const std::string text(reinterpret_cast<const char*>(data), size);
    // A relative npsh3_curve path points into a folder that does not exist: refused by name.
    try {
        evaluate(cavitas::app::parse_operating_point_toml(text, "fuzz.op.toml", "/nonexistent-cavitas-fuzz"));
    } catch (const cavitas::app::InputError&) {
    }
    try {
        const auto curve = cavitas::app::parse_npsh3_curve(text, "fuzz.csv");
        cavitas::models::OperatingPoint op;
        op.suction_pressure_pa = 10000.0;
        op.temperature_k = 293.15;
        op.npsh3_curve = curve;
        for (const auto& p : curve.points()) {
            op.flow_m3_s = p.flow_m3_s;
            evaluate(op);
        }
    } catch (const cavitas::app::InputError&) {
    }
    return 0;
}
