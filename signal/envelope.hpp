// Envelope analysis: ideal band-pass, analytic signal, squared-envelope spectrum.
//
// One segment of n samples is transformed once; the bins inside
// [band_low_hz, band_high_hz] are kept and doubled, everything else (negative
// frequencies included) is zeroed, and the inverse complex FFT gives the
// analytic signal z of the band (the "Hilbert via FFT" demodulation of
// R.B. Randall, "Modern envelope analysis for bearing diagnostics", 2015:
// an ideal band-pass that can exclude strong discrete components next to the
// band). Re z is the band-passed signal; |z|^2 is the squared envelope, which
// Randall recommends over the envelope itself.
//
// With `decimate`, the band's bins are moved to baseband and transformed back
// at a lower rate instead (complex demodulation): the inverse transform has
// only m >= 2 (band bins) points, enough for |z|^2, whose spectrum reaches the
// band width at most, so the squared envelope and its spectrum are the same
// at the frequencies they share, for a fraction of the work. The real band
// signal is not formed then; its kurtosis and crest factor come from the
// envelope: for x = Re(z e^{j w t}) with the carrier phase independent of the
// envelope, E x^4 / (E x^2)^2 = 1.5 E|z|^4 / (E|z|^2)^2 (E cos^4 = 3/8,
// E cos^2 = 1/2): 1.5 for a sine, 3 for Gaussian noise; and the crest factor is
// sqrt(2) max|z| / rms|z|.
//
// The squared-envelope spectrum (SES) is the one-sided amplitude spectrum of
// (|z|^2 - mean) with a periodic Hann window, scaled so that a cosine of
// amplitude A in |z|^2 gives a line of height A at an exact bin
// (2 |S_k| / sum w). For x = (1 + m cos 2 pi fm t) cos 2 pi fc t the squared
// envelope is (1 + m cos)^2: SES lines 2m at fm and m^2/2 at 2 fm, mean 1 + m^2/2.
#pragma once

#include <complex>
#include <cstddef>
#include <optional>
#include <span>
#include <vector>

#include "signal/fft.hpp"

namespace cavitas::dsp {

struct EnvelopeConfig {
    double band_low_hz = 2000.0;
    double band_high_hz = 10000.0;
    bool decimate = false;  ///< complex demodulation at a lower rate (see above)
    /// The segment's transform (which also gives the segment PSD), the inverse
    /// to z and the envelope spectrum in single precision; sums stay double.
    bool single_precision = false;
};

class EnvelopeAnalyzer {
public:
    /// Validates the band against the sample rate and plans the transforms.
    EnvelopeAnalyzer(const EnvelopeConfig& config, double fs_hz, std::size_t segment_size);

    /// Analyse one segment (x.size() == segment_size). Allocates nothing.
    void process(std::span<const float> x);

    /// Band-passed signal (Re z), segment_size values; empty with `decimate`.
    std::span<const double> band_signal() const { return band_; }
    /// Squared envelope |z|^2: envelope_samples() values at envelope_rate_hz().
    std::span<const double> squared_envelope() const { return sq_env_; }
    /// SES amplitude, envelope_samples()/2 + 1 values, bin k at k * bin_hz(); DC set to 0.
    /// (Formed from the transform on the first call after process().)
    std::span<const double> envelope_spectrum() const;
    /// Number of SES bins: envelope_samples()/2 + 1.
    std::size_t envelope_bins() const { return m_ / 2 + 1; }
    /// acc[k] += SES(k)^2 for every bin (acc has envelope_bins() values): the
    /// power average of many segments' SES without forming each amplitude.
    void add_envelope_power(std::span<double> acc) const;
    /// The last segment's one-sided Hann PSD (segment_size/2 + 1 values, WelchPsd's
    /// conventions over exactly this segment), from the envelope's own DFT of it
    /// (hann_psd_from_spectrum): no transform of its own.
    void segment_psd(std::span<double> out) const;
    /// Kurtosis and crest factor of the band signal (from Re z, or from the envelope with `decimate`).
    double band_kurtosis() const { return band_kurtosis_; }
    double band_crest() const { return band_crest_; }
    /// Samples of the squared envelope per segment, and their rate.
    std::size_t envelope_samples() const { return m_; }
    double envelope_rate_hz() const { return fs_hz_ * static_cast<double>(m_) / static_cast<double>(n_); }
    /// Mean of the squared envelope (= mean power of the analytic band signal,
    /// twice the band-passed signal's mean square).
    double mean_squared_envelope() const { return mean_sq_env_; }
    double bin_hz() const { return fs_hz_ / static_cast<double>(n_); }
    std::size_t segment_size() const { return n_; }
    const EnvelopeConfig& config() const { return config_; }

private:
    EnvelopeConfig config_;
    double fs_hz_;
    std::size_t n_;
    std::size_t m_;  // envelope samples per segment (n_, or fewer with decimate)
    std::size_t k_low_, k_high_;
    template <typename T>
    void demodulate(BasicRealFft<T>& real, BasicComplexFft<T>& analytic, BasicRealFft<T>& ses_fft, std::span<const float> x);

    // One set of the two, by config_.single_precision.
    std::optional<RealFft> real_;
    std::optional<RealFftF> real_f_;
    std::optional<ComplexFft> analytic_;
    std::optional<RealFft> ses_fft_;
    std::optional<ComplexFftF> analytic_f_;
    std::optional<RealFftF> ses_fft_f_;
    std::vector<double> window_;
    double ses_scale_;
    std::vector<double> band_, sq_env_;
    mutable std::vector<double> ses_;
    mutable bool ses_current_ = true;  // ses_ holds the last segment's SES
    double mean_sq_env_ = 0.0;
    double band_kurtosis_ = 0.0, band_crest_ = 0.0;
};

/// The smallest n >= target of the form 2^a 3^b 5^c with b <= 2, c <= 3 and,
/// from 4096 up, a >= 5: sizes FFTW transforms quickly with the plans it makes
/// without measuring. Sizes with more factors of 3 and 5 (the smallest 2-3-5
/// size above a target is often such a one, e.g. 67500 = 2^2 3^3 5^4) took up
/// to 1.7x longer per point on the development machine (measured with FFTW
/// 3.3.10 single precision, estimate plans; tools/bench shows the effect).
std::size_t fast_fft_size(std::size_t target);

/// A spectral line measured against its local floor.
struct LineMeasure {
    double target_hz = 0.0;       ///< where the line was looked for
    double found_hz = 0.0;        ///< bin of the maximum within the search window
    double amplitude = 0.0;       ///< spectrum value at found_hz
    double floor = 0.0;           ///< median of the spectrum around the line, line excluded
    double prominence_db = 0.0;   ///< 20 log10(amplitude / floor); 0 when the floor is 0 or the
                                  ///< maximum is the flank of a stronger line just outside the window
};

/// Look for a line near target_hz (maximum within +-search_hz) in a one-sided
/// amplitude spectrum and compare it with the median of the bins within
/// +-floor_hz, leaving out +-(search_hz + 2 bins) around the line. `scratch`
/// must hold at least the number of bins in the floor window (2 floor_hz / bin_hz + 1).
LineMeasure measure_line(std::span<const double> spectrum, double bin_hz, double target_hz, double search_hz,
                         double floor_hz, std::span<double> scratch);
/// Convenience overload that allocates its own scratch (not for the hot path).
LineMeasure measure_line(std::span<const double> spectrum, double bin_hz, double target_hz, double search_hz,
                         double floor_hz);

}  // namespace cavitas::dsp
