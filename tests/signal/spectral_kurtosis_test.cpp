// Tests of the STFT spectral kurtosis (signal/spectral_kurtosis.hpp).
//
// Reference: J. Antoni, "The spectral kurtosis: a useful tool for characterising
// non-stationary signals", MSSP 20 (2006) 282-307: SK = 0 for stationary
// Gaussian noise, -1 for a pure tone, > 0 for transients; variance 4 / K for K
// independent frames of Gaussian noise.
#include <catch2/catch.hpp>

#include "tests/support/noise.hpp"

#include <algorithm>
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <numbers>
#include <random>
#include <stdexcept>
#include <vector>

#include "signal/spectral_kurtosis.hpp"

using cavitas::dsp::SpectralKurtosis;
using cavitas::dsp::SpectralKurtosisConfig;
using Catch::Matchers::Contains;
using Catch::Matchers::WithinAbs;
using Catch::Matchers::WithinRel;

namespace {

using cavitas::testing::gaussian_noise;
using cavitas::testing::to_float;
inline std::vector<double> gaussian(std::size_t n, std::uint64_t seed) { return gaussian_noise(n, seed); }

constexpr double kTwoPi = 2.0 * std::numbers::pi;

// Samples for exactly `frames` frames of window w with hop w/4.
std::size_t samples_for(std::size_t window, std::size_t frames) { return window + (frames - 1) * (window / 4); }

}  // namespace

TEST_CASE("The Gaussian threshold is z(1 - alpha/2) * 2 / sqrt(K)", "[signal]") {
    // Computed from the definition with the two-sided 95 % point z = 1.959964:
    // 1.959963985 * 2 / sqrt(100) = 0.391993.
    CHECK_THAT(SpectralKurtosis::gaussian_threshold(0.95, 100), WithinAbs(0.391993, 1e-6));
    // Standard normal quantiles to 1e-9 (tabulated values, common practice, no source).
    CHECK_THAT(SpectralKurtosis::gaussian_threshold(0.95, 4), WithinAbs(1.959963984540054, 1e-9));
    CHECK_THAT(SpectralKurtosis::gaussian_threshold(0.99, 4), WithinAbs(2.575829303548901, 1e-9));
    CHECK_THAT(SpectralKurtosis::gaussian_threshold(0.9, 4), WithinAbs(1.644853626951473, 1e-9));
    CHECK_THAT(SpectralKurtosis::gaussian_threshold(0.5, 4), WithinAbs(0.674489750196082, 1e-9));
    CHECK_THAT(SpectralKurtosis::gaussian_threshold(0.999, 4), WithinAbs(3.290526731491926, 1e-9));
    // Deep tail and the erfc round trip: P(|Z| > z) = 1 - p (computed from the definition).
    for (double p : {0.5, 0.8, 0.95, 0.995, 0.99999, 1.0 - 1e-12}) {
        const double z = SpectralKurtosis::gaussian_threshold(p, 4);
        CHECK_THAT(std::erfc(z / std::numbers::sqrt2), WithinRel(1.0 - p, 1e-9));
    }
    CHECK_THROWS_AS(SpectralKurtosis::gaussian_threshold(1.0, 100), std::invalid_argument);
    CHECK_THROWS_AS(SpectralKurtosis::gaussian_threshold(0.0, 100), std::invalid_argument);
    CHECK_THROWS_AS(SpectralKurtosis::gaussian_threshold(0.95, 0), std::invalid_argument);
}

TEST_CASE("An invalid spectral-kurtosis setup is rejected", "[signal]") {
    CHECK_THROWS_WITH(SpectralKurtosis(SpectralKurtosisConfig{0}, 48000.0),
                      Contains("SpectralKurtosisConfig.window_size = 0"));
    CHECK_THROWS_AS(SpectralKurtosis(SpectralKurtosisConfig{254}, 48000.0), std::invalid_argument);
    CHECK_THROWS_AS(SpectralKurtosis(SpectralKurtosisConfig{4}, 48000.0), std::invalid_argument);
    CHECK_THROWS_WITH(SpectralKurtosis(SpectralKurtosisConfig{256}, 0.0), Contains("fs_hz"));
    CHECK_THROWS_AS(SpectralKurtosis(SpectralKurtosisConfig{256}, -1.0), std::invalid_argument);

    SpectralKurtosis sk(SpectralKurtosisConfig{256}, 48000.0);
    CHECK(sk.bins() == 129);
    CHECK_THAT(sk.bin_hz(), WithinRel(187.5, 1e-12));
}

