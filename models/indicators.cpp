#include "models/indicators.hpp"

#include "models/text.hpp"

namespace cavitas::models {
namespace {

constexpr std::array<IndicatorInfo, kSegmentIndicatorCount> kSegment{{
    {"overall_rms", "signal", "overall RMS", "signal", 0.0},
    {"overall_peak", "signal", "overall peak", "signal", 0.0},
    {"overall_crest", "ratio", "overall crest factor (peak / RMS)", "", 0.0},
    {"overall_kurtosis", "ratio", "overall kurtosis (Gaussian = 3)", "", 0.0},
    {"hf_band_level", "db", "HF band level", "dB", 0.0},
    {"hf_kurtosis", "ratio", "HF band kurtosis (Gaussian = 3)", "", 0.0},
    {"hf_crest", "ratio", "HF band crest factor (peak / RMS)", "", 0.0},
    {"lf_band_level", "db", "LF band level", "dB", 0.0},
    {"impulse_rate", "per_s", "HF impulse rate", "/s", 0.0},
    {"hf_spectral_kurtosis", "ratio", "HF spectral kurtosis (Gaussian = 3)", "", 3.0},
}};

constexpr std::array<IndicatorInfo, kRecordingIndicatorCount> kRecording{{
    {"envelope_1x_prominence", "db", "envelope line at 1x over its floor", "dB", 0.0},
    {"envelope_bpf_prominence", "db", "envelope line at BPF over its floor", "dB", 0.0},
    {"envelope_2bpf_prominence", "db", "envelope line at 2xBPF over its floor", "dB", 0.0},
    {"modulation_1x", "ratio", "HF modulation depth at 1x (share of the mean squared envelope)", "", 0.0},
    {"modulation_bpf", "ratio", "HF modulation depth at BPF (share of the mean squared envelope)", "", 0.0},
    {"kurtogram_max", "ratio", "fast-kurtogram maximum (kurtosis, Gaussian = 3)", "", 3.0},
    {"ski_slope", "db", "low-frequency rise (0.5-4 Hz over 10-100 Hz)", "dB", 0.0},
}};

}  // namespace

const IndicatorInfo& info(SegmentIndicator i) { return kSegment[static_cast<std::size_t>(i)]; }
const IndicatorInfo& info(RecordingIndicator i) { return kRecording[static_cast<std::size_t>(i)]; }

std::string json_key(const IndicatorInfo& i, std::string_view signal_unit_key) {
    return std::string(i.name) + "_" + std::string(i.unit == "signal" ? signal_unit_key : i.unit);
}

const IndicatorInfo* indicator_of_key(std::string_view key) {
    auto matches = [key](const IndicatorInfo& i) {
        if (key.size() <= i.name.size() + 1 || key.substr(0, i.name.size()) != i.name || key[i.name.size()] != '_')
            return false;
        const std::string_view suffix = key.substr(i.name.size() + 1);
        return i.unit == "signal" ? suffix.find('_') == std::string_view::npos || suffix == "m_s2" : suffix == i.unit;
    };
    for (const auto& i : kSegment)
        if (matches(i)) return &i;
    for (const auto& i : kRecording)
        if (matches(i)) return &i;
    return nullptr;
}

std::string indicator_heading(std::string_view key) {
    const IndicatorInfo* i = indicator_of_key(key);
    if (!i) return std::string(key);
    std::string unit(i->shown_unit);
    if (unit == "signal") {
        unit = std::string(key.substr(i->name.size() + 1));
        if (unit == "m_s2") unit = "m/s2";
    }
    return std::string(i->label) + (unit.empty() ? "" : ", " + unit);
}

std::string shown_value(const IndicatorInfo& i, double value, std::string_view signal_unit, bool is_change) {
    const double v = is_change ? value : value + i.shown_offset;
    std::string s = fmt(is_change ? "%+.3g" : "%.3g", v);
    const std::string_view unit = i.shown_unit == "signal" ? signal_unit : i.shown_unit;
    if (unit.empty()) return s;
    return s + (unit == "/s" ? "" : " ") + std::string(unit);
}

}  // namespace cavitas::models
