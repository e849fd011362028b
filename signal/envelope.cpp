#include "signal/envelope.hpp"

#include "signal/clones.hpp"
#include "signal/lanes.hpp"
#include "signal/spectrum.hpp"

#include <algorithm>
#include <cassert>
#include <cmath>
#include <stdexcept>
#include <string>
#include <type_traits>

#include "signal/stats.hpp"
#include "signal/window.hpp"

namespace cavitas::dsp {

std::size_t fast_fft_size(std::size_t target) {
    for (std::size_t n = std::max<std::size_t>(target, 1);; ++n) {
        std::size_t r = n;
        int twos = 0, threes = 0, fives = 0;
        for (; r % 2 == 0; r /= 2) ++twos;
        for (; r % 3 == 0; r /= 3) ++threes;
        for (; r % 5 == 0; r /= 5) ++fives;
        if (r == 1 && threes <= 2 && fives <= 3 && (n < 4096 || twos >= 5)) return n;
    }
}

namespace {

// Envelope samples per segment: all n, or (decimate) the fast size that holds
// |z|^2 without aliasing: twice the band's bins, at least 16, at most n.
std::size_t envelope_size(const EnvelopeConfig& c, double fs_hz, std::size_t n) {
    if (!c.decimate || n < 16 || !(fs_hz > 0.0)) return std::max<std::size_t>(n, 2);
    const double bin = fs_hz / static_cast<double>(n);
    const auto lo = static_cast<std::size_t>(std::max(1.0, std::ceil(c.band_low_hz / bin)));
    const auto hi = static_cast<std::size_t>(std::max(0.0, std::floor(c.band_high_hz / bin)));
    const std::size_t bins = hi >= lo ? hi - lo + 1 : 1;
    return std::min(n, fast_fft_size(std::max<std::size_t>(16, 2 * bins)));
}

// The single-precision path's loops over the envelope, built for AVX2 too
// (signal/clones.hpp); each is the generic loop below, element by element.
CAVITAS_CLONED void squared_magnitudes(const std::complex<float>* z, double scale, double* out, std::size_t m) {
    const float* zs = reinterpret_cast<const float*>(z);  // re, im interleaved (std::complex layout)
    for (std::size_t i = 0; i < m; ++i) {
        const double re = static_cast<double>(zs[2 * i]) * scale, im = static_cast<double>(zs[2 * i + 1]) * scale;
        out[i] = re * re + im * im;
    }
}
CAVITAS_CLONED lanes::PowerSums power_sums_of(const double* x, std::size_t n) { return lanes::power_sums(x, n); }
CAVITAS_CLONED void windowed_deviation(const double* x, double mean, const double* w, float* out, std::size_t m) {
    for (std::size_t i = 0; i < m; ++i) out[i] = static_cast<float>((x[i] - mean) * w[i]);
}
CAVITAS_CLONED void scaled_magnitudes(const std::complex<float>* S, double scale, double* out, std::size_t count) {
    const float* ss = reinterpret_cast<const float*>(S);
    for (std::size_t k = 0; k < count; ++k) {
        const double re = ss[2 * k], im = ss[2 * k + 1];
        out[k] = std::sqrt(re * re + im * im) * scale;
    }
}
CAVITAS_CLONED void add_scaled_powers(const std::complex<float>* S, double scale2, double* acc, std::size_t count) {
    const float* ss = reinterpret_cast<const float*>(S);
    for (std::size_t k = 0; k < count; ++k) {
        const double re = ss[2 * k], im = ss[2 * k + 1];
        acc[k] += (re * re + im * im) * scale2;
    }
}

}  // namespace

EnvelopeAnalyzer::EnvelopeAnalyzer(const EnvelopeConfig& config, double fs_hz, std::size_t segment_size)
    : config_(config),
      fs_hz_(fs_hz),
      n_(segment_size),
      m_(envelope_size(config, fs_hz, segment_size)),
      k_low_(0),
      k_high_(0) {
    if (!(fs_hz > 0.0) || !std::isfinite(fs_hz))
        throw std::invalid_argument("EnvelopeAnalyzer sample rate = " + std::to_string(fs_hz) + " Hz must be > 0");
    if (segment_size < 16)
        throw std::invalid_argument("EnvelopeAnalyzer segment size = " + std::to_string(segment_size) +
                                    " is below the minimum of 16");
    const double nyquist = fs_hz / 2.0;
    if (!(config.band_low_hz >= 0.0))
        throw std::invalid_argument("EnvelopeConfig.band_low_hz = " + std::to_string(config.band_low_hz) +
                                    " must be >= 0");
    if (!(config.band_high_hz > config.band_low_hz))
        throw std::invalid_argument("EnvelopeConfig.band_high_hz = " + std::to_string(config.band_high_hz) +
                                    " must exceed band_low_hz = " + std::to_string(config.band_low_hz));
    if (config.band_high_hz > nyquist)
        throw std::invalid_argument("EnvelopeConfig.band_high_hz = " + std::to_string(config.band_high_hz) +
                                    " exceeds Nyquist (" + std::to_string(nyquist) + ")");
    const double bin = fs_hz / static_cast<double>(n_);
    k_low_ = static_cast<std::size_t>(std::ceil(config.band_low_hz / bin));
    k_high_ = std::min(static_cast<std::size_t>(std::floor(config.band_high_hz / bin)), (n_ - 1) / 2);
    k_low_ = std::max<std::size_t>(k_low_, 1);
    if (k_high_ < k_low_)
        throw std::invalid_argument("EnvelopeConfig band " + std::to_string(config.band_low_hz) + "-" +
                                    std::to_string(config.band_high_hz) + " Hz holds no frequency bin at " +
                                    std::to_string(bin) + " Hz resolution");
    if (config.decimate && 2 * (k_high_ - k_low_ + 1) > m_)
        throw std::invalid_argument("EnvelopeConfig band " + std::to_string(config.band_low_hz) + "-" +
                                    std::to_string(config.band_high_hz) + " Hz is too wide to decimate in a segment of " +
                                    std::to_string(n_) + " samples");
    if (config.single_precision) {
        real_f_.emplace(n_, FftDirections::forward_only);
        analytic_f_.emplace(m_, FftDirections::inverse_only, FftPlacement::apart);
        ses_fft_f_.emplace(m_, FftDirections::forward_only);
    } else {
        real_.emplace(n_, FftDirections::forward_only);
        analytic_.emplace(m_, FftDirections::inverse_only, FftPlacement::apart);
        ses_fft_.emplace(m_, FftDirections::forward_only);
    }
    window_ = hann_periodic(m_);
    ses_scale_ = 2.0 / window_sum(window_);
    if (!config.decimate) band_.assign(n_, 0.0);
    sq_env_.assign(m_, 0.0);
    ses_.assign(m_ / 2 + 1, 0.0);
}

void EnvelopeAnalyzer::process(std::span<const float> x) {
    assert(x.size() == n_);
    if (config_.single_precision)
        demodulate(*real_f_, *analytic_f_, *ses_fft_f_, x);
    else
        demodulate(*real_, *analytic_, *ses_fft_, x);
}

void EnvelopeAnalyzer::segment_psd(std::span<double> out) const {
    if (config_.single_precision)
        hann_psd_from_spectrum(real_f_->spectrum(), n_, fs_hz_, out);
    else
        hann_psd_from_spectrum(real_->spectrum(), n_, fs_hz_, out);
}

template <typename T>
void EnvelopeAnalyzer::demodulate(BasicRealFft<T>& real, BasicComplexFft<T>& analytic, BasicRealFft<T>& ses_fft,
                                  std::span<const float> x) {
    auto t = real.time();
    for (std::size_t i = 0; i < n_; ++i) t[i] = static_cast<T>(x[i]);
    real.forward();
    const auto X = real.spectrum();
    auto z = analytic.data();
    // Full rate: the band's bins where they are. Decimated: shifted down to 0 Hz
    // (a frequency shift multiplies z by a unit phasor: |z| is unchanged).
    // Every other bin is zero.
    const std::size_t shift = config_.decimate ? k_low_ : 0;
    const auto first = static_cast<std::ptrdiff_t>(k_low_ - shift), past = static_cast<std::ptrdiff_t>(k_high_ - shift + 1);
    std::fill(z.begin(), z.begin() + first, std::complex<T>{});
    for (std::size_t k = k_low_; k <= k_high_; ++k)
        z[k - shift] = X[k] * T(2);
    std::fill(z.begin() + past, z.end(), std::complex<T>{});
    analytic.inverse();
    const auto zo = analytic.output();
    const double inv_n = 1.0 / static_cast<double>(n_);
    if constexpr (std::is_same_v<T, float>) {
        squared_magnitudes(zo.data(), inv_n, sq_env_.data(), m_);
    } else {
        for (std::size_t i = 0; i < m_; ++i) {
            const double re = static_cast<double>(zo[i].real()) * inv_n, im = static_cast<double>(zo[i].imag()) * inv_n;
            sq_env_[i] = re * re + im * im;
        }
    }
    if (!config_.decimate)
        for (std::size_t i = 0; i < m_; ++i) band_[i] = static_cast<double>(zo[i].real()) * inv_n;
    const lanes::PowerSums ps = power_sums_of(sq_env_.data(), m_);
    const double sum = ps.sum, sum2 = ps.sum_sq, peak = ps.max;
    const double inv_m = 1.0 / static_cast<double>(m_);
    mean_sq_env_ = sum * inv_m;
    if (config_.decimate) {
        const double m2 = mean_sq_env_, m4 = sum2 * inv_m;
        band_kurtosis_ = m2 > 0.0 ? 1.5 * m4 / (m2 * m2) : 0.0;
        band_crest_ = m2 > 0.0 ? std::sqrt(2.0 * peak / m2) : 0.0;
    } else {
        const Moments mo = moments(std::span<const double>(band_));
        band_kurtosis_ = mo.kurtosis;
        band_crest_ = mo.crest;
    }
    auto s = ses_fft.time();
    if constexpr (std::is_same_v<T, float>)
        windowed_deviation(sq_env_.data(), mean_sq_env_, window_.data(), s.data(), m_);
    else
        for (std::size_t i = 0; i < m_; ++i) s[i] = static_cast<T>((sq_env_[i] - mean_sq_env_) * window_[i]);
    ses_fft.forward();
    ses_current_ = false;  // amplitudes formed on demand (envelope_spectrum())
}

std::span<const double> EnvelopeAnalyzer::envelope_spectrum() const {
    if (!ses_current_) {
        if (config_.single_precision) {
            scaled_magnitudes(ses_fft_f_->spectrum().data(), ses_scale_, ses_.data(), ses_.size());
        } else {
            const auto S = ses_fft_->spectrum();
            for (std::size_t k = 0; k < ses_.size(); ++k) {
                const double re = S[k].real(), im = S[k].imag();
                ses_[k] = std::sqrt(re * re + im * im) * ses_scale_;
            }
        }
        ses_[0] = 0.0;
        ses_current_ = true;
    }
    return ses_;
}

void EnvelopeAnalyzer::add_envelope_power(std::span<double> acc) const {
    assert(acc.size() == ses_.size());
    const double s2 = ses_scale_ * ses_scale_;
    // Bin 0 (the removed mean) is 0 by definition, as in envelope_spectrum().
    if (ses_current_) {
        for (std::size_t k = 1; k < ses_.size(); ++k) acc[k] += ses_[k] * ses_[k];
    } else if (config_.single_precision) {
        add_scaled_powers(ses_fft_f_->spectrum().data() + 1, s2, acc.data() + 1, ses_.size() - 1);
    } else {
        const auto S = ses_fft_->spectrum();
        for (std::size_t k = 1; k < ses_.size(); ++k) {
            const double re = S[k].real(), im = S[k].imag();
            acc[k] += (re * re + im * im) * s2;
        }
    }
}

LineMeasure measure_line(std::span<const double> spectrum, double bin_hz, double target_hz, double search_hz,
                         double floor_hz, std::span<double> scratch) {
    LineMeasure m;
    m.target_hz = target_hz;
    if (spectrum.empty() || !(bin_hz > 0.0) || !(target_hz > 0.0)) return m;
    const auto last = static_cast<long>(spectrum.size()) - 1;
    auto to_bin = [&](double f) { return std::clamp(static_cast<long>(std::lround(f / bin_hz)), 0L, last); };
    const long c = to_bin(target_hz);
    const long half = std::max(1L, static_cast<long>(std::lround(search_hz / bin_hz)));
    long best = c;
    for (long k = std::max(1L, c - half); k <= std::min(last, c + half); ++k)
        if (spectrum[static_cast<std::size_t>(k)] > spectrum[static_cast<std::size_t>(best)]) best = k;
    m.found_hz = static_cast<double>(best) * bin_hz;
    m.amplitude = spectrum[static_cast<std::size_t>(best)];
    const long fw = std::max(half + 4, static_cast<long>(std::lround(floor_hz / bin_hz)));
    const long guard = half + 2;
    std::size_t cnt = 0;
    for (long k = std::max(1L, c - fw); k <= std::min(last, c + fw); ++k) {
        if (std::abs(k - c) <= guard) continue;
        if (cnt < scratch.size()) scratch[cnt++] = spectrum[static_cast<std::size_t>(k)];
    }
    if (cnt == 0) return m;
    auto mid = scratch.begin() + static_cast<std::ptrdiff_t>(cnt / 2);
    std::nth_element(scratch.begin(), mid, scratch.begin() + static_cast<std::ptrdiff_t>(cnt));
    m.floor = *mid;
    // A maximum at the edge of the search window that keeps rising outside it
    // is the flank of a stronger line nearby, not a line here.
    const bool flank = (best > 1 && spectrum[static_cast<std::size_t>(best - 1)] > m.amplitude) ||
                       (best < last && spectrum[static_cast<std::size_t>(best + 1)] > m.amplitude);
    if (m.floor > 0.0 && m.amplitude > 0.0 && !flank) m.prominence_db = 20.0 * std::log10(m.amplitude / m.floor);
    return m;
}

LineMeasure measure_line(std::span<const double> spectrum, double bin_hz, double target_hz, double search_hz,
                         double floor_hz) {
    std::vector<double> scratch(static_cast<std::size_t>(2.0 * (floor_hz + search_hz) / bin_hz) + 16);
    return measure_line(spectrum, bin_hz, target_hz, search_hz, floor_hz, scratch);
}

}  // namespace cavitas::dsp
