#include "src/io/severity_zones.hpp"


#include <cmath>
#include <sstream>

#include "src/io/errors.hpp"
#include "src/io/toml_text.hpp"
#include "src/io/text_file.hpp"

namespace cavitas::app {

namespace {

[[noreturn]] void refuse(const std::string& path, const std::string& key, const std::string& what) {
    throw InputError(path + ": " + key + " " + what);
}

double boundary(const toml::table& t, const std::string& path, const char* key) {
    const toml::node* n = t.get(key);
    if (!n) refuse(path, key, "is missing (a zone boundary in mm/s RMS, e.g. " + std::string(key) + " = 4.5)");
    const std::optional<double> v = n->value<double>();
    if (!n->is_number() || !v) refuse(path, key, "must be a number of mm/s RMS, e.g. " + std::string(key) + " = 4.5");
    if (!std::isfinite(*v) || !(*v > 0.0)) refuse(path, key, "= " + shown_number(*v) + " must be a positive finite number of mm/s");
    return *v;
}

}  // namespace

models::SeverityZones parse_severity_zones(const std::string& text, const std::string& path) {
    const toml::table t = parse_toml_text(text, path);
    for (auto&& [k, node] : t) {
        const std::string key(k.str());
        if (key != "source" && key != "band_hz" && key != "a_b_mm_s" && key != "b_c_mm_s" && key != "c_d_mm_s")
            refuse(path, key, "is not a zone file key (known: source, band_hz, a_b_mm_s, b_c_mm_s, c_d_mm_s)");
    }
    models::SeverityZones z;
    const toml::node* src = t.get("source");
    if (!src) refuse(path, "source", "is missing: name the standard, part, edition and class the boundaries come from");
    if (!src->is_string()) refuse(path, "source", "must be a string naming the standard, part, edition and class");
    z.source = *src->value<std::string>();
    if (z.source.find_first_not_of(" \t") == std::string::npos)
        refuse(path, "source", "is empty: name the standard, part, edition and class the boundaries come from");
    if (z.source.size() > kZoneSourceMaxBytes)
        refuse(path, "source", "is " + std::to_string(z.source.size()) + " bytes long; at most " +
                                   std::to_string(kZoneSourceMaxBytes) + " are kept");
    for (unsigned char c : z.source)
        if (c < 0x20 || c == 0x7f) refuse(path, "source", "holds a control character");
    if (const toml::node* b = t.get("band_hz")) {
        const toml::array* a = b->as_array();
        if (!a || a->size() != 2 || !(*a)[0].is_number() || !(*a)[1].is_number())
            refuse(path, "band_hz", "must be two numbers of Hz, low and high, e.g. band_hz = [10, 1000]");
        z.band_low_hz = *(*a)[0].value<double>();
        z.band_high_hz = *(*a)[1].value<double>();
        const std::string shown = "= [" + shown_number(z.band_low_hz) + ", " + shown_number(z.band_high_hz) + "]";
        if (!std::isfinite(z.band_low_hz) || !std::isfinite(z.band_high_hz) || z.band_low_hz < kZoneBandMinHz ||
            z.band_high_hz > kZoneBandMaxHz)
            refuse(path, "band_hz", shown + " must lie within 1-10000 Hz");
        if (!(z.band_low_hz < z.band_high_hz)) refuse(path, "band_hz", shown + ": the low edge must be below the high edge");
    }
    z.a_b_mm_s = boundary(t, path, "a_b_mm_s");
    z.b_c_mm_s = boundary(t, path, "b_c_mm_s");
    z.c_d_mm_s = boundary(t, path, "c_d_mm_s");
    if (!(z.a_b_mm_s < z.b_c_mm_s))
        refuse(path, "b_c_mm_s", "= " + shown_number(z.b_c_mm_s) + " must be above a_b_mm_s = " + shown_number(z.a_b_mm_s));
    if (!(z.b_c_mm_s < z.c_d_mm_s))
        refuse(path, "c_d_mm_s", "= " + shown_number(z.c_d_mm_s) + " must be above b_c_mm_s = " + shown_number(z.b_c_mm_s));
    return z;
}

models::SeverityZones read_severity_zones(const std::string& path) {
    return parse_severity_zones(read_text_file(path, "severity zone file", 64u << 10), path);
}

}  // namespace cavitas::app
