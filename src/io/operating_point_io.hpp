// The operating point as people write it: command-line flags, a sidecar file
// beside a recording, route-manifest columns. All three are the same fields of
// text with units, parsed by one function into models::OperatingPoint.
//
// Sidecar file: for a recording NAME.wav, NAME.op.toml in the same folder
// (found and read by analyze and baseline), or any file named with
// --operating-point. TOML, one key per field, values as strings with units:
//
//     suction_pressure = "-38 kPa"     # as read on the gauge
//     pressure_ref     = "gauge"       # or "absolute"
//     temperature      = "14 C"
//     elevation        = "62 m"        # or barometric = "100.6 kPa"
//     gauge_height     = "0.4 m"
//     flow             = "410 m3/h"
//     bore             = "250 mm"
//     npsh3_curve      = "OW-P101.npsh3.csv"   # relative to this file; or npsh3 = "3.1 m"
//     speed            = "1485 rpm"
//     note             = "duty pump, sump level low"
#pragma once

#include <string>
#include <utility>
#include <vector>

#include "models/operating_point.hpp"

namespace cavitas::app {

/// One field of the operating point: its key (sidecar and manifest), its
/// command-line flag, what it holds.
struct OperatingPointField {
    const char* key;   ///< "suction_pressure"
    const char* flag;  ///< "--suction-pressure"
    const char* help;
};
const std::vector<OperatingPointField>& operating_point_fields();

/// Fields as (key, text) pairs, in the order given.
using OperatingPointText = std::vector<std::pair<std::string, std::string>>;

/// Where the text came from, for errors: flags (UsageError naming the flag) or
/// a file (InputError naming the file and the key). Relative paths in the text
/// (npsh3_curve) are taken from `base_dir`.
struct TextOrigin {
    bool flags = false;
    std::string file;      ///< for a file: its path (and ":LINE" for a manifest row)
    std::string base_dir;  ///< folder for relative paths
};

/// Parse the fields. Unknown keys are refused (a typo would silently drop a
/// reading). Empty texts are skipped (an empty manifest cell).
models::OperatingPoint parse_operating_point(const OperatingPointText& text, const TextOrigin& origin);

/// Read a TOML sidecar file. Throws InputError naming the file.
models::OperatingPoint read_operating_point_file(const std::string& path);
/// The same from text; `name` stands for the file in errors, `base_dir` is
/// where a relative npsh3_curve path is looked for.
models::OperatingPoint parse_operating_point_toml(const std::string& text, const std::string& name,
                                                  const std::string& base_dir);

/// NAME.op.toml beside NAME.wav (the path is returned whether or not it exists).
std::string sidecar_path_for(const std::string& recording);

/// Read an NPSH3 curve: CSV with a header row naming the two columns with
/// their units in brackets, then one (flow, NPSH3) pair a row:
///     flow [m3/h], npsh3 [m]
///     100, 2.1
/// '#' starts a comment line. Throws InputError naming the file and line.
models::Npsh3Curve read_npsh3_curve(const std::string& path);
/// The same from text; `name` stands for the file in errors.
models::Npsh3Curve parse_npsh3_curve(const std::string& text, const std::string& name);

}  // namespace cavitas::app
