// Analytic-truth tests of WelchPsd, band_power and the dB helpers (signal/spectrum.hpp).
//
// Conventions under test: Hann (periodic) frames with 50 % overlap, frame mean
// removed, density scaling |X|^2 / (fs sum w^2), one-sided (interior bins doubled).
#include <catch2/catch.hpp>

#include "tests/support/noise.hpp"

#include <algorithm>
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <iterator>
#include <numbers>
#include <random>
#include <span>
#include <stdexcept>
#include <vector>

#include "signal/spectrum.hpp"

using cavitas::dsp::amplitude_db;
using cavitas::dsp::band_power;
using cavitas::dsp::power_db;
using cavitas::dsp::WelchConfig;
using cavitas::dsp::WelchPsd;
using Catch::Matchers::WithinAbs;
using Catch::Matchers::WithinRel;

namespace {

using cavitas::testing::gaussian_noise;
using cavitas::testing::to_float;

constexpr double kTwoPi = 2.0 * std::numbers::pi;

double sample_variance(const std::vector<double>& v) {
    double mean = 0.0;
    for (double x : v) mean += x;
    mean /= static_cast<double>(v.size());
    double s = 0.0;
    for (double x : v) s += (x - mean) * (x - mean);
    return s / static_cast<double>(v.size());
}

// Feed x to psd in blocks whose lengths cycle through `lengths`.
void push_in_blocks(WelchPsd& psd, const std::vector<double>& x, std::span<const std::size_t> lengths) {
    std::size_t pos = 0, b = 0;
    while (pos < x.size()) {
        const std::size_t len = std::min(lengths[b++ % lengths.size()], x.size() - pos);
        psd.push(std::span<const double>(x.data() + pos, len));
        pos += len;
    }
}

}  // namespace

TEST_CASE("White noise of variance s^2 gives a one-sided density of 2 s^2 / fs", "[signal]") {
    // Computed from the definition: a two-sided white density s^2 / fs folded
    // onto 0 .. fs/2 doubles to 2 s^2 / fs = s^2 / (fs/2).
    // Tolerance: the mean over interior bins 2 .. n/2-1 (DC, bin 1 and Nyquist
    // are left out because mean removal and single counting touch them) of
    // K = 1023 frames. A Hann bin averaged over 50 %-overlapped frames has a
    // relative variance of 1.06 / K (overlap correlation 0.167^2, F.J. Harris,
    // Proc. IEEE 66 (1978)); neighbouring Hann bins are correlated 4/9 (lag 1)
    // and 1/36 (lag 2) (computed from the definition of the window), so the
    // mean of M = 126 bins has a relative standard deviation of
    // sqrt(1.06 * 1.94 / (K M)) = 0.40 %. 2 % is 5 standard deviations.
    const double fs = 1024.0, sigma = 0.3;
    const std::size_t n = 256;
    const auto x = gaussian_noise(std::size_t{1} << 17, 4242, sigma);
    WelchPsd psd(WelchConfig{n}, fs);
    psd.push(std::span<const double>(x));
    REQUIRE(psd.frames() == 1023);
    const auto p = psd.psd();
    double mean = 0.0;
    for (std::size_t k = 2; k < n / 2; ++k) mean += p[k];
    mean /= static_cast<double>(n / 2 - 2);
    CHECK_THAT(mean, WithinRel(2.0 * sigma * sigma / fs, 0.02));
}

TEST_CASE("Integrating the PSD from 0 to fs/2 gives back the variance", "[signal]") {
    // Parseval for one Hann frame (computed from the definition): the integral of
    // the density-scaled one-sided PSD is sum (x - frame mean)^2 w^2 / sum w^2,
    // a w^2-weighted variance. It differs from the record's plain variance by
    // (a) the frame mean removal, a bias of -1/n = -0.4 % in expectation for
    // white noise, and (b) the uneven weighting: w^2 summed over 50 %-overlapped
    // Hann frames swings between 0.5 and 1, and the first and last half frames
    // get a single weight, so the two estimates differ by a sampling error of
    // order 1/sqrt(N). Together: well under 1 % here; 3 % is the stated tolerance
    // (common practice, no source).
    const double fs = 2000.0, sigma = 1.7;
    const std::size_t n = 512;
    const auto x = gaussian_noise(50000, 77, sigma);
    WelchPsd psd(WelchConfig{n}, fs);
    psd.push(std::span<const double>(x));
    const auto p = psd.psd();
    CHECK_THAT(band_power(p, psd.bin_hz(), 0.0, fs / 2.0), WithinRel(sample_variance(x), 0.03));
}

