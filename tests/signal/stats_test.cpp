// Analytic-truth tests of moments() and MomentAccumulator (signal/stats.hpp).
//
// Conventions under test: rms about the mean, peak = max |x - mean|,
// crest = peak / rms, kurtosis = m4 / m2^2 with population (1/N) moments.
#include <catch2/catch.hpp>

#include "tests/support/noise.hpp"

#include <algorithm>
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <iterator>
#include <limits>
#include <numbers>
#include <random>
#include <span>
#include <stdexcept>
#include <vector>

#include "signal/stats.hpp"

using cavitas::dsp::MomentAccumulator;
using cavitas::dsp::Moments;
using cavitas::dsp::moments;
using Catch::Matchers::WithinAbs;
using Catch::Matchers::WithinRel;

namespace {

using cavitas::testing::gaussian_noise;
using cavitas::testing::to_float;

constexpr double kTwoPi = 2.0 * std::numbers::pi;

// A sin(2 pi t / period) over a whole number of periods.
std::vector<double> sine(std::size_t periods, std::size_t period, double amplitude) {
    std::vector<double> v(periods * period);
    for (std::size_t i = 0; i < v.size(); ++i)
        v[i] = amplitude * std::sin(kTwoPi * static_cast<double>(i) / static_cast<double>(period));
    return v;
}

Moments of(const std::vector<double>& v) { return moments(std::span<const double>(v)); }

}  // namespace

TEST_CASE("A full-period sine has rms A over root 2, crest factor root 2 and kurtosis 1.5", "[signal]") {
    // Computed from the definition: over whole periods (period >= 5 samples) the
    // sample means of sin^2 and sin^4 are exactly 1/2 and 3/8, so rms = A/sqrt 2
    // and kurtosis = (3/8) / (1/2)^2 = 1.5; a period divisible by 4 samples the
    // crest exactly, so peak = A and crest = sqrt 2.
    // Tolerance 1e-9: only double rounding over 10^4 samples separates the
    // result from the exact values.
    const double amplitude = 3.25;
    const auto m = of(sine(10, 1000, amplitude));
    CHECK(m.count == 10000);
    CHECK_THAT(m.mean, WithinAbs(0.0, 1e-9));
    CHECK_THAT(m.rms, WithinRel(amplitude / std::numbers::sqrt2, 1e-9));
    CHECK_THAT(m.peak, WithinRel(amplitude, 1e-9));
    CHECK_THAT(m.crest, WithinRel(std::numbers::sqrt2, 1e-9));
    CHECK_THAT(m.kurtosis, WithinRel(1.5, 1e-9));
}

TEST_CASE("A square wave has kurtosis 1", "[signal]") {
    // Computed from the definition: |x - mean| = A everywhere, so m4 = A^4 = m2^2.
    // Tolerance 1e-12: exact up to rounding.
    std::vector<double> v(4000);
    for (std::size_t i = 0; i < v.size(); ++i) v[i] = (i / 50) % 2 == 0 ? 0.8 : -0.8;
    const auto m = of(v);
    CHECK_THAT(m.kurtosis, WithinRel(1.0, 1e-12));
    CHECK_THAT(m.rms, WithinRel(0.8, 1e-12));
}

TEST_CASE("A unit impulse every P samples has kurtosis (P^2 - 3P + 3) / (P - 1)", "[signal]") {
    // Computed from the definition with population moments: the mean is 1/P,
    // m2 = (P-1)/P^2, m4 = (P-1)((P-1)^3 + 1)/P^5, so
    // m4 / m2^2 = ((P-1)^3 + 1) / (P (P-1)) = (P^2 - 3P + 3)/(P - 1).
    // For P = 100: 9703 / 99 = 98.0101...
    // Tolerance 1e-9 relative: double rounding only.
    const std::size_t period = 100;
    std::vector<double> v(50 * period, 0.0);
    for (std::size_t i = 0; i < v.size(); i += period) v[i] = 1.0;
    const double p = static_cast<double>(period);
    const double expected = (p * p - 3.0 * p + 3.0) / (p - 1.0);
    REQUIRE_THAT(expected, WithinAbs(98.0101, 1e-4));
    CHECK_THAT(of(v).kurtosis, WithinRel(expected, 1e-9));
}

