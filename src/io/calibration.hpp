// From a file's values to engineering units: the unit a file states, a
// full-scale value for sound files, a sensor's sensitivity and an amplifier's
// gain. Everything ends as one multiplier (Calibration::full_scale) and one
// engineering unit, the unit the analysis and the baseline speak.
//
// Units of signal values: acceleration g or m/s2 (1 g = 9.80665 m/s2,
// standard gravity, ISO 80000-3), pressure Pa or kPa (hydrophones), voltage V
// or mV (a file of raw sensor volts), FS (a sound file's fraction of full
// scale). Other units are refused by name.
#pragma once

#include <optional>
#include <string>

#include "src/io/units.hpp"

namespace cavitas::app {

enum class SignalQuantity { none, fraction, voltage, acceleration, pressure };

/// A unit of a signal's values, its quantity and its factor to the SI unit
/// of that quantity (m/s2, Pa, V; 1 for FS and none).
struct SignalUnit {
    std::string name;  ///< canonical: g, m/s2, Pa, V, FS, or "raw" (none stated)
    SignalQuantity quantity = SignalQuantity::none;
    double si_per_unit = 1.0;
};

/// "m/s^2", "m/s**2", "m/s²", "G", "g", "kPa", "mV", "V", "FS", "", "NONE"
/// -> the unit; nullopt for text that is no unit cavitas knows. kPa and mV
/// keep their factor (1000 Pa, 0.001 V).
std::optional<SignalUnit> signal_unit(const std::string& text);

/// A sensor's sensitivity: volts per engineering unit.
struct Sensitivity {
    double volts_per_unit = 0.0;
    SignalUnit unit;           ///< g, m/s2 or Pa
    std::string text;          ///< as given, for the finding
};

/// "100mV/g", "10.2 mV/(m/s2)", "50 mV/Pa", "1e-4 V/Pa", "0.1 V/uPa",
/// "-200 dB re 1 V/uPa" (hydrophones: 10^(L/20) V per µPa). Throws
/// UsageError naming the text and the accepted forms.
Sensitivity parse_sensitivity(const std::string& text);

/// "10" (times) or "20dB" (10^(20/20) = 10 times) -> the factor. Throws UsageError.
double parse_gain(const std::string& text);

/// What a command line or a manifest row says about calibration, as typed.
struct CalibrationText {
    std::optional<std::string> full_scale;   ///< --full-scale: a sound file's full scale (50g, 10V)
    std::optional<std::string> sensitivity;  ///< --sensitivity
    std::optional<std::string> gain;         ///< --gain (needs --sensitivity)
    std::optional<std::string> unit;         ///< --unit: the unit of a file's values when it states none
    bool empty() const { return !full_scale && !sensitivity && !gain && !unit; }
};

/// How a baseline was calibrated: its engineering unit, the multiplier and
/// the unit of the values of the files it learned from ("FS" for sound
/// files), so that a file whose values come in the same unit is read alike.
struct StoredCalibration {
    Calibration calibration;
    std::string values_unit = "FS";
};

/// The calibration of a file whose values are in `stated_unit` (what its
/// reader found): from `text` when anything was given, else from `stored`
/// (a baseline's) when the file's values come in the unit the baseline's
/// did, else from the stated unit itself; converted to `stored`'s
/// engineering unit when both are of one quantity (g <-> m/s2). Throws
/// InputError naming `path` when the file and the flags or the baseline do
/// not fit together (a sensitivity for a file in g, a file in Pa against a
/// baseline in g, ...), UsageError for a malformed flag.
Calibration resolve_calibration(const CalibrationText& text, const std::string& stated_unit, const std::string& path,
                                const std::optional<StoredCalibration>& stored = std::nullopt);

}  // namespace cavitas::app
