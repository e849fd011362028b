#include "models/baseline.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>

#include <Eigen/Dense>

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

double repeatability_floor_db(const std::string& mount) {
    if (mount == "stud") return 0.5;
    if (mount == "adhesive") return 0.7;
    if (mount == "handheld") return 2.0;
    return 1.0;  // magnet, or not stated
}

namespace {

bool is_level(SegmentIndicator i) { return i == SegmentIndicator::hf_band_level || i == SegmentIndicator::lf_band_level; }

double log_ratio(double rpm, double rpm_ref) { return rpm > 0.0 && rpm_ref > 0.0 ? std::log10(rpm / rpm_ref) : 0.0; }

// Distinct speeds: sorted, a new one where it is more than 3 % above the last.
int distinct_speeds(std::vector<double> rpms) {
    std::sort(rpms.begin(), rpms.end());
    int n = 0;
    double last = 0.0;
    for (double r : rpms)
        if (n == 0 || r > 1.03 * last) {
            ++n;
            last = r;
        }
    return n;
}

// Least-squares slope of the visits' medians against log10(n / n_ref), with an
// intercept: the 2-column design matrix solved by a rank-revealing QR.
double fitted_slope(const std::vector<BaselineSource>& v, SegmentIndicator i, double rpm_ref) {
    Eigen::MatrixXd x(static_cast<Eigen::Index>(v.size()), 2);
    Eigen::VectorXd y(static_cast<Eigen::Index>(v.size()));
    for (std::size_t k = 0; k < v.size(); ++k) {
        const auto r = static_cast<Eigen::Index>(k);
        x(r, 0) = 1.0;
        x(r, 1) = log_ratio(v[k].rpm, rpm_ref);
        y(r) = median(v[k].series[i]);
    }
    return x.colPivHouseholderQr().solve(y)(1);
}

SpeedModel speed_model(const std::vector<BaselineSource>& v) {
    SpeedModel m;
    std::vector<double> rpms;
    for (const auto& s : v) rpms.push_back(s.rpm);
    if (rpms.empty() || *std::min_element(rpms.begin(), rpms.end()) <= 0.0) return m;  // a speed unknown: no scaling
    m.rpm_ref = median(rpms);
    m.rpm_low = *std::min_element(rpms.begin(), rpms.end());
    m.rpm_high = *std::max_element(rpms.begin(), rpms.end());
    m.speeds = distinct_speeds(rpms);
    m.fitted = m.speeds >= kFitSpeeds && m.rpm_high >= kFitSpeedSpan * m.rpm_low;
    if (m.fitted) {
        m.hf_slope_db_per_decade = fitted_slope(v, SegmentIndicator::hf_band_level, m.rpm_ref);
        m.lf_slope_db_per_decade = fitted_slope(v, SegmentIndicator::lf_band_level, m.rpm_ref);
    }
    return m;
}

}  // namespace

double SpeedModel::covered_low_rpm() const { return rpm_low / (fitted ? kCoverFitted : kCoverAssumed); }
double SpeedModel::covered_high_rpm() const { return rpm_high * (fitted ? kCoverFitted : kCoverAssumed); }

double SpeedModel::shift_db(SegmentIndicator i, double rpm) const {
    if (rpm_ref <= 0.0 || rpm <= 0.0) return 0.0;
    if (i == SegmentIndicator::hf_band_level) return hf_slope_db_per_decade * log_ratio(rpm, rpm_ref);
    if (i == SegmentIndicator::lf_band_level) return lf_slope_db_per_decade * log_ratio(rpm, rpm_ref);
    return 0.0;
}

std::vector<double> Baseline::visit_levels_at_ref(SegmentIndicator i) const {
    std::vector<double> at_ref;
    for (const auto& s : sources) {
        if (s.series[i].empty()) return {};
        at_ref.push_back(median(s.series[i]) - speed.shift_db(i, s.rpm));
    }
    return at_ref;
}