TEST_CASE("Silence gives zero spectral kurtosis, and two frames are enough", "[signal]") {
    // Edge cases: an all-zero input has no power in any bin and reads 0, never
    // NaN; the shortest input, window + hop samples, makes K = 2 frames, where the
    // (K+1)/(K-1) = 3 factor applies: a tone then reads 3 * 1 - 2 = 1 (computed
    // from the definition).
    SpectralKurtosis sk(SpectralKurtosisConfig{256}, 48000.0);
    std::vector<double> out(sk.bins(), 99.0);
    sk.compute(std::vector<float>(256 * 4, 0.0f), out);
    for (double v : out) CHECK(v == 0.0);
    std::vector<double> x(256 + 64);
    for (std::size_t i = 0; i < x.size(); ++i) x[i] = std::sin(kTwoPi * 40.0 * static_cast<double>(i) / 256.0);
    sk.compute(to_float(x), out);
    CHECK_THAT(out[40], WithinAbs(1.0, 1e-6));
}

TEST_CASE("White Gaussian noise has spectral kurtosis near zero", "[signal]") {
    // Antoni (2006): E[SK] = 0 for Gaussian noise, sd 2 / sqrt(K) for K
    // independent frames. With hop = window/4 the frames overlap by 75 % and are
    // not independent, so single bins spread wider than that (about 2x here), but
    // the mean over the 125 interior bins has sd ~ 2 * 0.1 / sqrt(125) = 0.02 at
    // K = 400: |mean| < 0.1 is a 5-sd bound, and the mean also sits inside the
    // 95 % Gaussian band (computed from the definition).
    const std::size_t w = 256, frames = 400;
    SpectralKurtosis sk(SpectralKurtosisConfig{w}, 48000.0);
    std::vector<double> out(sk.bins());
    sk.compute(to_float(gaussian(samples_for(w, frames), 3)), out);
    double mean = 0.0;
    for (std::size_t k = 2; k + 2 < out.size(); ++k) mean += out[k];
    mean /= static_cast<double>(out.size() - 4);
    const double threshold = SpectralKurtosis::gaussian_threshold(0.95, frames);
    INFO("mean SK over bins " << mean << ", 95 % threshold " << threshold);
    CHECK(std::abs(mean) < 0.1);
    CHECK(std::abs(mean) < threshold);
    for (std::size_t k = 2; k + 2 < out.size(); ++k) CHECK(std::abs(out[k]) < 4.0 * threshold);
    // DC, Nyquist and their neighbours are forced to 0.
    CHECK(out[0] == 0.0);
    CHECK(out[1] == 0.0);
    CHECK(out[out.size() - 2] == 0.0);
    CHECK(out[out.size() - 1] == 0.0);
}

TEST_CASE("A pure tone has spectral kurtosis -1 in its bin", "[signal]") {
    // Antoni (2006): a stationary sinusoid has constant |X|, so <P^2>/<P>^2 = 1
    // and SK = (K+1)/(K-1) - 2 = -1 + 2/(K-1) (computed from the definition).
    const double fs_hz = 48000.0;
    const std::size_t w = 256, frames = 200;
    SpectralKurtosis sk(SpectralKurtosisConfig{w}, fs_hz);
    std::vector<double> out(sk.bins());
    for (double f : {40.0 * 187.5, 40.3 * 187.5}) {  // on a bin centre and between bins
        std::vector<double> x(samples_for(w, frames));
        for (std::size_t i = 0; i < x.size(); ++i) x[i] = 2.0 * std::sin(kTwoPi * f * static_cast<double>(i) / fs_hz);
        sk.compute(to_float(x), out);
        CAPTURE(f);
        CHECK_THAT(out[40], WithinAbs(-1.0, 0.05));
        CHECK_THAT(out[40], WithinAbs(-1.0 + 2.0 / static_cast<double>(frames - 1), 1e-3));
    }
}

