// Analytic-truth tests of ImpulseCounter (signal/impulses.hpp), fed by the
// squared envelope of EnvelopeAnalyzer (signal/envelope.hpp).
//
// Set-up: fs = 25600 Hz, one segment of 1 s (25600 samples), band 4-10 kHz.
// For Gaussian noise the band's analytic signal z is circular complex Gaussian,
// so |z| is Rayleigh with sigma = rms of the band signal Re z, median
// sigma sqrt(2 ln 2) and P(|z| > u) = exp(-u^2 / (2 sigma^2)) (computed from
// the Rayleigh law).
#include <catch2/catch.hpp>

#include "tests/support/noise.hpp"

#include <cmath>
#include <cstddef>
#include <cstdint>
#include <numbers>
#include <random>
#include <span>
#include <vector>

#include "signal/envelope.hpp"
#include "signal/impulses.hpp"

using cavitas::dsp::EnvelopeAnalyzer;
using cavitas::dsp::EnvelopeConfig;
using cavitas::dsp::ImpulseConfig;
using cavitas::dsp::ImpulseCounter;
using Catch::Matchers::WithinAbs;
using Catch::Matchers::WithinRel;

namespace {

using cavitas::testing::gaussian_noise;
using cavitas::testing::to_float;

constexpr double kTwoPi = 2.0 * std::numbers::pi;
constexpr double kFs = 25600.0;
constexpr std::size_t kN = 25600;
const EnvelopeConfig kBand{4000.0, 10000.0};

double rms(std::span<const double> v) {
    double s = 0.0;
    for (double x : v) s += x * x;
    return std::sqrt(s / static_cast<double>(v.size()));
}

}  // namespace

TEST_CASE("The threshold factor for exceedance probability 1e-6 is sqrt(ln(1e6) / ln 2)", "[signal]") {
    // Computed from the Rayleigh law: u / median = sqrt(2 ln(1/p)) / sqrt(2 ln 2)
    // = sqrt(ln(1e6) / ln 2) = sqrt(19.93157) = 4.464479. Tolerance 1e-12 against the
    // formula (rounding only), 1e-6 against the printed value.
    ImpulseCounter counter(ImpulseConfig{}, kFs, kN);
    CHECK_THAT(counter.factor(), WithinAbs(std::sqrt(std::log(1e6) / std::log(2.0)), 1e-12));
    CHECK_THAT(counter.factor(), WithinAbs(4.464479, 1e-6));
    // A larger exceedance probability lowers the factor: p = 0.5 would be the median itself.
    ImpulseCounter loose(ImpulseConfig{1e-2, 0.5e-3}, kFs, kN);
    CHECK_THAT(loose.factor(), WithinAbs(std::sqrt(std::log(1e2) / std::log(2.0)), 1e-12));
}

TEST_CASE("On Gaussian noise the threshold is the factor times the Rayleigh median sigma sqrt(2 ln 2)", "[signal]") {
    // Computed from the Rayleigh law (see the top of this file).
    // Tolerance 4 %: the sample median of ~B T = 6000 independent envelope
    // values (B = 6 kHz, T = 1 s) has a standard deviation of
    // 0.5 / (f(median) sqrt(6000)) = 0.93 % of the median (f = Rayleigh density;
    // large-sample variance of a quantile), so 4 % is about 4 standard deviations.
    EnvelopeAnalyzer env(kBand, kFs, kN);
    ImpulseCounter counter(ImpulseConfig{}, kFs, kN);
    const auto x = to_float(gaussian_noise(kN, 314, 0.5));
    env.process(x);
    counter.count(env.squared_envelope());
    const double sigma = rms(env.band_signal());
    CHECK_THAT(counter.last_threshold(), WithinRel(counter.factor() * sigma * std::sqrt(2.0 * std::log(2.0)), 0.04));
}

TEST_CASE("Band-limited Gaussian noise alone almost never counts an impulse", "[signal]") {
    // Rice's formula for the envelope of narrow-band Gaussian noise: level u is
    // up-crossed at the rate sqrt(2 pi) beta (u / sigma) exp(-u^2 / (2 sigma^2)),
    // beta the rms bandwidth about the band centre (S.O. Rice, Bell Syst. Tech. J.
    // 24 (1945)). Flat 6 kHz band: beta = 6000 / sqrt(12) = 1732 Hz; at p = 1e-6,
    // u / sigma = sqrt(2 ln 1e6) = 5.257, so about 0.023 crossings per second (the
    // counter's re-arm delay can only lower this). Counting 4 or more in 1 s
    // is a Poisson tail of ~1e-8; a threshold set without the factor (at the
    // median) would count thousands. Bound: <= 3 events.
    EnvelopeAnalyzer env(kBand, kFs, kN);
    ImpulseCounter counter(ImpulseConfig{}, kFs, kN);
    for (std::uint64_t seed : {1u, 2u, 3u}) {
        INFO("seed " << seed);
        const auto x = to_float(gaussian_noise(kN, seed, 1.0));
        env.process(x);
        CHECK(counter.count(env.squared_envelope()) <= 3);
    }
}

