#include "signal/decimate.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>
#include <stdexcept>
#include <string>

namespace cavitas::dsp {

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
        taps_ = lowpass_fir(c.taps_per_phase * factor_ + 1, c.passband / static_cast<double>(factor_));
        std::reverse(taps_.begin(), taps_.end());
        history_.assign(taps_.size() - 1, 0.0);
        history_.reserve(taps_.size() - 1 + (std::size_t{1} << 16));
    }
}

void Decimator::reset() {
    std::fill(history_.begin(), history_.end(), 0.0);
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
        std::size_t i = phase_;
        for (; i < len; i += factor_) {
            const double* w = history_.data() + i;  // window [i, i + nt)
            double acc = 0.0;
            for (std::size_t j = 0; j < nt; ++j) acc += taps_[j] * w[j];
            out[written++] = static_cast<float>(acc);
        }
        phase_ = i - len;
        history_.erase(history_.begin(), history_.end() - static_cast<std::ptrdiff_t>(keep));
    }
    return written;
}

}  // namespace cavitas::dsp