TEST_CASE("A sine of amplitude A at an exact bin has band power A^2 / 2 around its line", "[signal]") {
    // Computed from the definition: the periodic Hann window's DFT is
    // n (1/2, -1/4, -1/4) at bins (0, +-1), so a sine at bin k0 >= 2 puts
    // n A/4 * (1, 1/2, 1/2) in bins k0, k0 +- 1 and nothing elsewhere (the
    // negative-frequency image does not reach positive bins). Its frames have zero
    // mean (whole cycles), and after density scaling the three bins integrate
    // to (A^2/2) exactly. Tolerance 1e-9 relative: double rounding only.
    const double fs = 4096.0, amplitude = 0.75;
    const std::size_t n = 1024;
    const double f0 = 100.0 * fs / static_cast<double>(n);  // bin 100 = 400 Hz
    std::vector<double> x(16 * n);
    for (std::size_t i = 0; i < x.size(); ++i)
        x[i] = amplitude * std::sin(kTwoPi * f0 * static_cast<double>(i) / fs + 0.4);
    WelchPsd psd(WelchConfig{n}, fs);
    psd.push(std::span<const double>(x));
    const auto p = psd.psd();
    const double bin = psd.bin_hz();
    CHECK_THAT(band_power(p, bin, f0 - 3.0 * bin, f0 + 3.0 * bin), WithinRel(amplitude * amplitude / 2.0, 1e-9));
    // The whole spectrum holds nothing else (same tolerance).
    CHECK_THAT(band_power(p, bin, 0.0, fs / 2.0), WithinRel(amplitude * amplitude / 2.0, 1e-9));
}

TEST_CASE("Streaming the record in uneven blocks gives exactly the one-shot PSD", "[signal]") {
    // Same samples, same frames, same arithmetic: the results must be identical
    // bit for bit (exact equality; the plans are made with FFTW_ESTIMATE, which
    // is deterministic).
    const double fs = 1000.0;
    const std::size_t n = 128;
    const auto x = gaussian_noise(5000, 5, 1.0);
    WelchPsd one_shot(WelchConfig{n}, fs);
    one_shot.push(std::span<const double>(x));
    WelchPsd streamed(WelchConfig{n}, fs);
    const std::size_t lengths[] = {1, 63, 64, 65, 300, 7, 2, 129};
    push_in_blocks(streamed, x, lengths);
    REQUIRE(streamed.frames() == one_shot.frames());
    const auto a = one_shot.psd();
    const auto b = streamed.psd();
    REQUIRE(a.size() == b.size());
    std::size_t mismatches = 0;
    for (std::size_t k = 0; k < a.size(); ++k)
        if (a[k] != b[k]) ++mismatches;
    CHECK(mismatches == 0);
}

TEST_CASE("The number of frames is (N - n) / hop + 1 with hop n / 2", "[signal]") {
    // Computed from the definition of 50 %-overlapped framing: frame j covers
    // samples j hop .. j hop + n - 1, so N samples hold floor((N - n)/hop) + 1
    // whole frames (0 when N < n), whatever the block lengths.
    const std::size_t n = 64, hop = n / 2;
    const std::size_t lengths[] = {5, 17, 1, 40};
    for (std::size_t total : {std::size_t{0}, std::size_t{63}, std::size_t{64}, std::size_t{95}, std::size_t{96},
                              std::size_t{97}, std::size_t{1000}, std::size_t{4096}}) {
        INFO("N = " << total);
        const std::size_t expected = total < n ? 0 : (total - n) / hop + 1;
        const std::vector<double> x(total, 0.5);
        WelchPsd one_shot(WelchConfig{n}, 100.0);
        one_shot.push(std::span<const double>(x));
        CHECK(one_shot.frames() == expected);
        WelchPsd streamed(WelchConfig{n}, 100.0);
        push_in_blocks(streamed, x, lengths);
        CHECK(streamed.frames() == expected);
    }
}

TEST_CASE("A segment size below 8 or a sample rate that is not positive is rejected naming it", "[signal]") {
    CHECK_THROWS_AS(WelchPsd(WelchConfig{7}, 1000.0), std::invalid_argument);
    CHECK_THROWS_WITH(WelchPsd(WelchConfig{7}, 1000.0), Catch::Contains("segment_size"));
    CHECK_THROWS_WITH(WelchPsd(WelchConfig{0}, 1000.0), Catch::Contains("segment_size"));
    CHECK_NOTHROW(WelchPsd(WelchConfig{8}, 1000.0));
    // The sample rate is a constructor argument, not a WelchConfig field; its
    // message names it as "sample rate".
    CHECK_THROWS_AS(WelchPsd(WelchConfig{64}, 0.0), std::invalid_argument);
    CHECK_THROWS_WITH(WelchPsd(WelchConfig{64}, 0.0), Catch::Contains("sample rate"));
    CHECK_THROWS_WITH(WelchPsd(WelchConfig{64}, -1.0), Catch::Contains("sample rate"));
    CHECK_THROWS_WITH(WelchPsd(WelchConfig{64}, std::nan("")), Catch::Contains("sample rate"));
}

