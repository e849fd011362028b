#include "models/indicators.hpp"

namespace cavitas::models {
namespace {

constexpr std::array<IndicatorInfo, kSegmentIndicatorCount> kSegment{{
    {"overall_rms", "signal", "overall rms"},
    {"overall_peak", "signal", "overall peak"},
    {"overall_crest", "ratio", "overall crest factor"},
    {"overall_kurtosis", "ratio", "overall kurtosis"},
    {"hf_band_level", "db", "HF band level"},
    {"hf_kurtosis", "ratio", "HF band kurtosis"},
    {"hf_crest", "ratio", "HF band crest factor"},
    {"lf_band_level", "db", "LF band level"},
    {"impulse_rate", "per_s", "HF impulse rate"},
    {"hf_spectral_kurtosis", "ratio", "HF spectral kurtosis"},
}};

constexpr std::array<IndicatorInfo, kRecordingIndicatorCount> kRecording{{
    {"envelope_1x_prominence", "db", "envelope line at 1x over floor"},
    {"envelope_bpf_prominence", "db", "envelope line at BPF over floor"},
    {"envelope_2bpf_prominence", "db", "envelope line at 2xBPF over floor"},
    {"modulation_1x", "ratio", "HF modulation depth at 1x"},
    {"modulation_bpf", "ratio", "HF modulation depth at BPF"},
    {"kurtogram_max", "ratio", "fast-kurtogram maximum"},
    {"ski_slope", "db", "low-frequency rise (0.5-4 Hz over 10-100 Hz)"},
}};

}  // namespace

const IndicatorInfo& info(SegmentIndicator i) { return kSegment[static_cast<std::size_t>(i)]; }
const IndicatorInfo& info(RecordingIndicator i) { return kRecording[static_cast<std::size_t>(i)]; }

}  // namespace cavitas::models
