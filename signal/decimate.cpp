#include "signal/decimate.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>
#include <stdexcept>
#include <string>

#include "signal/clones.hpp"

namespace cavitas::dsp {

namespace {

// sum a[j] b[j] in eight-lane float vectors (GCC/Clang vector extensions:
// two SSE registers on any x86-64, one AVX register in the AVX2 version of
// the caller, NEON on ARM), the tail in scalars, the lanes added in one fixed
// order: the same sum in every version (signal/clones.hpp). The products of a
// float FIR keep about 1e-7 of the output's scale, far below what a spectrum
// resolves.
CAVITAS_ALWAYS_INLINE float dot(const float* a, const float* b, std::size_t n) {
    typedef float v8 __attribute__((vector_size(32)));
    v8 acc0 = {0, 0, 0, 0, 0, 0, 0, 0}, acc1 = {0, 0, 0, 0, 0, 0, 0, 0};
    std::size_t j = 0;
    for (; j + 16 <= n; j += 16) {
        v8 a0, a1, b0, b1;
        __builtin_memcpy(&a0, a + j, sizeof a0);
        __builtin_memcpy(&a1, a + j + 8, sizeof a1);
        __builtin_memcpy(&b0, b + j, sizeof b0);
        __builtin_memcpy(&b1, b + j + 8, sizeof b1);
        acc0 += a0 * b0;
        acc1 += a1 * b1;
    }
    for (; j + 8 <= n; j += 8) {
        v8 a0, b0;
        __builtin_memcpy(&a0, a + j, sizeof a0);
        __builtin_memcpy(&b0, b + j, sizeof b0);
        acc0 += a0 * b0;
    }
    const v8 acc = acc0 + acc1;
    float s = ((acc[0] + acc[1]) + (acc[2] + acc[3])) + ((acc[4] + acc[5]) + (acc[6] + acc[7]));
    for (; j < n; ++j) s += a[j] * b[j];
    return s;
}

// out[k] = dot(taps, x + i) for i = first, first + factor, ... < len; returns
// the index past the last i (the next block's phase is it - len).
CAVITAS_CLONED std::size_t fir_outputs(const float* taps, std::size_t nt, const float* x, std::size_t first,
                                       std::size_t len, std::size_t factor, float* out) {
    std::size_t i = first;
    for (; i < len; i += factor) *out++ = dot(taps, x + i, nt);
    return i;
}

}  // namespace

std::vector<double> lowpass_fir(std::size_t numtaps, double cutoff) {
    if (numtaps < 1) throw std::invalid_argument("lowpass_fir: numtaps must be at least 1");
    if (!(cutoff > 0.0 && cutoff < 1.0)) throw std::invalid_argument("lowpass_fir: cutoff must be within (0, 1)");
    std::vector<double> h(numtaps);
    const double alpha = 0.5 * static_cast<double>(numtaps - 1);
    double sum = 0.0;
    for (std::size_t i = 0; i < numtaps; ++i) {
        const double m = static_cast<double>(i) - alpha;
        const double x = cutoff * m;
        const double sinc = x == 0.0 ? 1.0 : std::sin(std::numbers::pi * x) / (std::numbers::pi * x);
        // Blackman, symmetric (scipy.signal.get_window('blackman', n, fftbins=False)).
        const double t = numtaps > 1 ? static_cast<double>(i) / static_cast<double>(numtaps - 1) : 0.0;
        const double w = numtaps > 1 ? 0.42 - 0.5 * std::cos(2.0 * std::numbers::pi * t) + 0.08 * std::cos(4.0 * std::numbers::pi * t)
                                     : 1.0;
        h[i] = cutoff * sinc * w;
        sum += h[i];
    }
    for (double& v : h) v /= sum;  // unit gain at 0 Hz (firwin's scale=True)
    return h;
}

Decimator::Decimator(const DecimatorConfig& c) : factor_(c.factor) {
    if (c.factor < 1 || c.factor > 4096)
        throw std::invalid_argument("DecimatorConfig.factor = " + std::to_string(c.factor) + " is outside 1 .. 4096");
    if (c.taps_per_phase < 1 || c.taps_per_phase > 1024)
        throw std::invalid_argument("DecimatorConfig.taps_per_phase = " + std::to_string(c.taps_per_phase) +
                                    " is outside 1 .. 1024");
    if (!(c.passband > 0.0 && c.passband < 1.0))
        throw std::invalid_argument("DecimatorConfig.passband = " + std::to_string(c.passband) + " is outside (0, 1)");
    if (factor_ > 1) {
        design_ = lowpass_fir(c.taps_per_phase * factor_ + 1, c.passband / static_cast<double>(factor_));
        taps_.assign(design_.rbegin(), design_.rend());
        history_.assign(taps_.size() - 1, 0.0f);
        history_.reserve(taps_.size() - 1 + (std::size_t{1} << 16));
    }
}

void Decimator::reset() {
    std::fill(history_.begin(), history_.end(), 0.0f);
    history_.resize(taps_.empty() ? 0 : taps_.size() - 1);
    phase_ = 0;
}

std::size_t Decimator::process(std::span<const float> x, std::span<float> out) {
    if (factor_ == 1) {
        std::copy(x.begin(), x.end(), out.begin());
        return x.size();
    }
    const std::size_t nt = taps_.size(), keep = nt - 1;
    std::size_t written = 0;
    // Work through x in chunks so that the history buffer never grows past its reserve.
    constexpr std::size_t kChunk = std::size_t{1} << 16;
    for (std::size_t start = 0; start < x.size(); start += kChunk) {
        const std::size_t len = std::min(kChunk, x.size() - start);
        history_.insert(history_.end(), x.begin() + static_cast<std::ptrdiff_t>(start),
                        x.begin() + static_cast<std::ptrdiff_t>(start + len));
        // y[k] = sum h[j] x[k - j]: with the taps reversed, the dot product of the
        // window ending at the kept input.
        const std::size_t i = fir_outputs(taps_.data(), nt, history_.data(), phase_, len, factor_, out.data() + written);
        written += phase_ < len ? (i - phase_) / factor_ : 0;
        phase_ = i - len;
        history_.erase(history_.begin(), history_.end() - static_cast<std::ptrdiff_t>(keep));
    }
    return written;
}

}  // namespace cavitas::dsp
