#include "src/io/calibration.hpp"

#include <cmath>
#include <cstdio>
#include <cstdlib>

#include "src/io/errors.hpp"

namespace cavitas::app {
namespace {

constexpr double kStandardGravity_m_s2 = 9.80665;  // ISO 80000-3, CGPM 1901

std::string trimmed(std::string s) {
    while (!s.empty() && (s.front() == ' ' || s.front() == '\t')) s.erase(s.begin());
    while (!s.empty() && (s.back() == ' ' || s.back() == '\t' || s.back() == '\r')) s.pop_back();
    return s;
}

std::string without_spaces(const std::string& s) {
    std::string out;
    for (char c : s)
        if (c != ' ' && c != '\t') out += c;
    return out;
}

std::string number_text(double v) {
    char b[40];
    std::snprintf(b, sizeof b, "%.6g", v);
    return b;
}

// The leading decimal number of `text` and the rest, or nullopt.
std::optional<std::pair<double, std::string>> split_number(const std::string& text) {
    const char* s = text.c_str();
    char* end = nullptr;
    const double v = std::strtod(s, &end);
    if (end == s || !is_decimal({s, static_cast<std::size_t>(end - s)}) || !std::isfinite(v)) return std::nullopt;
    return std::make_pair(v, trimmed(end));
}

const char* quantity_name(SignalQuantity q) {
    switch (q) {
        case SignalQuantity::none: return "no stated unit";
        case SignalQuantity::fraction: return "fractions of full scale";
        case SignalQuantity::voltage: return "volts";
        case SignalQuantity::acceleration: return "acceleration";
        case SignalQuantity::pressure: return "pressure";
    }
    return "?";
}

}  // namespace

std::optional<SignalUnit> signal_unit(const std::string& text) {
    const std::string u = without_spaces(text);
    if (u.empty() || u == "NONE" || u == "none" || u == "-" || u == "raw") return SignalUnit{"raw", SignalQuantity::none, 1.0};
    if (u == "g" || u == "G" || u == "g's" || u == "gn") return SignalUnit{"g", SignalQuantity::acceleration, kStandardGravity_m_s2};
    if (u == "m/s2" || u == "m/s^2" || u == "m/s**2" || u == "m/s\xC2\xB2" || u == "m/(s^2)" || u == "ms-2" || u == "m/s/s")
        return SignalUnit{"m/s2", SignalQuantity::acceleration, 1.0};
    if (u == "Pa" || u == "pa") return SignalUnit{"Pa", SignalQuantity::pressure, 1.0};
    if (u == "kPa" || u == "kpa") return SignalUnit{"Pa", SignalQuantity::pressure, 1e3};
    if (u == "V" || u == "v" || u == "Volt" || u == "volt" || u == "volts") return SignalUnit{"V", SignalQuantity::voltage, 1.0};
    if (u == "mV" || u == "mv") return SignalUnit{"V", SignalQuantity::voltage, 1e-3};
    if (u == "FS" || u == "fs") return SignalUnit{"FS", SignalQuantity::fraction, 1.0};
    return std::nullopt;
}

Sensitivity parse_sensitivity(const std::string& given) {
    const std::string text = trimmed(given);
    auto bad = [&](const std::string& why) {
        return UsageError("--sensitivity '" + given + "': " + why +
                          "; write e.g. 100mV/g, 10.2mV/(m/s2), 50mV/Pa, 1e-4V/Pa or -200dB re 1V/uPa");
    };
    const auto num = split_number(text);
    if (!num) throw bad("no number");
    Sensitivity s;
    s.text = text;
    std::string rest = without_spaces(num->second);
    double volts = num->first;
    if (rest.starts_with("dB") || rest.starts_with("db")) {
        // A level re 1 V per unit: 20·log10(S / (1 V/unit)) dB (common practice for hydrophones, no source).
        rest = rest.substr(2);
        if (rest.starts_with("re")) rest = rest.substr(2);
        if (rest.starts_with("1")) rest = rest.substr(1);
        volts = std::pow(10.0, num->first / 20.0);
    } else if (!(num->first > 0.0)) {
        throw bad("a sensitivity is a positive number");
    }
    double per = 1.0;
    if (rest.starts_with("mV/")) {
        volts *= 1e-3;
        rest = rest.substr(3);
    } else if (rest.starts_with("V/")) {
        rest = rest.substr(2);
    } else {
        throw bad("no 'mV/' or 'V/'");
    }
    if (rest.size() > 2 && rest.front() == '(' && rest.back() == ')') rest = rest.substr(1, rest.size() - 2);
    if (rest == "uPa" || rest == "\xC2\xB5Pa" || rest == "\xCE\xBCPa") {
        per = 1e-6;  // per µPa: one Pa is 10^6 µPa
        rest = "Pa";
    }
    const auto unit = signal_unit(rest);
    if (!unit || (unit->quantity != SignalQuantity::acceleration && unit->quantity != SignalQuantity::pressure))
        throw bad("'" + rest + "' is not g, m/s2, Pa or uPa");
    s.unit = *unit;
    // Volts per canonical unit (g, m/s2 or Pa).
    s.volts_per_unit = volts / per * (unit->si_per_unit / (unit->name == "g" ? kStandardGravity_m_s2 : 1.0));
    if (!(s.volts_per_unit >= 1e-15 && s.volts_per_unit <= 1e6)) throw bad("outside 1e-15 .. 1e6 V per unit");
    return s;
}

double parse_gain(const std::string& given) {
    const std::string text = trimmed(given);
    const auto num = split_number(text);
    const std::string rest = num ? without_spaces(num->second) : "";
    double g = 0.0;
    if (num && rest.empty()) g = num->first;
    else if (num && (rest == "dB" || rest == "db")) g = std::pow(10.0, num->first / 20.0);
    else throw UsageError("--gain '" + given + "': write a factor (10) or a level in dB (20dB)");
    if (!(g >= 1e-6 && g <= 1e9)) throw UsageError("--gain '" + given + "': outside 1e-6 .. 1e9 times");
    return g;
}

namespace {

// A calibration from flags, for values in `values` (the file's unit).
Calibration from_flags(const CalibrationText& t, const SignalUnit& values, const std::string& path) {
    SignalUnit in = values;
    Calibration c;
    c.full_scale = values.si_per_unit;  // kPa -> Pa, mV -> V
    c.unit = values.name;
    std::string account;
    if (t.unit) {
        if (values.quantity != SignalQuantity::none)
            throw InputError(path + ": the file states its values in " + values.name + "; --unit is for a file that states none");
        const auto u = signal_unit(*t.unit);
        if (!u || u->quantity == SignalQuantity::none || u->quantity == SignalQuantity::fraction)
            throw UsageError("--unit '" + *t.unit + "': use g, m/s2, Pa, kPa, V or mV");
        in = *u;
        c.full_scale = u->si_per_unit;
        c.unit = u->name;
        account = "values in " + *t.unit;
    }
    if (t.full_scale) {
        if (in.quantity != SignalQuantity::fraction)
            throw InputError(path + ": the file states its values in " + in.name +
                             ", not as fractions of full scale; --full-scale is for sound files (WAV, FLAC)");
        const Calibration fs = parse_full_scale(*t.full_scale);
        c = fs;
        in = *signal_unit(fs.unit);
        account = "full scale " + *t.full_scale;
    }
    if (t.gain && !t.sensitivity) throw UsageError("--gain '" + *t.gain + "' needs --sensitivity");
    if (t.sensitivity) {
        const Sensitivity s = parse_sensitivity(*t.sensitivity);
        if (in.quantity == SignalQuantity::fraction)
            throw InputError(path + ": a sound file's samples are fractions of full scale; give --full-scale in volts "
                                    "(the voltage of a full-scale sample, e.g. 10V) with --sensitivity");
        if (in.quantity != SignalQuantity::voltage && in.quantity != SignalQuantity::none)
            throw InputError(path + ": the file states its values in " + in.name +
                             "; --sensitivity converts volts, and these are not volts");
        const double gain = t.gain ? parse_gain(*t.gain) : 1.0;
        // volts at the recorder = gain x sensitivity x quantity
        c.full_scale = c.full_scale / (gain * s.volts_per_unit);
        c.unit = s.unit.name;
        account += std::string(account.empty() ? "" : ", ") + "sensitivity " + s.text +
                   (t.gain ? ", gain " + number_text(gain) : std::string());
    }
    if (!(c.full_scale >= 1e-12 && c.full_scale <= 1e12))
        throw UsageError(path + ": the calibration gives " + number_text(c.full_scale) + " " + c.unit +
                         " per unit of the file's values, outside 1e-12 .. 1e12");
    c.account = account;
    return c;
}

// `c` re-expressed in `target` when both are of one quantity.
void convert_to(Calibration& c, const std::string& target, const std::string& path) {
    if (c.unit == target) return;
    const auto from = signal_unit(c.unit);
    const auto to = signal_unit(target);
    if (!from || !to || from->quantity != to->quantity || from->quantity == SignalQuantity::none ||
        from->quantity == SignalQuantity::fraction)
        throw InputError(path + ": its values come out in " + c.unit +
                         " but the baseline speaks " + target + " (" + quantity_name(to ? to->quantity : SignalQuantity::none) +
                         "); give the calibration that makes them " + target);
    c.full_scale *= from->si_per_unit / to->si_per_unit;
    c.account += std::string(c.account.empty() ? "" : ", ") + "converted from " + c.unit + " to " + target;
    c.unit = target;
}

}  // namespace

Calibration resolve_calibration(const CalibrationText& text, const std::string& stated_unit, const std::string& path,
                                const std::optional<StoredCalibration>& stored) {
    const auto values = signal_unit(stated_unit);
    if (!values)
        throw InputError(path + ": the file states its values in '" + stated_unit +
                         "', a unit cavitas does not read (g, m/s2, Pa, kPa, V, mV)");
    Calibration c;
    if (!text.empty()) {
        c = from_flags(text, *values, path);
    } else if (const auto learned = stored ? signal_unit(stored->values_unit) : std::nullopt;
               learned && learned->name == values->name) {
        c = stored->calibration;
        c.full_scale *= values->si_per_unit / learned->si_per_unit;
        c.account = c.account.empty() ? "the baseline's calibration" : c.account + " (the baseline's)";
        return c;
    } else {
        c = from_flags({}, *values, path);
        if (stored && values->quantity == SignalQuantity::voltage && stored->calibration.unit != "V")
            throw InputError(path + ": the file's values are volts and the baseline speaks " + stored->calibration.unit +
                             "; give --sensitivity (and --gain) for this sensor");
    }
    if (stored && stored->calibration.unit != "FS" && stored->calibration.unit != "raw")
        convert_to(c, stored->calibration.unit, path);
    return c;
}

}  // namespace cavitas::app
