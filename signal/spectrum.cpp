#include "signal/spectrum.hpp"

#include "signal/clones.hpp"
#include "signal/lanes.hpp"

#include <algorithm>
#include <cassert>
#include <cmath>
#include <stdexcept>
#include <string>

#include "signal/lanes.hpp"
#include "signal/window.hpp"

namespace cavitas::dsp {

WelchPsd::WelchPsd(const WelchConfig& config, double fs_hz)
    : n_(config.segment_size), hop_(config.segment_size / 2), fs_hz_(fs_hz) {
    if (config.segment_size < 8)
        throw std::invalid_argument("WelchConfig.segment_size = " + std::to_string(config.segment_size) +
                                    " is below the minimum of 8");
    if (!(fs_hz > 0.0) || !std::isfinite(fs_hz))
        throw std::invalid_argument("WelchPsd sample rate = " + std::to_string(fs_hz) + " Hz must be > 0");
    if (config.single_precision)
        fft_f_.emplace(n_, FftDirections::forward_only);
    else
        fft_.emplace(n_, FftDirections::forward_only);
    window_ = hann_periodic(n_);
    scale_ = 1.0 / (fs_hz_ * window_power_sum(window_));
    buffer_.assign(n_, 0.0);
    acc_.assign(n_ / 2 + 1, 0.0);
}

template <typename T>
void WelchPsd::push_impl(std::span<const T> x) {
    std::size_t i = 0;
    while (i < x.size()) {
        const std::size_t take = std::min(n_ - fill_, x.size() - i);
        for (std::size_t k = 0; k < take; ++k) buffer_[fill_ + k] = static_cast<double>(x[i + k]);
        fill_ += take;
        i += take;
        if (fill_ == n_) {
            frame();
            std::copy(buffer_.begin() + static_cast<std::ptrdiff_t>(hop_), buffer_.end(), buffer_.begin());
            fill_ = n_ - hop_;
        }
    }
}

void WelchPsd::push(std::span<const float> x) { push_impl(x); }
void WelchPsd::push(std::span<const double> x) { push_impl(x); }

void WelchPsd::frame() {
    double mean = 0.0;
    for (double v : buffer_) mean += v;
    mean /= static_cast<double>(n_);
    if (fft_f_)
        transform(*fft_f_, mean);
    else
        transform(*fft_, mean);
    ++frames_;
}

template <typename T>
void WelchPsd::transform(BasicRealFft<T>& fft, double mean) {
    auto t = fft.time();
    for (std::size_t k = 0; k < n_; ++k) t[k] = static_cast<T>((buffer_[k] - mean) * window_[k]);
    fft.forward();
    auto s = fft.spectrum();
    for (std::size_t k = 0; k < acc_.size(); ++k) {
        const double re = s[k].real(), im = s[k].imag();
        acc_[k] += re * re + im * im;
    }
}

void WelchPsd::psd(std::span<double> out) const {
    assert(out.size() == bins());
    if (frames_ == 0) {
        std::fill(out.begin(), out.end(), 0.0);
        return;
    }
    const double f = scale_ / static_cast<double>(frames_);
    const std::size_t last = n_ / 2;
    for (std::size_t k = 0; k <= last; ++k) {
        // Double everything but DC and (for even n) Nyquist: one-sided density.
        const bool single = (k == 0) || (n_ % 2 == 0 && k == last);
        out[k] = acc_[k] * f * (single ? 1.0 : 2.0);
    }
}

std::vector<double> WelchPsd::psd() const {
    std::vector<double> out(bins());
    psd(out);
    return out;
}

void WelchPsd::reset() {
    std::fill(acc_.begin(), acc_.end(), 0.0);
    frames_ = 0;
    fill_ = 0;
}

namespace {

template <typename T>
CAVITAS_ALWAYS_INLINE void hann_psd_from_spectrum_impl(std::span<const std::complex<T>> X, std::size_t n, double fs_hz,
                                 std::span<double> out) {
    const std::size_t nb = n / 2 + 1;
    if (X.size() < nb || out.size() < nb || n < 4)
        throw std::invalid_argument("hann_psd_from_spectrum: needs n >= 4 and n/2 + 1 bins in and out");
    // Bin k of the full DFT: X_k for k <= n/2, conj(X_{n-k}) above; X_0 = 0 (detrend).
    auto at = [&](long k) -> std::complex<double> {
        const long nn = static_cast<long>(n);
        k = ((k % nn) + nn) % nn;
        if (k == 0) return {};
        const std::complex<T> v = k <= nn / 2 ? X[static_cast<std::size_t>(k)] : std::conj(X[static_cast<std::size_t>(nn - k)]);
        return {static_cast<double>(v.real()), static_cast<double>(v.imag())};
    };
    const double scale = 1.0 / (fs_hz * 3.0 * static_cast<double>(n) / 8.0);  // sum of Hann^2 = 3n/8
    auto put = [&](std::size_t k, std::complex<double> y) {
        const bool edge = k == 0 || (n % 2 == 0 && k == n / 2);
        out[k] = (y.real() * y.real() + y.imag() * y.imag()) * scale * (edge ? 1.0 : 2.0);
    };
    // Interior bins straight from their neighbours; the two ends through at().
    put(0, 0.5 * at(0) - 0.25 * (at(-1) + at(1)));
    // Bin 1 (its left neighbour is the removed DC), then a branch-free loop
    // that vectorises; the arithmetic is put()'s, in the same order.
    if (nb > 2) {
        const auto c = [&](std::size_t j) {
            return std::complex<double>(static_cast<double>(X[j].real()), static_cast<double>(X[j].imag()));
        };
        put(1, 0.5 * c(1) - 0.25 * (std::complex<double>{} + c(2)));
    }
    const T* xs = reinterpret_cast<const T*>(X.data());  // re, im interleaved (std::complex layout)
    for (std::size_t k = 2; k + 1 < nb; ++k) {
        const double re = 0.5 * static_cast<double>(xs[2 * k]) -
                          0.25 * (static_cast<double>(xs[2 * k - 2]) + static_cast<double>(xs[2 * k + 2]));
        const double im = 0.5 * static_cast<double>(xs[2 * k + 1]) -
                          0.25 * (static_cast<double>(xs[2 * k - 1]) + static_cast<double>(xs[2 * k + 3]));
        out[k] = (re * re + im * im) * scale * 2.0;
    }
    const long last = static_cast<long>(nb) - 1;
    if (nb > 1) put(nb - 1, 0.5 * at(last) - 0.25 * (at(last - 1) + at(last + 1)));
}

}  // namespace

void hann_psd_from_spectrum(std::span<const std::complex<double>> X, std::size_t n, double fs_hz,
                            std::span<double> out) {
    hann_psd_from_spectrum_impl(X, n, fs_hz, out);
}
namespace {
CAVITAS_CLONED void hann_psd_single(std::span<const std::complex<float>> X, std::size_t n, double fs_hz,
                                   std::span<double> out) {
    hann_psd_from_spectrum_impl(X, n, fs_hz, out);
}
}  // namespace

void hann_psd_from_spectrum(std::span<const std::complex<float>> X, std::size_t n, double fs_hz,
                            std::span<double> out) {
    hann_psd_single(X, n, fs_hz, out);
}

double band_power(std::span<const double> psd, double bin_hz, double low_hz, double high_hz) {
    if (!(bin_hz > 0.0)) throw std::invalid_argument("band_power: bin width must be > 0 Hz");
    if (high_hz < low_hz) throw std::invalid_argument("band_power: band high edge is below its low edge");
    // Bins k with low_hz <= k * bin_hz <= high_hz (the edges tested on k * bin_hz
    // itself, so a bin exactly on an edge is in), summed in lanes.
    const auto k0 = static_cast<std::size_t>(std::max(0.0, std::ceil(low_hz / bin_hz)));
    if (k0 >= psd.size()) return 0.0;
    auto k1 = static_cast<std::size_t>(std::min(static_cast<double>(psd.size()), std::floor(high_hz / bin_hz) + 2.0));
    while (k1 > k0 && static_cast<double>(k1 - 1) * bin_hz > high_hz) --k1;
    return k1 > k0 ? lanes::sum_of(psd.data() + k0, k1 - k0) * bin_hz : 0.0;
}

double band_rms(std::span<const double> psd, double bin_hz, double low_hz, double high_hz) {
    return std::sqrt(band_power(psd, bin_hz, low_hz, high_hz));
}

double power_db(double power, double reference) {
    const double r = power / (reference * reference);
    return r > 1e-30 ? 10.0 * std::log10(r) : -300.0;
}

double amplitude_db(double amplitude, double reference) {
    const double r = amplitude / reference;
    return r > 1e-15 ? 20.0 * std::log10(r) : -300.0;
}

}  // namespace cavitas::dsp
