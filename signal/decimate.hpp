// Decimation by an integer factor: a linear-phase FIR low-pass (windowed sinc,
// Blackman window) evaluated only at the kept samples (polyphase in effect),
// streaming over blocks of any size with its history kept between them.
//
// Used where only the low part of the spectrum matters at a fine resolution
// (the speed search, mains lines and the ski slope): decimating first makes
// that spectrum a fraction of the work.
#pragma once

#include <cstddef>
#include <span>
#include <vector>

namespace cavitas::dsp {

struct DecimatorConfig {
    std::size_t factor = 1;        ///< keep one sample in `factor` (1 = pass through)
    std::size_t taps_per_phase = 16;  ///< filter length = taps_per_phase x factor + 1
    double passband = 0.8;         ///< cutoff as a share of the new Nyquist frequency
};

/// The filter: numtaps-point Blackman-windowed sinc with the given cutoff (as a
/// share of the Nyquist frequency of the input), unit gain at 0 Hz; the same
/// design as scipy.signal.firwin(numtaps, cutoff, window='blackman').
std::vector<double> lowpass_fir(std::size_t numtaps, double cutoff);

class Decimator {
public:
    /// Throws std::invalid_argument naming the field (factor 0 or above 4096,
    /// taps_per_phase 0, passband outside (0, 1)).
    explicit Decimator(const DecimatorConfig& config);
    std::size_t factor() const { return factor_; }
    /// The filter as designed (double precision; applied in single precision).
    const std::vector<double>& taps() const { return design_; }
    /// Filters x and writes the kept samples to out; returns how many. out must
    /// hold at least x.size() / factor + 1. Allocates nothing.
    std::size_t process(std::span<const float> x, std::span<float> out);
    void reset();

private:
    std::size_t factor_;
    std::vector<double> design_;   // the taps as designed
    std::vector<float> taps_;      // the same, reversed for a dot product with the history
    std::vector<float> history_;   // the last numtaps - 1 inputs, then the current block's
    std::size_t phase_ = 0;        // inputs to skip before the next kept sample
};

}  // namespace cavitas::dsp