TEST_CASE("White Gaussian noise has kurtosis 3 within its sampling error", "[signal]") {
    // Gaussian kurtosis is 3 (computed from the definition, E z^4 = 3 (E z^2)^2).
    // The sample kurtosis b2 of N independent normals has variance
    // 24 N (N-2)(N-3) / ((N+1)^2 (N+3)(N+5)) ~ 24 / N (E.S. Pearson, Biometrika
    // 22 (1930)); N = 2^17 gives a standard deviation of 0.0135, and the
    // tolerance 0.07 is ~5 standard deviations, so a correct estimator fails
    // for fewer than 1 seed in 10^6, while an excess-kurtosis mix-up (off by 3)
    // or a missing mean removal (see below) would not pass.
    const std::size_t n = std::size_t{1} << 17;
    const double sigma = std::sqrt(24.0 / static_cast<double>(n));
    REQUIRE(5.0 * sigma < 0.07);
    auto v = gaussian_noise(n, 20240611);
    // Scale and offset must not matter; with the offset equal to sigma, moments
    // taken about 0 instead of the mean would read kurtosis 2.5 and rms 0.57.
    for (auto& x : v) x = 0.4 * x + 0.4;
    const auto m = of(v);
    CHECK_THAT(m.kurtosis, WithinAbs(3.0, 0.07));
    // rms estimates 0.4 with relative standard deviation 1/sqrt(2N) = 0.002; 1 % is 5 sigma.
    CHECK_THAT(m.rms, WithinRel(0.4, 0.01));
}

TEST_CASE("A DC offset changes the mean but not rms, peak or kurtosis", "[signal]") {
    // Computed from the definition: every statistic but the mean is taken about the mean.
    // Tolerance 1e-9 relative: subtracting the offset (250) again costs a few ulps of 250.
    const auto base = gaussian_noise(8192, 7);
    auto shifted = base;
    for (auto& x : shifted) x += 250.0;
    const auto a = of(base);
    const auto b = of(shifted);
    CHECK_THAT(b.mean - a.mean, WithinRel(250.0, 1e-9));
    CHECK_THAT(b.rms, WithinRel(a.rms, 1e-9));
    CHECK_THAT(b.peak, WithinRel(a.peak, 1e-9));
    CHECK_THAT(b.kurtosis, WithinRel(a.kurtosis, 1e-9));
}

TEST_CASE("Accumulating uneven blocks gives the one-shot moments even on a large DC offset", "[signal]") {
    // The accumulator's raw sums are shifted by the first sample. Raw sums about
    // zero would hold r4 ~ 1e16 for a central m4 ~ 10, i.e. no correct digit
    // left in double after the conversion to central moments.
    // Tolerance 1e-9 relative (as asked of the accumulator): the two-pass one-shot
    // result is accurate to ~1e-13 here, the shifted sums to ~1e-12.
    auto v = gaussian_noise(20000, 99);
    for (std::size_t i = 0; i < v.size(); ++i)
        v[i] = 1.0e4 + v[i] + (i % 500 == 0 ? 8.0 : 0.0);  // some impulses: kurtosis well above 3
    const auto one_shot = of(v);

    MomentAccumulator acc;
    const std::size_t blocks[] = {1, 7, 1000, 3, 4096, 513, 2};
    std::size_t pos = 0, b = 0;
    while (pos < v.size()) {
        const std::size_t len = std::min(blocks[b++ % std::size(blocks)], v.size() - pos);
        acc.add(std::span<const double>(v.data() + pos, len));
        pos += len;
    }
    acc.add(std::span<const double>{});  // an empty block is harmless
    const auto streamed = acc.result();

    REQUIRE(one_shot.kurtosis > 3.5);
    CHECK(streamed.count == one_shot.count);
    CHECK_THAT(streamed.mean, WithinRel(one_shot.mean, 1e-9));
    CHECK_THAT(streamed.rms, WithinRel(one_shot.rms, 1e-9));
    CHECK_THAT(streamed.peak, WithinRel(one_shot.peak, 1e-9));
    CHECK_THAT(streamed.crest, WithinRel(one_shot.crest, 1e-9));
    CHECK_THAT(streamed.kurtosis, WithinRel(one_shot.kurtosis, 1e-9));
}

TEST_CASE("A constant input gives rms, peak, crest and kurtosis of 0 and never NaN", "[signal]") {
    // Documented convention (signal/stats.hpp), not a limit: m2 = 0 makes the
    // ratios 0/0. 0.1 is not exact in binary, so a summed mean may be off by
    // an ulp; the contract still asks for exact zeros.
    const std::vector<double> d(1000, 0.1);
    const std::vector<float> f(1000, 0.1f);
    MomentAccumulator acc;
    acc.add(std::span<const double>(d));
    const Moments results[] = {of(d), moments(std::span<const float>(f)), acc.result()};
    const char* names[] = {"moments(double)", "moments(float)", "MomentAccumulator"};
    for (std::size_t i = 0; i < std::size(results); ++i) {
        const Moments& m = results[i];
        INFO(names[i] << ": rms = " << m.rms << ", crest = " << m.crest << ", kurtosis = " << m.kurtosis);
        CHECK(m.rms == 0.0);
        CHECK(m.peak == 0.0);
        CHECK(m.crest == 0.0);
        CHECK(m.kurtosis == 0.0);
        CHECK_FALSE(std::isnan(m.kurtosis));
        CHECK_FALSE(std::isnan(m.crest));
    }
}

