// Streaming counts of what makes a record untrustworthy: non-finite samples,
// samples at or near full scale, flat (stuck) runs, DC offset.
#pragma once

#include <cstddef>
#include <span>

namespace cavitas::dsp {

struct QualityConfig {
    double full_scale = 1.0;          ///< |x| of a full-scale sample, in the signal's units (0 = unknown)
    double near_full_scale = 0.999;   ///< fraction of full scale counted as "at full scale"
};

struct QualityCounts {
    std::size_t samples = 0;
    std::size_t non_finite = 0;        ///< NaN or Inf (replaced by 0 before analysis)
    std::size_t at_full_scale = 0;     ///< |x| >= near_full_scale * full_scale
    std::size_t longest_flat_run = 0;  ///< longest run of exactly repeated values
    double sum = 0.0;                  ///< for the mean (DC offset)
    double sum_sq = 0.0;
    double mean() const { return samples ? sum / static_cast<double>(samples) : 0.0; }
};

class QualityMeter {
public:
    explicit QualityMeter(const QualityConfig& config);
    /// Count one block and replace its non-finite samples by 0 in place.
    void process(std::span<float> x);
    const QualityCounts& counts() const { return counts_; }

private:
    QualityConfig config_;
    QualityCounts counts_;
    float last_ = 0.0f;
    std::size_t run_ = 0;
};

}  // namespace cavitas::dsp
