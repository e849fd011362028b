// A machine's known-good reference: robust statistics of every indicator,
// learned from one or more recordings of the same machine and measurement point,
// with the context needed to judge whether a later recording is comparable.
#pragma once

#include <array>
#include <cstddef>
#include <string>
#include <vector>

#include "models/analyzer.hpp"
#include "models/indicators.hpp"
#include "models/operating_point.hpp"

namespace cavitas::models {

/// Median and spread. sigma = 1.4826 x MAD, the consistent estimate of a
/// Gaussian standard deviation that ignores outliers (Rousseeuw & Croux, JASA
/// 88 (1993) 1273-1283; the 1.4826 factor = 1/Phi^-1(3/4)).
struct RobustStat {
    double median = 0.0;
    double sigma = 0.0;
    double p10 = 0.0;
    double p90 = 0.0;
    std::size_t count = 0;
};
RobustStat robust_stat(const std::vector<double>& values);

struct BaselineSource {
    std::string file;    ///< as given on the command line
    std::string sha256;  ///< of the file's bytes
    double duration_s = 0.0;
    double rpm = 0.0;
};

/// The baseline's spectrum profile: per band, the median and 10th/90th
/// percentiles over all its segments (dB re 1 (signal unit)^2/Hz). Empty in
/// baselines from before reports existed.
struct SpectrumStats {
    std::vector<double> center_hz, median_db, p10_db, p90_db;
    bool empty() const { return center_hz.empty(); }
};

struct Baseline {
    static constexpr const char* kSchema = "cavitas.baseline/2";
    std::string schema = kSchema;
    std::string cavitas_version;
    std::string created_utc;
    AnalysisSetup setup;
    std::string machine;  ///< machine and point tag given by the user (empty = not stated)
    int channel = 0;
    double rpm = 0.0;     ///< median speed of the recordings (0 = unknown)
    bool rpm_estimated = false;
    int vanes = 0;
    std::string unit = "FS";
    double full_scale = 1.0;
    std::vector<BaselineSource> sources;
    OperatingPointSummary operating_point;  ///< the duty it was learned at, as stated (may be empty)
    SpectrumStats spectrum;
    std::array<RobustStat, kSegmentIndicatorCount> segment{};      ///< pooled over all segments
    std::array<RobustStat, kRecordingIndicatorCount> recording{};  ///< over recordings
    std::size_t segments = 0;

    const RobustStat& operator[](SegmentIndicator i) const { return segment[static_cast<std::size_t>(i)]; }
    const RobustStat& operator[](RecordingIndicator i) const { return recording[static_cast<std::size_t>(i)]; }
};

/// Learn from analyses of known-good recordings (all with the same setup).
/// Throws std::invalid_argument when the list is empty or the setups differ.
Baseline learn_baseline(const std::vector<RecordingAnalysis>& analyses);

}  // namespace cavitas::models
