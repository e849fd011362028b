// Welch power spectral density and band levels.
//
// Welch's method: frames of segment_size samples, 50 % overlap, constant
// detrend (frame mean removed), periodic Hann window, density scaling
// |X|^2 / (fs * sum w^2), one-sided (bins 1 .. n/2-1 doubled). These are the
// conventions of scipy.signal.welch(x, fs, window='hann', nperseg=n,
// noverlap=n/2, detrend='constant', scaling='density', return_onesided=True).
// For white noise of variance s^2 the one-sided level is 2 s^2 / fs (= s^2 / (fs/2)).
//
// Streaming: push() takes any block length and keeps the overlap tail, so a long
// record can be fed block by block; memory is fixed by segment_size.
#pragma once

#include <complex>
#include <cstddef>
#include <optional>
#include <span>
#include <vector>

#include "signal/fft.hpp"

namespace cavitas::dsp {

struct WelchConfig {
    std::size_t segment_size = 4096;  ///< frame length in samples (>= 8)
    /// Frames transformed in single precision (the buffer, the mean, the
    /// window and the averaged powers stay in double).
    bool single_precision = false;
};

class WelchPsd {
public:
    WelchPsd(const WelchConfig& config, double fs_hz);

    void push(std::span<const float> x);
    void push(std::span<const double> x);
    /// Frames averaged so far.
    std::size_t frames() const { return frames_; }
    /// One-sided PSD in units^2/Hz, bins() values; all zero before the first frame.
    void psd(std::span<double> out) const;
    std::vector<double> psd() const;
    std::size_t bins() const { return n_ / 2 + 1; }
    double bin_hz() const { return fs_hz_ / static_cast<double>(n_); }
    double fs_hz() const { return fs_hz_; }
    std::size_t segment_size() const { return n_; }
    /// Forget all frames and the overlap tail.
    void reset();

private:
    template <typename T>
    void push_impl(std::span<const T> x);
    void frame();
    std::size_t n_;
    std::size_t hop_;
    double fs_hz_;
    std::vector<double> window_;
    double scale_;
    template <typename T>
    void transform(BasicRealFft<T>& fft, double mean);
    std::optional<RealFft> fft_;
    std::optional<RealFftF> fft_f_;
    std::vector<double> buffer_;
    std::size_t fill_ = 0;
    std::vector<double> acc_;
    std::size_t frames_ = 0;
};

/// The one-sided PSD of one n-sample frame, Welch's conventions above (constant
/// detrend, periodic Hann, density scaling), from the frame's unwindowed DFT X
/// (n/2 + 1 bins, as RealFft gives it): the window is applied in the frequency
/// domain, Y_k = X_k / 2 - (X_{k-1} + X_{k+1}) / 4, with X_0 taken as 0 (the
/// detrend). Equal to WelchPsd with segment_size n over exactly n samples,
/// without a transform of its own. out must hold n/2 + 1 values.
void hann_psd_from_spectrum(std::span<const std::complex<double>> X, std::size_t n, double fs_hz, std::span<double> out);
/// The same from a single-precision DFT (RealFftF); the arithmetic is in double.
void hann_psd_from_spectrum(std::span<const std::complex<float>> X, std::size_t n, double fs_hz, std::span<double> out);

/// Power in [low_hz, high_hz] from a one-sided PSD (sum of psd * bin width over
/// the bins whose centre lies in the band). Units^2.
double band_power(std::span<const double> psd, double bin_hz, double low_hz, double high_hz);
/// sqrt(band_power): band rms in the signal's units.
double band_rms(std::span<const double> psd, double bin_hz, double low_hz, double high_hz);
/// 10 log10(power / reference^2), floored at -300 dB so that silence never gives -inf.
double power_db(double power, double reference = 1.0);
/// 20 log10(amplitude / reference), floored at -300 dB.
double amplitude_db(double amplitude, double reference = 1.0);

}  // namespace cavitas::dsp