TEST_CASE("Forty ringing impacts per second on weak noise count as forty events", "[signal]") {
    // Each impact rings a 6 kHz resonance with damping ratio 0.03:
    // e^{-zeta wn t} sin(wd t), amplitude 1, envelope time constant
    // 1 / (zeta wn) = 0.88 ms, 25 ms apart, so the bursts do not overlap and each
    // falls below the threshold well before the next. White noise of rms 0.01
    // (-40 dB) keeps the adaptive threshold finite. The band 4-10 kHz holds the
    // resonance (half-power width 2 zeta fn = 360 Hz). Tolerance +-1 event: a
    // burst's decaying tail can cross the threshold twice through the noise
    // (common practice, no source).
    const double fn = 6000.0, zeta = 0.03;
    const double wn = kTwoPi * fn, wd = wn * std::sqrt(1.0 - zeta * zeta);
    const std::size_t spacing = kN / 40, first = 100;
    auto x = gaussian_noise(kN, 2718, 0.01);
    for (std::size_t k = 0; k < 40; ++k) {
        const std::size_t start = first + k * spacing;
        for (std::size_t i = start; i < kN; ++i) {
            const double t = static_cast<double>(i - start) / kFs;
            const double decay = std::exp(-zeta * wn * t);
            if (decay < 1e-12) break;
            x[i] += decay * std::sin(wd * t);
        }
    }
    EnvelopeAnalyzer env(kBand, kFs, kN);
    ImpulseCounter counter(ImpulseConfig{}, kFs, kN);
    const auto xf = to_float(x);
    env.process(xf);
    const auto events = counter.count(env.squared_envelope());
    INFO("events = " << events << ", threshold = " << counter.last_threshold());
    CHECK(events >= 39);
    CHECK(events <= 41);
}

TEST_CASE("An all-zero input counts no impulse", "[signal]") {
    // Definition: a zero median gives a zero threshold, which must not count every sample.
    ImpulseCounter counter(ImpulseConfig{}, kFs, kN);
    const std::vector<double> zeros(kN, 0.0);
    CHECK(counter.count(zeros) == 0);
    CHECK(counter.last_threshold() == 0.0);
    // The same through the envelope analyser.
    EnvelopeAnalyzer env(kBand, kFs, kN);
    const std::vector<float> silence(kN, 0.0f);
    env.process(silence);
    CHECK(counter.count(env.squared_envelope()) == 0);
}

TEST_CASE("The impulse count equals a sample-by-sample count with the same threshold and re-arming", "[signal]") {
    // Squared envelopes of exponential noise with bursts of many lengths and
    // gaps (so chunks of 16 are quiet, loud and mixed); the reference is the
    // rule of impulses.hpp applied one sample at a time.
    std::mt19937_64 rng(7);
    std::exponential_distribution<double> e(1.0);
    ImpulseCounter counter(ImpulseConfig{1e-6, 0.5e-3}, 48000.0, 48000);  // re-arm after 24 samples
    for (int trial = 0; trial < 30; ++trial) {
        std::vector<double> sq(48000 - static_cast<std::size_t>(trial) * 37);
        for (auto& v : sq) v = e(rng);
        for (int b = 0; b < 20 + trial * 5; ++b) {
            const std::size_t at = rng() % sq.size(), len = 1 + rng() % 60;
            for (std::size_t i = at; i < std::min(sq.size(), at + len); ++i) sq[i] = 40.0 + 40.0 * e(rng);
        }
        const std::size_t got = counter.count(sq);
        const double thr2 = counter.last_threshold() * counter.last_threshold();
        std::size_t events = 0, below = 24;
        bool armed = true;
        for (const double v : sq) {
            if (v > thr2) {
                if (armed) ++events;
                armed = false;
                below = 0;
            } else if (!armed && ++below >= 24) {
                armed = true;
            }
        }
        REQUIRE(events > 0);
        REQUIRE(got == events);
        // The threshold is the factor times the exact median magnitude.
        std::vector<double> copy(sq);
        std::nth_element(copy.begin(), copy.begin() + static_cast<std::ptrdiff_t>(copy.size() / 2), copy.end());
        REQUIRE(counter.last_threshold() == counter.factor() * std::sqrt(copy[copy.size() / 2]));
    }
}
