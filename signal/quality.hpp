// Streaming measurements of what makes a record untrustworthy: non-finite
// samples, samples at full scale and flat-topped runs at the record's extremes
// (clipping), stuck or zero stretches (dropouts), DC offset. The judgement of
// these numbers lives in models/quality.hpp; this block only measures.
//
// Memory is fixed: flat runs are summarised per magnitude in a small table of
// the largest magnitudes seen, so a clipping rail below the digital full scale
// (an analogue overload, or a float file with no full scale) is still found.
#pragma once

#include <array>
#include <cstddef>
#include <cstdint>
#include <span>

namespace cavitas::dsp {

struct QualityConfig {
    double full_scale = 1.0;           ///< |x| of a full-scale sample, signal units (0 = unknown, e.g. float files)
    double near_full_scale = 0.999;    ///< fraction of full scale counted as "at full scale"
    std::size_t clip_run_min = 3;      ///< equal samples in a row at an extreme that make a flat top
    std::size_t dropout_run_min = 64;  ///< equal samples in a row that make a dropout (set from the rate)
};

struct QualityCounts {
    std::size_t samples = 0;
    std::size_t non_finite = 0;        ///< NaN or Inf (replaced by 0 before analysis)
    std::size_t at_full_scale = 0;     ///< |x| >= near_full_scale * full_scale
    std::size_t longest_flat_run = 0;  ///< longest run of exactly repeated values
    std::size_t dropout_samples = 0;   ///< samples in runs of >= dropout_run_min equal values
    std::size_t zero_samples = 0;      ///< samples exactly 0
    double max_abs = 0.0;              ///< largest |x|
    double sum = 0.0;                  ///< for the mean (DC offset)
    double sum_sq = 0.0;
    /// Samples in flat runs (>= clip_run_min) whose |value| is within `fraction`
    /// of the largest |x| of the record: flat tops at the record's rails.
    std::size_t flat_top_samples(double fraction = 0.99) const;

    double mean() const { return samples ? sum / static_cast<double>(samples) : 0.0; }
    /// AC rms (about the mean).
    double ac_rms() const;

    struct RunBin {
        double magnitude = 0.0;
        std::size_t samples = 0;
    };
    static constexpr std::size_t kRunBins = 32;
    std::array<RunBin, kRunBins> flat_runs{};  ///< largest magnitudes first-come, smallest evicted
};

class QualityMeter {
public:
    explicit QualityMeter(const QualityConfig& config);
    /// Measure one block and replace its non-finite samples by 0 in place.
    void process(std::span<float> x);
    /// Counts so far (the open run at the end of the data is included).
    QualityCounts counts() const;

private:
    void close_run(QualityCounts& c, float value, std::size_t run) const;
    static constexpr std::size_t kLanes = 8;
    QualityConfig config_;
    std::uint32_t clip_bits_;  ///< bit pattern of the smallest float >= the clip level (non-negative floats order like their bits)
    QualityCounts counts_;     ///< everything but sum and sum_sq, which live in the lanes
    // Sample i of the record adds to lane i mod 8: the sums do not depend on how
    // the record was cut into blocks, and the loop is vectorisable.
    std::array<double, kLanes> lane_sum_{}, lane_sum_sq_{};
    float last_ = 0.0f;
    std::size_t run_ = 0;
};

}  // namespace cavitas::dsp
