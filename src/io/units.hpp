// Numbers with units at the edge: full-scale calibrations of recordings, and
// the operating-point quantities (pressure, length, temperature, flow,
// density, speed) typed on the command line, in sidecar files and in route
// manifests. Everything is converted to SI here; nothing past this file sees
// a psi or a degree Fahrenheit.
#pragma once

#include <optional>
#include <string>
#include <string_view>
#include <utility>

namespace cavitas::app {

/// "50g" -> {50, "g"}; "9.81m/s2" -> {9.81, "m/s2"}; "2000Pa" -> {2000, "Pa"}.
/// Without a calibration samples stay in full-scale units, {1, "FS"}.
struct Calibration {
    Calibration() = default;
    Calibration(double full_scale_value, std::string unit_name, std::string how = {})
        : full_scale(full_scale_value), unit(std::move(unit_name)), account(std::move(how)) {}
    /// Engineering units per unit of the file's values: per full-scale
    /// sample for a sound file, per stated unit (or volt) for other files.
    double full_scale = 1.0;
    std::string unit = "FS";
    /// How it was found, for the finding ("100 mV/g, gain 10, full scale 10 V").
    std::string account;
};

/// Parse "<number><unit>", unit one of g, m/s2 (also m/s^2, m/s²), Pa, kPa,
/// V, mV (a full scale in volts, to be divided by a sensitivity), FS.
/// Throws UsageError naming the text and what is accepted.
Calibration parse_full_scale(const std::string& text);

/// A number as a person types it: [+-]digits[.digits][(e|E)[+-]digits]. Not
/// hexadecimal, "inf" or "nan", which strtod and CLI11 would also read. Every
/// number cavitas reads from text, and every CSV cell it keeps a number, is
/// judged by this.
bool is_decimal(std::string_view text);

/// Kinds of quantity and the SI unit each is returned in.
enum class Quantity {
    pressure,     ///< Pa
    length,       ///< m
    temperature,  ///< K
    flow,         ///< m3/s
    density,      ///< kg/m3
    speed,        ///< rpm (the trade's unit of shaft speed)
};

/// The units accepted for a quantity, for help texts and errors.
const char* accepted_units(Quantity q);

/// "35kPa", "35 kPa", "-0.4 bar", "60C", "140 °F", "120m3/h", "6in" -> SI.
/// Units are matched exactly first, then ignoring case (kpa, PSI); a space
/// between number and unit is allowed. Throws std::invalid_argument whose
/// message quotes the text and says what is wrong: no number, no unit (a bare
/// number is refused: its unit would be a guess), an unknown unit (listing the
/// accepted ones), a value that is not finite, a temperature below absolute zero.
double parse_quantity(const std::string& text, Quantity q);

/// A pressure may say whether it is gauge or absolute: psig, psia, barg, bara.
struct ParsedPressure {
    double pa = 0.0;
    std::optional<bool> gauge;  ///< set when the unit said so
};
ParsedPressure parse_pressure(const std::string& text);

}  // namespace cavitas::app
