#include "signal/quality.hpp"

#include <algorithm>
#include <cmath>

namespace cavitas::dsp {

double QualityCounts::ac_rms() const {
    if (samples == 0) return 0.0;
    const double m = mean();
    return std::sqrt(std::max(0.0, sum_sq / static_cast<double>(samples) - m * m));
}

std::size_t QualityCounts::flat_top_samples(double fraction) const {
    if (!(max_abs > 0.0)) return 0;
    std::size_t n = 0;
    for (const auto& b : flat_runs)
        if (b.samples > 0 && b.magnitude >= fraction * max_abs) n += b.samples;
    return n;
}

QualityMeter::QualityMeter(const QualityConfig& config) : config_(config) {
    config_.clip_run_min = std::max<std::size_t>(config_.clip_run_min, 2);
    config_.dropout_run_min = std::max<std::size_t>(config_.dropout_run_min, 2);
}

void QualityMeter::close_run(QualityCounts& c) const {
    if (run_ >= config_.dropout_run_min) c.dropout_samples += run_;
    if (run_ >= config_.clip_run_min && last_ != 0.0f) {
        const double mag = std::abs(static_cast<double>(last_));
        // Add to the bin of this magnitude, or take the smallest bin if it is smaller.
        auto& bins = c.flat_runs;
        auto it = std::find_if(bins.begin(), bins.end(), [&](const QualityCounts::RunBin& b) {
            return b.samples > 0 && b.magnitude == mag;
        });
        if (it == bins.end()) {
            it = std::min_element(bins.begin(), bins.end(), [](const auto& a, const auto& b) {
                return (a.samples == 0 ? -1.0 : a.magnitude) < (b.samples == 0 ? -1.0 : b.magnitude);
            });
            if (it->samples > 0 && it->magnitude >= mag) return;
            *it = {mag, 0};
        }
        it->samples += run_;
    }
}

void QualityMeter::process(std::span<float> x) {
    const double clip = config_.full_scale > 0.0 ? config_.near_full_scale * config_.full_scale : 0.0;
    QualityCounts& c = counts_;
    for (float& v : x) {
        if (!std::isfinite(v)) {
            ++c.non_finite;
            v = 0.0f;
        }
        const double d = static_cast<double>(v);
        const double a = std::abs(d);
        if (clip > 0.0 && a >= clip) ++c.at_full_scale;
        if (v == 0.0f) ++c.zero_samples;
        c.max_abs = std::max(c.max_abs, a);
        if (c.samples > 0 && v == last_) {
            ++run_;
        } else {
            if (c.samples > 0) close_run(c);
            run_ = 1;
        }
        c.longest_flat_run = std::max(c.longest_flat_run, run_);
        last_ = v;
        c.sum += d;
        c.sum_sq += d * d;
        ++c.samples;
    }
}

QualityCounts QualityMeter::counts() const {
    QualityCounts c = counts_;
    if (c.samples > 0) close_run(c);
    return c;
}

}  // namespace cavitas::dsp
