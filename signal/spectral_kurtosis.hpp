// Spectral kurtosis by the short-time Fourier transform estimator.
//
// Reference: J. Antoni, "The spectral kurtosis: a useful tool for characterising
// non-stationary signals", Mech. Syst. Signal Process. 20 (2006) 282-307.
// With K frames of the power spectrogram P(t, f):
//   SK(f) = (K + 1)/(K - 1) * mean_t(P^2) / mean_t(P)^2 - 2,
// 0 for stationary Gaussian noise, -1 for a pure tone, > 0 for transients.
// Bins within one bin of DC and Nyquist are set to 0.
#pragma once

#include <cstddef>
#include <optional>
#include <span>
#include <vector>

#include "signal/fft.hpp"

namespace cavitas::dsp {

struct SpectralKurtosisConfig {
    std::size_t window_size = 256;  ///< STFT frame length (periodic Hann)
    std::size_t hop = 0;            ///< frame step; 0 = window_size / 4 (75 % overlap)
    /// Frames transformed in single precision (the power sums stay in double).
    bool single_precision = false;
};

class SpectralKurtosis {
public:
    SpectralKurtosis(const SpectralKurtosisConfig& config, double fs_hz);

    /// SK of x, one value per bin (window_size/2 + 1 values) written into out.
    /// Needs at least 2 frames (x.size() >= window_size + hop).
    std::size_t hop() const { return config_.hop ? config_.hop : config_.window_size / 4; }
    void compute(std::span<const float> x, std::span<double> out);
    std::size_t bins() const { return config_.window_size / 2 + 1; }
    double bin_hz() const { return fs_hz_ / static_cast<double>(config_.window_size); }
    /// Gaussian threshold at the given two-sided confidence for K frames: z * 2 / sqrt(K).
    static double gaussian_threshold(double confidence, std::size_t frames);

private:
    template <typename T>
    void accumulate(BasicRealFft<T>& fft, std::span<const float> x, std::size_t frames);

    SpectralKurtosisConfig config_;
    double fs_hz_;
    std::optional<RealFft> fft_;     // one of the two, by config_.single_precision
    std::optional<RealFftF> fft_f_;
    std::vector<double> window_, sum_p_, sum_p2_;
};

}  // namespace cavitas::dsp