namespace {
double spread_between(const std::vector<double>& at_ref) { return at_ref.size() < 2 ? 0.0 : robust_stat(at_ref).sigma; }
}  // namespace

double Baseline::between_visit_sigma(SegmentIndicator i) const { return spread_between(visit_levels_at_ref(i)); }

RobustStat Baseline::expected(SegmentIndicator i, double rpm_now) const {
    RobustStat s = (*this)[i];
    if (!is_level(i)) {
        s.sigma = std::max(s.sigma, between_visit_sigma(i));
        return s;
    }
    // Pooled statistics are at the visits' mix of speeds; the model's level at
    // rpm_ref is the median of the visits' medians brought to rpm_ref.
    double at_ref = s.median;
    double within = s.sigma;
    const std::vector<double> levels = visit_levels_at_ref(i);
    if (!levels.empty() && speed.rpm_ref > 0.0) {
        std::vector<double> within_sigmas;
        for (const auto& v : sources) within_sigmas.push_back(robust_stat(v.series[i]).sigma);
        at_ref = median(levels);
        within = median(within_sigmas);
    }
    const double level = at_ref + speed.shift_db(i, rpm_now);
    const double offset = level - s.median;
    s.median = level;
    s.p10 += offset;
    s.p90 += offset;
    s.sigma = std::max({within, spread_between(levels), repeatability_floor_db(mount)});
    return s;
}

BaselineSource source_of(const RecordingAnalysis& a) {
    BaselineSource s;
    s.duration_s = a.duration_s;
    s.rpm = a.rpm;
    s.series = a.series;
    s.recording = a.recording;
    const std::size_t nb = a.spectrum.bands();
    for (std::size_t k = 0; k < nb; ++k) {
        std::vector<double> v;
        for (std::size_t g = 0; g < a.spectrum.segments(); ++g) v.push_back(a.spectrum.segment_db[g * nb + k]);
        s.spectrum_median_db.push_back(median(v));
    }
    return s;
}

Baseline learn_from_sources(std::vector<BaselineSource> sources, const AnalysisSetup& setup, int vanes) {
    if (sources.empty()) throw std::invalid_argument("a baseline needs at least one recording");
    Baseline b;
    b.setup = setup;
    b.vanes = vanes;
    std::vector<double> rpms;
    for (const auto& s : sources)
        if (s.rpm > 0.0) rpms.push_back(s.rpm);
    b.rpm = rpms.empty() ? 0.0 : median(rpms);
    for (std::size_t i = 0; i < kSegmentIndicatorCount; ++i) {
        std::vector<double> pooled;
        for (const auto& s : sources) pooled.insert(pooled.end(), s.series.values[i].begin(), s.series.values[i].end());
        b.segment[i] = robust_stat(pooled);
    }
    for (std::size_t i = 0; i < kRecordingIndicatorCount; ++i) {
        std::vector<double> per;
        for (const auto& s : sources) per.push_back(s.recording[i]);
        b.recording[i] = robust_stat(per);
    }
    for (const auto& s : sources) b.segments += s.series.segments();
    b.speed = speed_model(sources);
    b.sources = std::move(sources);
    return b;
}

Baseline learn_baseline(const std::vector<RecordingAnalysis>& analyses) {
    if (analyses.empty()) throw std::invalid_argument("a baseline needs at least one recording");
    const AnalysisSetup& s0 = analyses.front().setup;
    std::vector<BaselineSource> sources;
    bool estimated = false;
    for (const auto& a : analyses) {
        if (a.setup.fs_hz != s0.fs_hz)
            throw std::invalid_argument("baseline recordings differ in sample rate (" + std::to_string(a.setup.fs_hz) +
                                        " Hz vs " + std::to_string(s0.fs_hz) + " Hz)");
        sources.push_back(source_of(a));
        estimated = estimated || a.rpm_estimated;
    }
    Baseline b = learn_from_sources(std::move(sources), s0, analyses.front().vanes);
    b.rpm_estimated = estimated;
    // Spectrum profile statistics over every segment, when every recording has the same bands.
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
