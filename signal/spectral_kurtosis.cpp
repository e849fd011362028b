// Spectral kurtosis, STFT estimator: J. Antoni, "The spectral kurtosis: a useful
// tool for characterising non-stationary signals", MSSP 20 (2006) 282-307.
#include "signal/spectral_kurtosis.hpp"

#include <algorithm>
#include <cassert>
#include <cmath>
#include <numbers>
#include <stdexcept>
#include <string>
#include <type_traits>

#include "signal/clones.hpp"
#include "signal/window.hpp"
#include "signal/stats.hpp"

namespace cavitas::dsp {
namespace {

// The hop is a quarter window (75 % overlap); 8 keeps the four bins forced to
// 0 (DC, DC + 1, Nyquist - 1, Nyquist) from being the whole spectrum.
constexpr std::size_t kMinWindow = 8;

const SpectralKurtosisConfig& validated(const SpectralKurtosisConfig& config, double fs_hz) {
    if (!(fs_hz > 0.0) || !std::isfinite(fs_hz))
        throw std::invalid_argument("SpectralKurtosis fs_hz = " + std::to_string(fs_hz) +
                                    " must be a finite value > 0");
    if (config.window_size < kMinWindow || config.window_size % 4 != 0 || config.window_size > (std::size_t{1} << 24))
        throw std::invalid_argument("SpectralKurtosisConfig.window_size = " + std::to_string(config.window_size) +
                                    " must be a multiple of 4 in 8 .. 2^24 (the hop is window_size / 4)");
    if (config.hop > config.window_size)
        throw std::invalid_argument("SpectralKurtosisConfig.hop = " + std::to_string(config.hop) +
                                    " exceeds window_size = " + std::to_string(config.window_size) +
                                    " (frames would skip samples)");
    return config;
}

// The single-precision path's loops, built for AVX2 too (signal/clones.hpp).
CAVITAS_CLONED void window_frame(const double* w, const float* x, float* out, std::size_t n) {
    for (std::size_t k = 0; k < n; ++k) out[k] = static_cast<float>(w[k] * static_cast<double>(x[k]));
}
CAVITAS_CLONED void add_powers(const std::complex<float>* X, double* sum_p, double* sum_p2, std::size_t nb) {
    const float* xs = reinterpret_cast<const float*>(X);  // re, im interleaved (std::complex layout)
    for (std::size_t k = 0; k < nb; ++k) {
        const double re = xs[2 * k], im = xs[2 * k + 1];
        const double p = re * re + im * im;
        sum_p[k] += p;
        sum_p2[k] += p * p;
    }
}

}  // namespace

SpectralKurtosis::SpectralKurtosis(const SpectralKurtosisConfig& config, double fs_hz)
    : config_(validated(config, fs_hz)),
      fs_hz_(fs_hz),
      window_(hann_periodic(config_.window_size)),
      sum_p_(bins(), 0.0),
      sum_p2_(bins(), 0.0) {
    if (config_.single_precision) fft_f_.emplace(config_.window_size, FftDirections::forward_only);
    else fft_.emplace(config_.window_size, FftDirections::forward_only);
}

template <typename T>
void SpectralKurtosis::accumulate(BasicRealFft<T>& fft, std::span<const float> x, std::size_t frames) {
    const std::size_t n = config_.window_size, hop = this->hop(), nb = bins();
    const auto time = fft.time();
    const auto spectrum = fft.spectrum();
    for (std::size_t f = 0; f < frames; ++f) {
        const float* frame = x.data() + f * hop;
        if constexpr (std::is_same_v<T, float>) {
            window_frame(window_.data(), frame, time.data(), n);
            fft.forward();
            add_powers(spectrum.data(), sum_p_.data(), sum_p2_.data(), nb);
            continue;
        }
        for (std::size_t k = 0; k < n; ++k) time[k] = static_cast<T>(window_[k] * static_cast<double>(frame[k]));
        fft.forward();
        for (std::size_t k = 0; k < nb; ++k) {
            const double re = spectrum[k].real(), im = spectrum[k].imag();
            const double p = re * re + im * im;
            sum_p_[k] += p;
            sum_p2_[k] += p * p;
        }
    }
}

void SpectralKurtosis::compute(std::span<const float> x, std::span<double> out) {
    const std::size_t n = config_.window_size;
    const std::size_t hop = this->hop();
    const std::size_t nb = bins();
    assert(out.size() == nb);
    assert(x.size() >= n + hop);
    std::fill(sum_p_.begin(), sum_p_.end(), 0.0);
    std::fill(sum_p2_.begin(), sum_p2_.end(), 0.0);
    const std::size_t frames = 1 + (x.size() - n) / hop;
    if (fft_f_) accumulate(*fft_f_, x, frames);
    else accumulate(*fft_, x, frames);
    // SK = (K + 1)/(K - 1) * <P^2>/<P>^2 - 2 (Antoni 2006, the unbiased STFT
    // estimator); frames >= 2 here, so K - 1 > 0.
    const double k_frames = static_cast<double>(frames);
    const double unbias = (k_frames + 1.0) / (k_frames - 1.0);
    for (std::size_t k = 0; k < nb; ++k) {
        const double mean_p = sum_p_[k] / k_frames;
        const double mean_p2 = sum_p2_[k] / k_frames;
        out[k] = mean_p > 0.0 ? unbias * mean_p2 / (mean_p * mean_p) - 2.0 : 0.0;
    }
    // The Hann main lobe spans two bins: the bins next to DC and Nyquist mix the
    // line with its mirror image, which is not the band's own statistics.
    out[0] = out[1] = out[nb - 2] = out[nb - 1] = 0.0;
}

double SpectralKurtosis::gaussian_threshold(double confidence, std::size_t frames) {
    if (!(confidence > 0.0 && confidence < 1.0))
        throw std::invalid_argument("SpectralKurtosis::gaussian_threshold: confidence = " +
                                    std::to_string(confidence) + " is outside (0, 1)");
    if (frames < 1)
        throw std::invalid_argument("SpectralKurtosis::gaussian_threshold: frames = 0, need at least 1");
    // SK of Gaussian noise is asymptotically normal, mean 0, variance 4 / K
    // (Antoni 2006), so the two-sided bound is z_(1 - alpha/2) * 2 / sqrt(K).
    const double alpha = 1.0 - confidence;
    const double z = -normal_quantile(0.5 * alpha);
    return z * 2.0 / std::sqrt(static_cast<double>(frames));
}

}  // namespace cavitas::dsp
