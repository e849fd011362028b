// Full-scale calibration of a recording: what one full-scale sample means.
#pragma once

#include <string>

namespace cavitas::app {

/// "50g" -> {50, "g"}; "9.81m/s2" -> {9.81, "m/s2"}; "2000Pa" -> {2000, "Pa"}.
/// Without a calibration samples stay in full-scale units, {1, "FS"}.
struct Calibration {
    double full_scale = 1.0;  ///< engineering units per full-scale sample
    std::string unit = "FS";
};

/// Parse "<number><unit>", unit one of g, m/s2 (also m/s^2, m/s²), Pa, kPa, FS.
/// Throws UsageError naming the text and what is accepted.
Calibration parse_full_scale(const std::string& text);

}  // namespace cavitas::app
