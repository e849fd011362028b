#include "src/io/toml_text.hpp"

#include <sstream>

#include "src/io/errors.hpp"

namespace cavitas::app {

toml::table parse_toml_text(const std::string& text, const std::string& path) {
    try {
        return toml::parse(text, path);
    } catch (const toml::parse_error& e) {
        std::ostringstream m;
        m << path << ":" << e.source().begin.line << ": not valid TOML: " << e.description();
        throw InputError(m.str());
    }
}

std::string shown_number(double v) {
    std::ostringstream s;
    s << v;
    return s.str();
}

}  // namespace cavitas::app
