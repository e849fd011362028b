// The small hand-edited TOML files cavitas reads (sidecars, severity zones, a
// point's limits): parsed with toml++, an error naming the file and its line.
#pragma once

#include <string>

#include <toml++/toml.h>

namespace cavitas::app {

/// The file's table; InputError "PATH:LINE: not valid TOML: WHY".
toml::table parse_toml_text(const std::string& text, const std::string& path);

/// A number as an error message about a TOML value shows it (shortest form: 4.5, 0.1, 50).
std::string shown_number(double v);

}  // namespace cavitas::app
