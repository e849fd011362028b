#include "models/baseline.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>

namespace cavitas::models {

RobustStat robust_stat(const std::vector<double>& values) {
    RobustStat s;
    s.count = values.size();
    if (values.empty()) return s;
    s.median = median(values);
    std::vector<double> dev(values.size());
    for (std::size_t i = 0; i < values.size(); ++i) dev[i] = std::abs(values[i] - s.median);
    s.sigma = 1.4826 * median(dev);
    s.p10 = quantile(values, 0.10);
    s.p90 = quantile(values, 0.90);
    return s;
}

Baseline learn_baseline(const std::vector<RecordingAnalysis>& analyses) {
    if (analyses.empty()) throw std::invalid_argument("a baseline needs at least one recording");
    const AnalysisSetup& s0 = analyses.front().setup;
    for (const auto& a : analyses) {
        if (a.setup.fs_hz != s0.fs_hz)
            throw std::invalid_argument("baseline recordings differ in sample rate (" + std::to_string(a.setup.fs_hz) +
                                        " Hz vs " + std::to_string(s0.fs_hz) + " Hz)");
    }
    Baseline b;
    b.setup = s0;
    b.vanes = analyses.front().vanes;
    std::vector<double> rpms;
    for (const auto& a : analyses) {
        if (a.rpm > 0.0) rpms.push_back(a.rpm);
        if (a.rpm_estimated) b.rpm_estimated = true;
    }
    b.rpm = rpms.empty() ? 0.0 : median(rpms);
    for (std::size_t i = 0; i < kSegmentIndicatorCount; ++i) {
        std::vector<double> pooled;
        for (const auto& a : analyses) pooled.insert(pooled.end(), a.series.values[i].begin(), a.series.values[i].end());
        b.segment[i] = robust_stat(pooled);
    }
    for (std::size_t i = 0; i < kRecordingIndicatorCount; ++i) {
        std::vector<double> per;
        for (const auto& a : analyses) per.push_back(a.recording[i]);
        b.recording[i] = robust_stat(per);
    }
    for (const auto& a : analyses) b.segments += a.series.segments();
    // Spectrum profile statistics, when every recording has the same bands.
    const auto& c0 = analyses.front().spectrum.center_hz;
    bool same = !c0.empty();
    for (const auto& a : analyses) same = same && a.spectrum.center_hz == c0;
    if (same) {
        const std::size_t nb = c0.size();
        b.spectrum.center_hz = c0;
        for (std::size_t k = 0; k < nb; ++k) {
            std::vector<double> v;
            for (const auto& a : analyses)
                for (std::size_t s = 0; s < a.spectrum.segments(); ++s) v.push_back(a.spectrum.segment_db[s * nb + k]);
            b.spectrum.median_db.push_back(median(v));
            b.spectrum.p10_db.push_back(quantile(v, 0.10));
            b.spectrum.p90_db.push_back(quantile(v, 0.90));
        }
    }
    return b;
}

}  // namespace cavitas::models
