#include <catch2/catch.hpp>

#include <cmath>
#include <cstdlib>
#include <numbers>
#include <stdexcept>
#include <vector>

#include "signal/bandpass.hpp"

using namespace cavitas::dsp;
using Catch::Matchers::WithinAbs;
using Catch::Matchers::WithinRel;

namespace {

std::vector<float> tone(double f_hz, double fs_hz, std::size_t n) {
    std::vector<float> x(n);
    for (std::size_t i = 0; i < n; ++i) x[i] = static_cast<float>(std::sin(2.0 * std::numbers::pi * f_hz * static_cast<double>(i) / fs_hz));
    return x;
}

// Peak amplitude away from both ends (the start-up of each pass).
double middle_amplitude(const std::vector<float>& y, std::size_t skip) {
    double a = 0.0;
    for (std::size_t i = skip; i + skip < y.size(); ++i) a = std::max(a, std::abs(static_cast<double>(y[i])));
    return a;
}

// Power gain |H|^2 of a 4th-order digital Butterworth high-pass and low-pass
// made by the bilinear transform with pre-warped edges: the analogue
// 1 / (1 + (w/wc)^8) with w = tan(pi f / fs) (Oppenheim & Schafer, Discrete-Time
// Signal Processing, bilinear design of Butterworth filters). Forward and
// backward applies |H|^2 to the amplitude.
double zero_phase_gain(double f, double lo, double hi, double fs) {
    const double w = std::tan(std::numbers::pi * f / fs);
    const double hp = 1.0 / (1.0 + std::pow(std::tan(std::numbers::pi * lo / fs) / w, 8));
    const double lp = 1.0 / (1.0 + std::pow(w / std::tan(std::numbers::pi * hi / fs), 8));
    return hp * lp;
}

}  // namespace

TEST_CASE("Zero-phase band-pass follows the Butterworth magnitude forward and backward", "[signal]") {
    const double fs = 96000.0, lo = 2000.0, hi = 20000.0;
    const ZeroPhaseBandPass bp(BandPassConfig{lo, hi}, fs);
    const std::size_t n = 16384;
    std::vector<float> y(n);
    for (const double f : {1000.0, 2000.0, 6000.0, 20000.0, 30000.0}) {
        const auto x = tone(f, fs, n);
        bp.process(x, y);
        INFO("tone at " << f << " Hz");
        const double want = zero_phase_gain(f, lo, hi, fs);
        // Edges: half amplitude (-3 dB per pass, twice); an octave below the low
        // edge about 1/257 (-48 dB).
        CHECK_THAT(middle_amplitude(y, bp.settle_samples()), WithinRel(want, 0.01));
    }
    CHECK_THAT(zero_phase_gain(2000.0, lo, hi, fs), WithinRel(0.5, 0.01));
}

TEST_CASE("Zero-phase band-pass keeps an impact where it was and works in place", "[signal]") {
    const double fs = 51200.0;
    const ZeroPhaseBandPass bp(BandPassConfig{5000.0, 20000.0}, fs);
    std::vector<float> x(4096, 0.0f);
    x[2000] = 1.0f;
    std::vector<float> y(x.size());
    bp.process(x, y);
    // Forward-backward filtering has zero phase: the response is symmetric
    // about the impulse, its largest value at the impulse (common practice, no source).
    std::size_t at = 0;
    for (std::size_t i = 0; i < y.size(); ++i)
        if (std::abs(y[i]) > std::abs(y[at])) at = i;
    CHECK(at == 2000);
    for (std::size_t k = 1; k < 200; ++k)
        CHECK_THAT(static_cast<double>(y[2000 - k]), WithinAbs(static_cast<double>(y[2000 + k]), 1e-4 * std::abs(y[2000])));
    std::vector<float> z = x;
    bp.process(z, z);
    CHECK(z == y);
}

TEST_CASE("Zero-phase band-pass refuses a band that does not fit the rate", "[signal]") {
    CHECK_THROWS_AS(ZeroPhaseBandPass(BandPassConfig{5000.0, 30000.0}, 51200.0), std::invalid_argument);
    CHECK_THROWS_AS(ZeroPhaseBandPass(BandPassConfig{5000.0, 4000.0}, 51200.0), std::invalid_argument);
    CHECK_THROWS_AS(ZeroPhaseBandPass(BandPassConfig{0.0, 4000.0}, 51200.0), std::invalid_argument);
}
