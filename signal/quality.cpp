#include "signal/quality.hpp"

#include <algorithm>
#include <cmath>

namespace cavitas::dsp {

QualityMeter::QualityMeter(const QualityConfig& config) : config_(config) {}

void QualityMeter::process(std::span<float> x) {
    const double clip = config_.full_scale > 0.0 ? config_.near_full_scale * config_.full_scale : 0.0;
    for (float& v : x) {
        if (!std::isfinite(v)) {
            ++counts_.non_finite;
            v = 0.0f;
        }
        const double d = static_cast<double>(v);
        if (clip > 0.0 && std::abs(d) >= clip) ++counts_.at_full_scale;
        if (counts_.samples > 0 && v == last_) {
            ++run_;
        } else {
            run_ = 1;
        }
        counts_.longest_flat_run = std::max(counts_.longest_flat_run, run_);
        last_ = v;
        counts_.sum += d;
        counts_.sum_sq += d * d;
        ++counts_.samples;
    }
}

}  // namespace cavitas::dsp
