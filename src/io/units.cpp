#include "src/io/units.hpp"

#include <array>
#include <cctype>
#include <cmath>
#include <cstdlib>
#include <stdexcept>
#include <cstring>
#include <string_view>

#include "src/io/errors.hpp"

namespace cavitas::app {

bool is_decimal(std::string_view s) {
    std::size_t i = 0, digits = 0;
    auto run = [&] {
        const std::size_t start = i;
        while (i < s.size() && s[i] >= '0' && s[i] <= '9') ++i;
        return i - start;
    };
    if (i < s.size() && (s[i] == '+' || s[i] == '-')) ++i;
    digits += run();
    if (i < s.size() && s[i] == '.') {
        ++i;
        digits += run();
    }
    if (digits == 0) return false;
    if (i < s.size() && (s[i] == 'e' || s[i] == 'E')) {
        ++i;
        if (i < s.size() && (s[i] == '+' || s[i] == '-')) ++i;
        if (run() == 0) return false;
    }
    return i == s.size();
}

Calibration parse_full_scale(const std::string& text) {
    const char* s = text.c_str();
    char* end = nullptr;
    const double v = std::strtod(s, &end);
    std::string unit = end ? std::string(end) : std::string();
    while (!unit.empty() && unit.front() == ' ') unit.erase(unit.begin());
    if (!is_decimal({s, static_cast<std::size_t>(end - s)}) || !std::isfinite(v) || !(v > 0.0))
        throw UsageError("--full-scale '" + text + "': expected a positive decimal number followed by a unit, e.g. 50g, "
                         "500m/s2, 2000Pa");
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
    } else if (unit == "V") {
        c.unit = "V";
    } else if (unit == "mV") {
        c.unit = "V";
        c.full_scale = v * 1e-3;
    } else if (unit == "FS" || unit == "fs") {
        c.unit = "FS";
    } else {
        throw UsageError("--full-scale '" + text + "': unknown unit '" + unit +
                         "' (use g, m/s2, Pa, kPa, V, mV or FS)");
    }
    // The range a baseline file may hold (baseline_io): what is learned can be read back.
    if (!(c.full_scale >= 1e-12 && c.full_scale <= 1e12))
        throw UsageError("--full-scale '" + text + "': outside 1e-12 .. 1e12 " + c.unit + "; no sensor spans that");
    return c;
}

