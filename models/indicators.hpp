// The indicators cavitas computes, their names and units.
//
// Segment indicators are computed on every analysis segment (1 s by default),
// so one recording gives a distribution; recording indicators come from the
// averaged squared-envelope spectrum and the mean kurtogram of the whole record.
#pragma once

#include <array>
#include <cstddef>
#include <string>
#include <string_view>
#include <vector>

namespace cavitas::models {

/// Each indicator has one name: its enumerator here, the same name in the
/// table of indicators.cpp (info()), and that name with its unit suffix as
/// the JSON key (hf_band_level -> hf_band_level_db).
enum class SegmentIndicator : std::size_t {
    overall_rms,          ///< AC rms of the raw signal, signal units
    overall_peak,         ///< max |x - mean|, signal units
    overall_crest,        ///< peak / rms
    overall_kurtosis,     ///< m4 / m2^2 of the raw signal
    hf_band_level,        ///< HF band power, dB re 1 (signal unit)^2
    hf_kurtosis,          ///< kurtosis of the HF band-passed signal
    hf_crest,             ///< crest factor of the HF band-passed signal
    lf_band_level,        ///< LF band power (below the HF band), dB re 1 (signal unit)^2
    impulse_rate,         ///< bursts per second above the adaptive threshold in the HF envelope
    hf_spectral_kurtosis, ///< mean spectral kurtosis over the HF band bins
    count
};
constexpr std::size_t kSegmentIndicatorCount = static_cast<std::size_t>(SegmentIndicator::count);

enum class RecordingIndicator : std::size_t {
    envelope_1x_prominence,   ///< squared-envelope line at 1x over its local floor
    envelope_bpf_prominence,  ///< ... at BPF
    envelope_2bpf_prominence, ///< ... at 2 x BPF
    modulation_1x,            ///< SES line at 1x / mean squared envelope (gain free)
    modulation_bpf,           ///< SES line at BPF / mean squared envelope
    kurtogram_max,            ///< largest mean kurtogram value (band above the blade-pass harmonics)
    ski_slope,                ///< PSD level at 0.5-4 Hz over the median level at 10-100 Hz (sensor settling, cable faults)
    count
};
constexpr std::size_t kRecordingIndicatorCount = static_cast<std::size_t>(RecordingIndicator::count);

/// How an indicator's unit is written: "signal" means the recording's own unit
/// (g, m/s2, Pa or FS), filled in at output time.
///
/// One kurtosis convention wherever a person reads a value: Gaussian = 3 (the
/// plain fourth standardised moment). Spectral kurtosis and the kurtogram are
/// excess kurtosis by their definition (Gaussian = 0, Antoni 2006); they are
/// shown with `shown_offset` 3 added and the convention said in the label.
/// JSON values stay as computed, under their keys.
struct IndicatorInfo {
    std::string_view name;
    std::string_view unit;        ///< suffix used in JSON keys ("db", "per_s", "ratio", or "signal")
    std::string_view label;       ///< plain words for a person, with the convention where it matters
    std::string_view shown_unit;  ///< the unit a person reads after a value ("dB", "/s", "" or "signal")
    double shown_offset = 0.0;    ///< added to a value shown to a person (3: excess kurtosis to Gaussian = 3)
};

const IndicatorInfo& info(SegmentIndicator i);
const IndicatorInfo& info(RecordingIndicator i);

/// An indicator's JSON key: its name and unit suffix, the recording's unit key
/// (unit_key: "g", "m_s2", "pa", "fs") for "signal" ones: hf_band_level_db, overall_rms_g.
std::string json_key(const IndicatorInfo& i, std::string_view signal_unit_key);

/// The indicator whose JSON key this is (name + "_" + unit suffix; the recording's
/// unit for "signal" ones), or nullptr.
const IndicatorInfo* indicator_of_key(std::string_view key);

/// The words for a person of a JSON key, with its unit: "HF band level, dB",
/// "HF band kurtosis (Gaussian = 3)", "overall RMS, g"; the key itself when unknown.
std::string indicator_heading(std::string_view key);

/// A value as a person reads it: the offset to the one kurtosis convention
/// applied, `digits` significant digits, the unit after it ("-18.1 dB",
/// "0.287 g", "3.14"). A change (`is_change`) takes no offset and a sign.
std::string shown_value(const IndicatorInfo& i, double value, std::string_view signal_unit, bool is_change = false);

/// Per-segment values of every segment indicator.
struct SegmentSeries {
    std::array<std::vector<double>, kSegmentIndicatorCount> values;
    std::size_t segments() const { return values[0].size(); }
    const std::vector<double>& operator[](SegmentIndicator i) const { return values[static_cast<std::size_t>(i)]; }
    std::vector<double>& operator[](SegmentIndicator i) { return values[static_cast<std::size_t>(i)]; }
};

}  // namespace cavitas::models