TEST_CASE("An impulse train raises spectral kurtosis over its resonance band", "[signal]") {
    // Cavitation-like test signal (common practice, no source): unit white noise
    // plus a 9 kHz, zeta = 0.02 resonance struck 50 times a second. SK over the
    // resonance's bins must exceed the 99 % Gaussian threshold, while bins far
    // from it stay near 0 (Antoni 2006).
    const double fs_hz = 48000.0;
    const std::size_t w = 256, frames = 400;
    auto x = gaussian(samples_for(w, frames), 7);
    const double wn = kTwoPi * 9000.0, zeta = 0.02;
    const auto ring = static_cast<std::size_t>(std::log(1e6) / (zeta * wn) * fs_hz);
    for (double strike = 0.0; strike < static_cast<double>(x.size()); strike += fs_hz / 50.0) {
        const auto i0 = static_cast<std::size_t>(std::ceil(strike));
        for (std::size_t i = i0; i < std::min(x.size(), i0 + ring); ++i) {
            const double t = (static_cast<double>(i) - strike) / fs_hz;
            x[i] += 8.0 * std::exp(-zeta * wn * t) * std::sin(wn * std::sqrt(1.0 - zeta * zeta) * t);
        }
    }
    SpectralKurtosis sk(SpectralKurtosisConfig{w}, fs_hz);
    std::vector<double> out(sk.bins());
    sk.compute(to_float(x), out);
    const double threshold = SpectralKurtosis::gaussian_threshold(0.99, frames);
    double band = 0.0, far = 0.0;
    std::size_t band_bins = 0, far_bins = 0;
    for (std::size_t k = 2; k + 2 < out.size(); ++k) {
        const double f = static_cast<double>(k) * sk.bin_hz();
        if (std::abs(f - 9000.0) <= 500.0) {
            CHECK(out[k] > threshold);
            band += out[k];
            ++band_bins;
        } else if (std::abs(f - 9000.0) > 4000.0) {
            far += out[k];
            ++far_bins;
        }
    }
    band /= static_cast<double>(band_bins);
    far /= static_cast<double>(far_bins);
    INFO("mean SK within 500 Hz of 9 kHz " << band << ", beyond 4 kHz " << far << ", 99 % threshold " << threshold);
    CHECK(band_bins == 5);
    CHECK(band > 5.0 * threshold);
    CHECK(std::abs(far) < threshold);
    const auto peak = std::max_element(out.begin(), out.end()) - out.begin();
    CHECK(std::abs(static_cast<double>(peak) * sk.bin_hz() - 9000.0) <= 500.0);
}

TEST_CASE("Spectral kurtosis does not depend on the signal's scale", "[signal]") {
    // A ratio of moments of |X|^2 (computed from the definition). x * 1024 is exact in float.
    const std::size_t w = 128;
    SpectralKurtosis sk(SpectralKurtosisConfig{w}, 25600.0);
    auto x = gaussian(samples_for(w, 100), 9);
    for (std::size_t i = 0; i < x.size(); i += 300) x[i] += 20.0;  // some impulses, so SK is not ~0 everywhere
    std::vector<float> a = to_float(x), b(a.size());
    for (std::size_t i = 0; i < a.size(); ++i) b[i] = a[i] * 1024.0f;
    std::vector<double> oa(sk.bins()), ob(sk.bins());
    sk.compute(a, oa);
    sk.compute(b, ob);
    for (std::size_t k = 0; k < oa.size(); ++k)
        CHECK_THAT(ob[k], WithinAbs(oa[k], 1e-9 * std::max(1.0, std::abs(oa[k]))));
    CHECK(*std::max_element(oa.begin(), oa.end()) > 1.0);
}

TEST_CASE("Spectral kurtosis from single-precision frames agrees with double precision", "[signal]") {
    // The same impulsive noise through both paths; the frames' transforms
    // differ by float rounding (about 1e-7 of each bin), the sums are in double
    // in both. Tolerance stated here; the largest difference found is printed.
    const double fs_hz = 96000.0;
    const std::size_t w = 1024, frames = 186;
    auto x = gaussian(samples_for(w, frames), 21);
    for (std::size_t i = 0; i < x.size(); i += 977) x[i] += 15.0;
    const auto xf = to_float(x);
    SpectralKurtosis d(SpectralKurtosisConfig{w, w / 2, false}, fs_hz), f(SpectralKurtosisConfig{w, w / 2, true}, fs_hz);
    std::vector<double> od(d.bins()), of(f.bins());
    d.compute(xf, od);
    f.compute(xf, of);
    double worst = 0.0;
    for (std::size_t k = 0; k < od.size(); ++k) {
        CHECK_THAT(of[k], WithinAbs(od[k], 1e-5));
        worst = std::max(worst, std::abs(of[k] - od[k]));
    }
    INFO("largest |SK float - SK double| " << worst);
    CHECK(worst > 0.0);  // the two paths really differ (else this compares a path with itself)
    CHECK(*std::max_element(od.begin(), od.end()) > 0.5);
}
