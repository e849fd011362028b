#include "src/units.hpp"

#include <cmath>
#include <cstdlib>

#include "src/errors.hpp"

namespace cavitas::app {

Calibration parse_full_scale(const std::string& text) {
    const char* s = text.c_str();
    char* end = nullptr;
    const double v = std::strtod(s, &end);
    std::string unit = end ? std::string(end) : std::string();
    while (!unit.empty() && unit.front() == ' ') unit.erase(unit.begin());
    if (end == s || !std::isfinite(v) || !(v > 0.0))
        throw UsageError("--full-scale '" + text + "': expected a positive number followed by a unit, e.g. 50g, 500m/s2, 2000Pa");
    Calibration c;
    c.full_scale = v;
    if (unit == "g" || unit == "G") {
        c.unit = "g";
    } else if (unit == "m/s2" || unit == "m/s^2" || unit == "m/s\xC2\xB2") {
        c.unit = "m/s2";
    } else if (unit == "Pa" || unit == "pa") {
        c.unit = "Pa";
    } else if (unit == "kPa" || unit == "kpa") {
        c.unit = "Pa";
        c.full_scale = v * 1000.0;
    } else if (unit == "FS" || unit == "fs") {
        c.unit = "FS";
    } else {
        throw UsageError("--full-scale '" + text + "': unknown unit '" + unit +
                         "' (use g, m/s2, Pa, kPa or FS)");
    }
    return c;
}

}  // namespace cavitas::app
