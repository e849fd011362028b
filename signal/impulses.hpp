// Impulse rate in a band envelope: how many bursts per second rise above an
// adaptive threshold.
//
// The threshold adapts to the segment: for band-limited Gaussian noise the
// envelope |z| is Rayleigh distributed with median sigma * sqrt(2 ln 2), and
// P(|z| > u) = exp(-u^2 / (2 sigma^2)). Choosing the exceedance probability p
// gives u = median * sqrt(ln(1/p) / ln 2); p = 1e-6 puts u at 4.46 x the median,
// so background noise alone rarely counts (property of the Rayleigh law,
// computed from its definition). An event is counted on an upward crossing and
// the counter re-arms only after the envelope has stayed below the threshold
// for `rearm_s`, so the ringing of one impact through a resonance counts once.
#pragma once

#include <cstddef>
#include <span>
#include <vector>

#include "signal/stats.hpp"

namespace cavitas::dsp {

struct ImpulseConfig {
    double exceedance_probability = 1e-6;  ///< Rayleigh tail probability that sets the threshold
    double rearm_s = 0.5e-3;               ///< time below threshold before a new event can count
};

class ImpulseCounter {
public:
    ImpulseCounter(const ImpulseConfig& config, double fs_hz, std::size_t max_segment_size);
    /// Count events in one segment of squared envelope values (|z|^2). Returns the count.
    std::size_t count(std::span<const double> squared_envelope);
    /// Threshold used in the last call, as an envelope magnitude.
    double last_threshold() const { return threshold_; }
    /// Threshold factor over the envelope median.
    double factor() const { return factor_; }

private:
    ImpulseConfig config_;
    double fs_hz_;
    double factor_;
    std::size_t rearm_samples_;
    OrderSelector median_;
    double last_median_sq_ = 0.0;  // the previous segment's median |z|^2: a hint for the next
    double threshold_ = 0.0;
};

}  // namespace cavitas::dsp
