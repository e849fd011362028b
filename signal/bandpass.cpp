#include "signal/bandpass.hpp"

#include <cmath>
#include <numbers>
#include <stdexcept>
#include <string>

namespace cavitas::dsp {

namespace {

// Pole-pair quality factors of a 4th-order Butterworth filter: 1 / (2 cos θ)
// for θ = π/8 and 3π/8 (the poles' angles from the negative real axis).
constexpr std::array<double, 2> kButterworth4Q{0.54119610014619701, 1.3065629648763764};

}  // namespace

ZeroPhaseBandPass::ZeroPhaseBandPass(const BandPassConfig& config, double fs_hz) {
    if (!(fs_hz > 0.0) || !(config.low_hz > 0.0) || !(config.high_hz > config.low_hz) || !(config.high_hz < 0.49 * fs_hz))
        throw std::invalid_argument("band-pass " + std::to_string(config.low_hz) + " .. " + std::to_string(config.high_hz) +
                                    " Hz does not fit a sample rate of " + std::to_string(fs_hz) + " Hz");
    // Bilinear transform of the analogue prototype with the edge pre-warped
    // (the second-order sections of the Audio EQ Cookbook, R. Bristow-Johnson).
    std::size_t s = 0;
    for (const bool high_pass : {true, false}) {
        const double w0 = 2.0 * std::numbers::pi * (high_pass ? config.low_hz : config.high_hz) / fs_hz;
        const double cw = std::cos(w0), sw = std::sin(w0);
        for (const double q : kButterworth4Q) {
            const double alpha = sw / (2.0 * q);
            const double a0 = 1.0 + alpha;
            const double b0 = high_pass ? (1.0 + cw) / 2.0 : (1.0 - cw) / 2.0;
            const double b1 = high_pass ? -(1.0 + cw) : 1.0 - cw;
            sections_[s++] = Biquad{b0 / a0, b1 / a0, b0 / a0, -2.0 * cw / a0, (1.0 - alpha) / a0};
        }
    }
    settle_ = static_cast<std::size_t>(std::ceil(10.0 * fs_hz / config.low_hz));
}

void ZeroPhaseBandPass::process(std::span<const float> x, std::span<float> out) const {
    if (out.size() != x.size()) throw std::invalid_argument("band-pass output size differs from its input");
    const std::size_t n = x.size();
    if (x.data() != out.data())
        for (std::size_t i = 0; i < n; ++i) out[i] = x[i];
    // Each section in direct form II transposed, in double; one pass over the
    // samples per section and direction.
    auto run = [&](const Biquad& q, bool backward) {
        double z1 = 0.0, z2 = 0.0;
        for (std::size_t k = 0; k < n; ++k) {
            float& v = out[backward ? n - 1 - k : k];
            const double in = v;
            const double y = q.b0 * in + z1;
            z1 = q.b1 * in - q.a1 * y + z2;
            z2 = q.b2 * in - q.a2 * y;
            v = static_cast<float>(y);
        }
    };
    for (const Biquad& q : sections_) run(q, false);
    for (const Biquad& q : sections_) run(q, true);
}

}  // namespace cavitas::dsp
