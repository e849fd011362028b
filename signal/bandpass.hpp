// A zero-phase Butterworth band-pass for short excerpts: a high-pass and a
// low-pass of order 4 each (two biquads apiece, bilinear transform with the
// edges pre-warped), run forward and then backward so that an impact stays
// where it was in time. Meant for a few thousand samples that a person will
// look at, not for whole segments: the analysis's own band statistics come
// from the envelope analyzer.
#pragma once

#include <array>
#include <cstddef>
#include <span>

namespace cavitas::dsp {

struct BandPassConfig {
    double low_hz = 0.0;   ///< lower -3 dB edge of one pass (-6 dB forward and backward)
    double high_hz = 0.0;  ///< upper -3 dB edge of one pass; at most 0.49 fs
};

class ZeroPhaseBandPass {
public:
    /// Designs the sections (the plan). Throws std::invalid_argument unless
    /// 0 < low_hz < high_hz < 0.49 fs_hz.
    ZeroPhaseBandPass(const BandPassConfig& config, double fs_hz);
    /// out = the band-passed x, forward then backward (out.size() == x.size();
    /// x and out may be the same span). Allocates nothing. The first and last
    /// few cycles of low_hz carry the filters' start-up: pad the excerpt.
    void process(std::span<const float> x, std::span<float> out) const;
    /// Samples of start-up to discard at each end: ten periods of the low edge.
    std::size_t settle_samples() const { return settle_; }

private:
    struct Biquad {
        double b0, b1, b2, a1, a2;
    };
    std::array<Biquad, 4> sections_{};
    std::size_t settle_ = 0;
};

}  // namespace cavitas::dsp
