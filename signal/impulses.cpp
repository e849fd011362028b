#include "signal/impulses.hpp"

#include <algorithm>
#include <cassert>
#include <cmath>
#include <stdexcept>
#include <string>

namespace cavitas::dsp {

ImpulseCounter::ImpulseCounter(const ImpulseConfig& config, double fs_hz, std::size_t max_segment_size)
    : config_(config), fs_hz_(fs_hz), median_(max_segment_size) {
    if (!(config.exceedance_probability > 0.0 && config.exceedance_probability < 0.5))
        throw std::invalid_argument("ImpulseConfig.exceedance_probability = " +
                                    std::to_string(config.exceedance_probability) + " must lie in (0, 0.5)");
    if (!(config.rearm_s >= 0.0))
        throw std::invalid_argument("ImpulseConfig.rearm_s = " + std::to_string(config.rearm_s) + " must be >= 0");
    if (!(fs_hz > 0.0)) throw std::invalid_argument("ImpulseCounter sample rate must be > 0 Hz");
    factor_ = std::sqrt(std::log(1.0 / config.exceedance_probability) / std::log(2.0));
    rearm_samples_ = static_cast<std::size_t>(std::lround(config.rearm_s * fs_hz));
}

std::size_t ImpulseCounter::count(std::span<const double> sq) {
    if (sq.empty()) return 0;
    const std::size_t n = sq.size();
    // Median of |z|^2 is the square of the median of |z| (monotone map).
    // Segments of one record have similar medians: the last one is the hint
    // (the median found is exact either way; see OrderSelector::select_near).
    const double median_sq = median_.select_near(sq, n / 2, last_median_sq_);
    last_median_sq_ = median_sq;
    const double median_mag = std::sqrt(std::max(0.0, median_sq));
    threshold_ = factor_ * median_mag;
    if (!(threshold_ > 0.0)) return 0;
    const double thr2 = threshold_ * threshold_;
    std::size_t events = 0, below = rearm_samples_;
    bool armed = true;
    // The rule, one sample at a time.
    const auto step = [&](double v) {
        if (v > thr2) {
            if (armed) {
                ++events;
                armed = false;
            }
            below = 0;
        } else if (!armed) {
            if (++below >= rearm_samples_) armed = true;
        }
    };
    // Most stretches of 16 samples stay under the threshold: then no event
    // starts, and a disarmed counter counts them towards re-arming (the value
    // of `below` while armed is never used: an event resets it).
    constexpr std::size_t kChunk = 16;
    std::size_t i = 0;
    for (; i + kChunk <= n; i += kChunk) {
        bool any = false;
        for (std::size_t j = 0; j < kChunk; ++j) any |= sq[i + j] > thr2;
        if (!any) {
            if (!armed) {
                below += kChunk;
                if (below >= rearm_samples_) armed = true;
            }
            continue;
        }
        for (std::size_t j = i; j < i + kChunk; ++j) step(sq[j]);
    }
    for (; i < n; ++i) step(sq[i]);
    return events;
}

}  // namespace cavitas::dsp
