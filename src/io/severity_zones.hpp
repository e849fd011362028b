// The analyst's severity zone file: the boundaries of zones A-D of overall
// velocity (mm/s RMS) and the standard they come from. cavitas ships no
// default limits (public summaries of the standards' tables disagree); the
// analyst writes the file once per class of machine:
//
//   source = "ISO 10816-7:2009, category II, < 200 kW"   # required
//   band_hz = [10, 1000]                                 # optional
//   a_b_mm_s = 2.8
//   b_c_mm_s = 4.5
//   c_d_mm_s = 7.1
#pragma once

#include <string>

#include "models/severity.hpp"

namespace cavitas::app {

/// The file name the route looks for in the baseline library folder.
inline constexpr const char* kSeverityZonesFileName = "severity_zones.toml";
/// Longest source text accepted, bytes.
inline constexpr std::size_t kZoneSourceMaxBytes = 200;
/// The band's edges must lie within these, Hz.
inline constexpr double kZoneBandMinHz = 1.0;
inline constexpr double kZoneBandMaxHz = 10000.0;

/// Parse a zone file's text; InputError naming `path`, the key and the value
/// (missing or empty source, a boundary not a positive finite number, the
/// boundaries not ascending, a band outside 1-10000 Hz or not ascending, an
/// unknown key, not TOML).
models::SeverityZones parse_severity_zones(const std::string& text, const std::string& path);
/// Read and parse a zone file (at most 64 KiB).
models::SeverityZones read_severity_zones(const std::string& path);

}  // namespace cavitas::app