namespace {

// Exact conversion factors (by definition): the international inch is 0.0254 m
// and the foot 0.3048 m (1959 yard and pound agreement); the avoirdupois pound
// 0.45359237 kg; the pound-force that pound under standard gravity 9.80665 m/s2;
// the US gallon 231 cubic inches. Checked against scipy.constants in the tests.
constexpr double kInch_m = 0.0254;
constexpr double kFoot_m = 0.3048;
constexpr double kPound_kg = 0.45359237;
constexpr double kPsi_pa = kPound_kg * 9.80665 / (kInch_m * kInch_m);
constexpr double kUsGallon_m3 = 231.0 * kInch_m * kInch_m * kInch_m;

struct UnitDef {
    std::string_view token;
    Quantity quantity;
    double scale;       // SI = value * scale + offset
    double offset = 0.0;
    int gauge = -1;     // pressure units that say gauge (1) or absolute (0)
};

constexpr std::array<UnitDef, 34> kUnits = {{
    {"Pa", Quantity::pressure, 1.0},
    {"hPa", Quantity::pressure, 100.0},
    {"kPa", Quantity::pressure, 1e3},
    {"MPa", Quantity::pressure, 1e6},
    {"bar", Quantity::pressure, 1e5},
    {"mbar", Quantity::pressure, 100.0},
    {"barg", Quantity::pressure, 1e5, 0.0, 1},
    {"bara", Quantity::pressure, 1e5, 0.0, 0},
    {"psi", Quantity::pressure, kPsi_pa},
    {"psig", Quantity::pressure, kPsi_pa, 0.0, 1},
    {"psia", Quantity::pressure, kPsi_pa, 0.0, 0},
    {"m", Quantity::length, 1.0},
    {"mm", Quantity::length, 1e-3},
    {"cm", Quantity::length, 1e-2},
    {"ft", Quantity::length, kFoot_m},
    {"in", Quantity::length, kInch_m},
    {"C", Quantity::temperature, 1.0, 273.15},
    {"degC", Quantity::temperature, 1.0, 273.15},
    {"F", Quantity::temperature, 5.0 / 9.0, 273.15 - 32.0 * 5.0 / 9.0},
    {"degF", Quantity::temperature, 5.0 / 9.0, 273.15 - 32.0 * 5.0 / 9.0},
    {"K", Quantity::temperature, 1.0},
    {"m3/h", Quantity::flow, 1.0 / 3600.0},
    {"m3/s", Quantity::flow, 1.0},
    {"L/s", Quantity::flow, 1e-3},
    {"L/min", Quantity::flow, 1e-3 / 60.0},
    {"gpm", Quantity::flow, kUsGallon_m3 / 60.0},
    {"kg/m3", Quantity::density, 1.0},
    {"g/cm3", Quantity::density, 1000.0},
    {"g/mL", Quantity::density, 1000.0},
    {"kg/L", Quantity::density, 1000.0},
    {"lb/ft3", Quantity::density, kPound_kg / (kFoot_m * kFoot_m * kFoot_m)},
    {"rpm", Quantity::speed, 1.0},
    {"r/min", Quantity::speed, 1.0},
    {"Hz", Quantity::speed, 60.0},
}};

const char* quantity_name(Quantity q) {
    switch (q) {
        case Quantity::pressure: return "pressure";
        case Quantity::length: return "length";
        case Quantity::temperature: return "temperature";
        case Quantity::flow: return "flow";
        case Quantity::density: return "density";
        case Quantity::speed: return "speed";
    }
    return "";
}

// Spellings of the same unit: superscripts, carets, degree signs, spaces.
std::string normalise(std::string u) {
    auto replace = [&u](std::string_view from, std::string_view to) {
        for (std::size_t p = u.find(from); p != std::string::npos; p = u.find(from, p + to.size()))
            u.replace(p, from.size(), to);
    };
    replace("\xC2\xB3", "3");      // ³
    replace("^3", "3");
    replace("\xC2\xB0", "deg");    // °
    replace(" ", "");
    replace("degc", "degC");
    replace("degf", "degF");
    return u;
}

bool iequals(std::string_view a, std::string_view b) {
    if (a.size() != b.size()) return false;
    for (std::size_t i = 0; i < a.size(); ++i)
        if (std::tolower(static_cast<unsigned char>(a[i])) != std::tolower(static_cast<unsigned char>(b[i]))) return false;
    return true;
}

const UnitDef* find_unit(const std::string& token, Quantity q) {
    for (const auto& u : kUnits)
        if (u.quantity == q && u.token == token) return &u;
    for (const auto& u : kUnits)
        if (u.quantity == q && iequals(u.token, token)) return &u;
    return nullptr;
}

struct Split {
    double value;
    std::string unit;
};

Split split(const std::string& text, Quantity q) {
    std::string t = text;
    while (!t.empty() && std::isspace(static_cast<unsigned char>(t.front()))) t.erase(t.begin());
    while (!t.empty() && std::isspace(static_cast<unsigned char>(t.back()))) t.pop_back();
    const std::string quoted = "'" + text + "'";
    if (t.empty()) throw std::invalid_argument("no value given: expected a " + std::string(quantity_name(q)) +
                                               " with its unit, e.g. " + accepted_units(q));
    const char* s = t.c_str();
    char* end = nullptr;
    const double v = std::strtod(s, &end);
    if (!is_decimal({s, static_cast<std::size_t>(end - s)}))
        throw std::invalid_argument(quoted + ": expected a decimal number followed by a unit (" + accepted_units(q) + ")");
    if (!std::isfinite(v)) throw std::invalid_argument(quoted + ": the number is not finite");
    const std::string unit = normalise(std::string(end));
    if (unit.empty())
        throw std::invalid_argument(quoted + ": no unit; write the " + quantity_name(q) + " with its unit (" +
                                    accepted_units(q) + ")");
    return {v, unit};
}

}  // namespace

const char* accepted_units(Quantity q) {
    switch (q) {
        case Quantity::pressure: return "Pa, hPa, kPa, MPa, bar, mbar, psi; psig/psia and barg/bara also say gauge or absolute";
        case Quantity::length: return "m, cm, mm, ft, in";
        case Quantity::temperature: return "C, F, K (also degC, degF)";
        case Quantity::flow: return "m3/h, m3/s, L/s, L/min, gpm (US gallons per minute)";
        case Quantity::density: return "kg/m3, g/cm3, g/mL, kg/L, lb/ft3";
        case Quantity::speed: return "rpm, r/min, Hz (revolutions per second)";
    }
    return "";
}

ParsedPressure parse_pressure(const std::string& text) {
    const Split s = split(text, Quantity::pressure);
    const UnitDef* u = find_unit(s.unit, Quantity::pressure);
    if (!u)
        throw std::invalid_argument("'" + text + "': unknown pressure unit '" + s.unit + "' (use " +
                                    accepted_units(Quantity::pressure) + ")");
    ParsedPressure p;
    p.pa = s.value * u->scale;
    if (u->gauge >= 0) p.gauge = u->gauge == 1;
    return p;
}

double parse_quantity(const std::string& text, Quantity q) {
    if (q == Quantity::pressure) return parse_pressure(text).pa;
    const Split s = split(text, q);
    const UnitDef* u = find_unit(s.unit, q);
    if (!u)
        throw std::invalid_argument("'" + text + "': unknown " + std::string(quantity_name(q)) + " unit '" + s.unit +
                                    "' (use " + accepted_units(q) + ")");
    const double si = s.value * u->scale + u->offset;
    if (q == Quantity::temperature && !(si >= 0.0))
        throw std::invalid_argument("'" + text + "': below absolute zero");
    return si;
}

}  // namespace cavitas::app