TEST_CASE("Moments of an empty input are an error", "[signal]") {
    CHECK_THROWS_AS(moments(std::span<const double>{}), std::invalid_argument);
    CHECK_THROWS_AS(moments(std::span<const float>{}), std::invalid_argument);
    MomentAccumulator acc;
    CHECK_THROWS_AS(acc.result(), std::invalid_argument);
    acc.add(std::span<const float>{});
    CHECK_THROWS_AS(acc.result(), std::invalid_argument);
}

TEST_CASE("Standard normal quantile and tail", "[signal]") {
    // scipy.stats.norm (scipy 1.10.1): ppf(0.975) = 1.959963984540054, ppf(1e-6) = -4.753424308822899,
    // sf(3) = 0.0013498980316300933.
    CHECK_THAT(cavitas::dsp::normal_quantile(0.975), Catch::Matchers::WithinRel(1.959963984540054, 1e-13));
    CHECK_THAT(cavitas::dsp::normal_quantile(1e-6), Catch::Matchers::WithinRel(-4.753424308822899, 1e-12));
    CHECK_THAT(cavitas::dsp::normal_sf(3.0), Catch::Matchers::WithinRel(0.0013498980316300933, 1e-13));
    CHECK(cavitas::dsp::normal_quantile(0.5) == 0.0);
}

// OrderSelector against std::nth_element (the definition of the k-th order
// statistic it must reproduce exactly) on values spread over many binades,
// heavy ties, zeros and subnormals, and the fallback for negative and
// non-finite values.
TEST_CASE("OrderSelector returns exactly the k-th smallest value", "[signal]") {
    using cavitas::dsp::OrderSelector;
    std::mt19937_64 rng(20261202);
    std::normal_distribution<double> g(0.0, 1.0);
    std::uniform_int_distribution<int> tie(0, 5);
    const auto reference = [](std::vector<double> v, std::size_t k) {
        std::nth_element(v.begin(), v.begin() + static_cast<std::ptrdiff_t>(k), v.end());
        return v[k];
    };
    OrderSelector sel(5000);
    for (int trial = 0; trial < 40; ++trial) {
        const std::size_t n = 1 + static_cast<std::size_t>(rng() % 5000);
        std::vector<double> v(n);
        for (auto& x : v) {
            switch (trial % 5) {
                case 0: x = g(rng) * g(rng); x *= x; break;                    // squared, many binades
                case 1: x = std::exp(20.0 * g(rng)); break;                    // very wide range
                case 2: x = static_cast<double>(tie(rng)); break;              // ties and zeros
                case 3: x = std::ldexp(std::abs(g(rng)), -1070); break;        // subnormals
                default: x = g(rng); break;                                    // negatives: fallback
            }
        }
        if (trial == 7) v[n / 2] = std::numeric_limits<double>::infinity();   // non-finite: fallback
        for (const std::size_t k : {std::size_t{0}, n / 2, n - 1, static_cast<std::size_t>(rng() % n)}) {
            const double want = reference(v, k);
            REQUIRE(sel.select(v, k) == want);
            // With a hint: good (the answer itself), near, far off, useless: the same answer.
            for (const double near : {want, want * 1.05, want * 0.5, want * 3.0, 0.0, -1.0,
                                      std::numeric_limits<double>::quiet_NaN()})
                REQUIRE(sel.select_near(v, k, near) == want);
        }
    }
    {
        // A NaN among the values: no window count can hold it, so the hinted
        // search hands over to select(), which hands over to nth_element.
        std::vector<double> v{4.0, 1.0, std::numeric_limits<double>::quiet_NaN(), 2.0, 3.0, 2.1, 1.9};
        for (std::size_t k = 0; k < v.size(); ++k) {
            const double a = sel.select_near(v, k, 2.0), b = sel.select(v, k);
            REQUIRE((a == b || (std::isnan(a) && std::isnan(b))));
        }
    }
    std::vector<double> big(5001, 1.0);
    REQUIRE_THROWS_AS(sel.select(big, 0), std::invalid_argument);
    std::vector<double> three{3.0, 1.0, 2.0};
    REQUIRE_THROWS_AS(sel.select(three, 3), std::invalid_argument);
    REQUIRE(sel.select(three, 1) == 2.0);
}