TEST_CASE("An amplitude ratio of 2 reads 6.0206 dB, and so does the power ratio 4", "[signal]") {
    // Computed from the definition: 20 log10 2 = 10 log10 4 = 6.0205999...
    // Tolerance 1e-6 dB (the printed precision).
    CHECK_THAT(amplitude_db(2.0), WithinAbs(6.020600, 1e-6));
    CHECK_THAT(amplitude_db(3.0, 1.5), WithinAbs(6.020600, 1e-6));
    CHECK_THAT(power_db(4.0), WithinAbs(6.020600, 1e-6));
    // power_db takes its reference as an amplitude: power 8 against reference 2 (power 4).
    CHECK_THAT(power_db(8.0, 2.0), WithinAbs(3.010300, 1e-6));
    CHECK_THAT(amplitude_db(0.5), WithinAbs(-6.020600, 1e-6));
}

TEST_CASE("Zero power or amplitude reads -300 dB instead of minus infinity", "[signal]") {
    // Documented floor (signal/spectrum.hpp), so that silence stays finite.
    CHECK(power_db(0.0) == -300.0);
    CHECK(amplitude_db(0.0) == -300.0);
    CHECK(std::isfinite(power_db(0.0)));
    CHECK(std::isfinite(amplitude_db(0.0)));
}

TEST_CASE("A Hann PSD from a frame's DFT equals Welch over that one frame", "[signal]") {
    // Windowing in the frequency domain: the periodic Hann is 1/2 - (e^{+} + e^{-})/4, so
    // the windowed DFT is X_k/2 - (X_{k-1} + X_{k+1})/4 (computed from the definition);
    // the detrend removes X_0. Checked against WelchPsd with one frame, even and odd n.
    for (std::size_t n : {1024u, 1000u, 999u}) {
        std::vector<float> x(n);
        std::uint64_t st = 99 + n;
        for (std::size_t i = 0; i < n; ++i) {
            st = st * 6364136223846793005ULL + 1442695040888963407ULL;
            x[i] = static_cast<float>(0.3 + std::sin(0.05 * static_cast<double>(i)) +
                                      static_cast<double>(st >> 11) / 9007199254740992.0 - 0.5);
        }
        cavitas::dsp::WelchPsd welch(cavitas::dsp::WelchConfig{n}, 2000.0);
        welch.push(std::span<const float>(x));
        REQUIRE(welch.frames() == 1);
        const auto ref = welch.psd();
        cavitas::dsp::RealFft fft(n, cavitas::dsp::FftDirections::forward_only);
        for (std::size_t i = 0; i < n; ++i) fft.time()[i] = x[i];
        fft.forward();
        std::vector<double> got(n / 2 + 1);
        cavitas::dsp::hann_psd_from_spectrum(fft.spectrum(), n, 2000.0, got);
        double peak = 0.0;
        for (double v : ref) peak = std::max(peak, v);
        for (std::size_t k = 0; k < got.size(); ++k) CHECK_THAT(got[k], Catch::Matchers::WithinAbs(ref[k], 1e-12 * peak));
    }
}

TEST_CASE("Welch frames in single precision give the double-precision PSD", "[signal]") {
    // Gaussian noise and a tone 60 dB above its floor: every bin within single-precision
    // rounding of the double result relative to the largest bin (tolerance: our statement).
    const double fs = 8000.0;
    const std::size_t n = 4096;
    auto x = gaussian_noise(40000, 11, 1e-3);
    for (std::size_t i = 0; i < x.size(); ++i) x[i] += std::sin(2.0 * 3.141592653589793 * 400.0 * static_cast<double>(i) / fs);
    WelchPsd d(WelchConfig{n}, fs);
    WelchPsd f(WelchConfig{n, true}, fs);
    d.push(std::span<const double>(x));
    f.push(std::span<const double>(x));
    REQUIRE(f.frames() == d.frames());
    const auto a = d.psd(), b = f.psd();
    const double top = *std::max_element(a.begin(), a.end());
    for (std::size_t k = 0; k < a.size(); ++k) CHECK(std::abs(a[k] - b[k]) <= 1e-6 * top);
    // The noise floor far from the tone, where single-precision rounding would show first.
    REQUIRE(a.size() == n / 2 + 1);
    CHECK(a[1500] > 0.0);
    CHECK_THAT(b[1500], Catch::Matchers::WithinRel(a[1500], 1e-3));
}
