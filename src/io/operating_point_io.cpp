#include "src/io/operating_point_io.hpp"


#include <algorithm>
#include <cctype>
#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <sstream>
#include <stdexcept>

#include "src/io/errors.hpp"
#include "src/io/toml_text.hpp"
#include "src/io/text_file.hpp"
#include "src/io/units.hpp"

namespace cavitas::app {

namespace fs = std::filesystem;
using models::OperatingPoint;
using models::PressureReference;

const std::vector<OperatingPointField>& operating_point_fields() {
    static const std::vector<OperatingPointField> f = {
        {"suction_pressure", "--suction-pressure",
         "Suction pressure as read on the gauge, with its unit: 35kPa, -0.4bar, 5psig, 19.7psia"},
        {"pressure_ref", "--pressure-ref", "Whether the suction reading is gauge (default) or absolute"},
        {"temperature", "--temperature", "Liquid temperature: 60C, 140F, 333.15K (sets the vapour pressure)"},
        {"barometric", "--barometric",
         "Barometric pressure at the site (absolute), e.g. 101.325kPa; default: from --elevation, else sea level"},
        {"elevation", "--elevation", "Site elevation above sea level, e.g. 350m, 1150ft: barometric pressure from the standard atmosphere"},
        {"gauge_height", "--gauge-height", "Height of the suction gauge above the impeller-eye datum (negative below), e.g. 0.8m"},
        {"flow", "--flow", "Operating flow: 120m3/h, 33L/s, 530gpm"},
        {"bore", "--bore", "Suction pipe bore at the gauge, for the velocity head: 150mm, 6in"},
        {"npsh3", "--npsh3", "The pump's NPSH3 (3 % head drop) at the operating flow, e.g. 4.2m"},
        {"npsh3_curve", "--npsh3-curve",
         "CSV of the pump's NPSH3 against flow (header 'flow [m3/h], npsh3 [m]', then one pair a row); read at --flow"},
        {"vapour_pressure", "--vapour-pressure", "Vapour pressure of a liquid other than water (absolute), e.g. 35kPa; needs --density"},
        {"density", "--density", "Density of a liquid other than water, e.g. 850kg/m3; needs --vapour-pressure"},
        {"speed", nullptr, "Shaft speed, e.g. 1485rpm (on the command line: --rpm)"},
        {"runner_setting", "--runner-setting",
         "Turbine: height of the runner's reference above tailwater (negative when submerged), e.g. 3m"},
        {"net_head", "--net-head", "Turbine: net head, e.g. 50m (with --runner-setting gives the plant Thoma number)"},
        {"sigma_critical", "--sigma-critical", "Turbine: critical Thoma number from the model tests (a plain number)"},
        {"note", nullptr, "Free text kept with the finding"},
    };
    return f;
}

namespace {

const OperatingPointField* field(const std::string& key) {
    for (const auto& f : operating_point_fields())
        if (key == f.key) return &f;
    return nullptr;
}

std::string known_keys() {
    std::string s;
    for (const auto& f : operating_point_fields()) s += (s.empty() ? "" : ", ") + std::string(f.key);
    return s;
}

std::string trim(std::string s) {
    while (!s.empty() && std::isspace(static_cast<unsigned char>(s.front()))) s.erase(s.begin());
    while (!s.empty() && std::isspace(static_cast<unsigned char>(s.back()))) s.pop_back();
    return s;
}

[[noreturn]] void fail(const TextOrigin& origin, const std::string& key, const std::string& what) {
    if (origin.flags) {
        const OperatingPointField* f = field(key);
        throw UsageError(std::string(f && f->flag ? f->flag : key.c_str()) + " " + what);
    }
    throw InputError(origin.file + ": " + key + " " + what);
}

double plain_number(const std::string& text) {
    const std::string t = trim(text);
    const char* s = t.c_str();
    char* end = nullptr;
    const double v = std::strtod(s, &end);
    if (!is_decimal(t) || end == s || *end != '\0' || !std::isfinite(v))
        throw std::invalid_argument("'" + text + "': expected a plain number (no unit)");
    return v;
}

}  // namespace

OperatingPoint parse_operating_point(const OperatingPointText& text, const TextOrigin& origin) {
    OperatingPoint op;
    std::optional<bool> gauge_from_unit;
    for (const auto& [key, raw] : text) {
        if (!field(key)) fail(origin, key, "is not an operating-point field (known: " + known_keys() + ")");
        const std::string value = trim(raw);
        if (value.empty()) continue;
        try {
            if (key == "suction_pressure") {
                const ParsedPressure p = parse_pressure(value);
                op.suction_pressure_pa = p.pa;
                gauge_from_unit = p.gauge;
            } else if (key == "pressure_ref") {
                std::string v = value;
                std::transform(v.begin(), v.end(), v.begin(), [](unsigned char c) { return std::tolower(c); });
                if (v == "gauge" || v == "g") op.pressure_reference = PressureReference::gauge;
                else if (v == "absolute" || v == "abs" || v == "a") op.pressure_reference = PressureReference::absolute;
                else throw std::invalid_argument("'" + value + "': use gauge or absolute");
            } else if (key == "temperature") {
                op.temperature_k = parse_quantity(value, Quantity::temperature);
            } else if (key == "barometric" || key == "vapour_pressure") {
                const ParsedPressure p = parse_pressure(value);
                if (p.gauge && *p.gauge)
                    throw std::invalid_argument("'" + value + "': this is an absolute pressure; a gauge unit makes no sense here");
                (key == "barometric" ? op.barometric_pa : op.vapour_pressure_pa) = p.pa;
            } else if (key == "elevation") {
                op.elevation_m = parse_quantity(value, Quantity::length);
            } else if (key == "gauge_height") {
                op.gauge_height_m = parse_quantity(value, Quantity::length);
            } else if (key == "flow") {
                op.flow_m3_s = parse_quantity(value, Quantity::flow);
            } else if (key == "bore") {
                op.bore_m = parse_quantity(value, Quantity::length);
            } else if (key == "npsh3") {
                op.npsh3_m = parse_quantity(value, Quantity::length);
            } else if (key == "npsh3_curve") {
                fs::path p(value);
                if (p.is_relative() && !origin.base_dir.empty()) p = fs::path(origin.base_dir) / p;
                op.npsh3_curve = read_npsh3_curve(p.string());
                op.npsh3_curve_name = p.string();
            } else if (key == "density") {
                op.density_kg_m3 = parse_quantity(value, Quantity::density);
            } else if (key == "speed") {
                op.rpm = parse_quantity(value, Quantity::speed);
            } else if (key == "runner_setting") {
                op.runner_setting_m = parse_quantity(value, Quantity::length);
            } else if (key == "net_head") {
                op.net_head_m = parse_quantity(value, Quantity::length);
            } else if (key == "sigma_critical") {
                op.sigma_critical = plain_number(value);
            } else if (key == "note") {
                op.note = value;
            }
        } catch (const std::invalid_argument& e) {
            fail(origin, key, e.what());
        }
    }
    if (gauge_from_unit) {
        const auto said = *gauge_from_unit ? PressureReference::gauge : PressureReference::absolute;
        if (op.pressure_reference && *op.pressure_reference != said)
            fail(origin, "suction_pressure",
                 std::string("says ") + (*gauge_from_unit ? "gauge" : "absolute") + " in its unit, but the pressure "
                 "reference is given as " + (*gauge_from_unit ? "absolute" : "gauge"));
        op.pressure_reference = said;
    }
    return op;
}

OperatingPoint read_operating_point_file(const std::string& path) {
    return parse_operating_point_toml(read_text_file(path, "operating-point file", 1u << 20), path,
                                      fs::path(path).parent_path().string());
}

namespace {

// An operating-point file is a flat table of strings. The TOML parser recurses
// once per level of dotted keys and nested tables or arrays, so a file of deeply
// nested keys would overflow the stack (80 KB of "a.a.a..." did): the nesting is
// measured first, outside quotes and comments, and refused past these limits
// (our choice; a sidecar needs depth 1).
constexpr int kMaxKeyDots = 8, kMaxBrackets = 16;

void refuse_deep_nesting(const std::string& text, const std::string& path) {
    int line = 1, brackets = 0, dots = 0;
    bool before_equals = true;
    char quote = 0;
    for (std::size_t i = 0; i < text.size(); ++i) {
        const char c = text[i];
        if (c == '\n') {
            ++line;
            dots = 0;
            before_equals = true;
            if (quote == '\'') quote = 0;  // a literal string ends at the line; others are caught by the parser
            continue;
        }
        if (quote) {
            if (c == '\\' && quote == '"') ++i;
            else if (c == quote) quote = 0;
            continue;
        }
        if (c == '"' || c == '\'') quote = c;
        else if (c == '#') while (i + 1 < text.size() && text[i + 1] != '\n') ++i;
        else if (c == '=') before_equals = false;
        else if (c == '.' && before_equals && ++dots > kMaxKeyDots)
            throw InputError(path + ":" + std::to_string(line) + ": a key nested more than " + std::to_string(kMaxKeyDots) +
                             " levels deep; an operating-point file holds plain keys such as suction_pressure = \"35 kPa\"");
        else if ((c == '[' || c == '{') && ++brackets > kMaxBrackets)
            throw InputError(path + ":" + std::to_string(line) + ": tables or arrays nested more than " +
                             std::to_string(kMaxBrackets) + " deep; an operating-point file holds plain keys");
        else if ((c == ']' || c == '}') && brackets > 0)
            --brackets;
    }
}

}  // namespace

OperatingPoint parse_operating_point_toml(const std::string& text, const std::string& path, const std::string& base_dir) {
    refuse_deep_nesting(text, path);
    const toml::table table = parse_toml_text(text, path);
    OperatingPointText fields;
    for (auto&& [k, node] : table) {
        const std::string key(k.str());
        if (node.is_string()) {
            fields.emplace_back(key, *node.value<std::string>());
        } else if (node.is_number() && key == "sigma_critical") {
            fields.emplace_back(key, std::to_string(*node.value<double>()));
        } else if (node.is_number()) {
            std::ostringstream m;
            m << path << ":" << node.source().begin.line << ": " << key
              << " = a bare number; write it as a string with its unit, e.g. " << key << " = \"";
            const OperatingPointField* f = field(key);
            m << (key == "temperature" ? "14 C" : key == "flow" ? "410 m3/h" : "35 kPa") << "\"";
            if (!f) m << " (and '" << key << "' is not an operating-point field either; known: " << known_keys() << ")";
            throw InputError(m.str());
        } else {
            std::ostringstream m;
            m << path << ":" << node.source().begin.line << ": " << key
              << " must be a string such as \"35 kPa\" (tables, arrays, dates and booleans are not operating-point fields)";
            throw InputError(m.str());
        }
    }
    TextOrigin origin;
    origin.file = path;
    origin.base_dir = base_dir;
    return parse_operating_point(fields, origin);
}

std::string sidecar_path_for(const std::string& recording) {
    fs::path p(recording);
    return (p.parent_path() / (p.stem().string() + ".op.toml")).string();
}

models::Npsh3Curve read_npsh3_curve(const std::string& path) {
    return parse_npsh3_curve(read_text_file(path, "NPSH3 curve", 1u << 20), path);
}

models::Npsh3Curve parse_npsh3_curve(const std::string& text, const std::string& path) {
    std::istringstream in(text);
    std::string line;
    int line_no = 0;
    std::string flow_unit, npsh_unit;
    bool header = false;
    std::vector<models::Npsh3Curve::Point> points;
    auto err = [&](const std::string& what) {
        return InputError(path + ":" + std::to_string(line_no) + ": " + what);
    };
    while (std::getline(in, line)) {
        ++line_no;
        if (!line.empty() && line.back() == '\r') line.pop_back();
        if (line_no == 1 && line.rfind("\xEF\xBB\xBF", 0) == 0) line.erase(0, 3);  // a spreadsheet's byte-order mark
        const std::string t = trim(line);
        if (t.empty() || t[0] == '#') continue;
        std::vector<std::string> cells;
        std::stringstream ss(t);
        std::string cell;
        while (std::getline(ss, cell, ',')) cells.push_back(trim(cell));
        if (cells.size() != 2) throw err("expected two columns (flow, NPSH3), found " + std::to_string(cells.size()));
        if (!header) {
            auto unit_of = [&](const std::string& c, const char* name) {
                const auto open = c.find('['), close = c.find(']');
                std::string n = trim(c.substr(0, open));
                std::transform(n.begin(), n.end(), n.begin(), [](unsigned char ch) { return std::tolower(ch); });
                if (n != name || open == std::string::npos || close == std::string::npos || close < open)
                    throw err("expected the header 'flow [UNIT], npsh3 [UNIT]', e.g. 'flow [m3/h], npsh3 [m]', found '" +
                              t + "'");
                return trim(c.substr(open + 1, close - open - 1));
            };
            flow_unit = unit_of(cells[0], "flow");
            npsh_unit = unit_of(cells[1], "npsh3");
            try {
                parse_quantity("1 " + flow_unit, Quantity::flow);
                parse_quantity("1 " + npsh_unit, Quantity::length);
            } catch (const std::invalid_argument& e) {
                throw err(std::string("header: ") + e.what());
            }
            header = true;
            continue;
        }
        models::Npsh3Curve::Point p;
        try {
            plain_number(cells[0]);
            plain_number(cells[1]);
            p.flow_m3_s = parse_quantity(cells[0] + " " + flow_unit, Quantity::flow);
            p.npsh3_m = parse_quantity(cells[1] + " " + npsh_unit, Quantity::length);
        } catch (const std::invalid_argument& e) {
            throw err(e.what());
        }
        points.push_back(p);
        if (points.size() > 10000) throw err("more than 10000 points; this is not an NPSH3 curve");
    }
    if (!header) throw InputError(path + ": empty NPSH3 curve (expected a header 'flow [m3/h], npsh3 [m]' and points)");
    try {
        return models::Npsh3Curve(std::move(points));
    } catch (const std::invalid_argument& e) {
        throw InputError(path + ": " + e.what());
    }
}

}  // namespace cavitas::app
