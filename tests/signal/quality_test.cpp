#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <limits>
#include <numbers>
#include <random>
#include <span>
#include <vector>

#include "signal/quality.hpp"

using cavitas::dsp::QualityConfig;
using cavitas::dsp::QualityMeter;

namespace {

std::vector<float> sine(std::size_t n, double amplitude, double cycles_per_sample = 0.0123) {
    std::vector<float> x(n);
    for (std::size_t i = 0; i < n; ++i)
        x[i] = static_cast<float>(amplitude * std::sin(2 * std::numbers::pi * cycles_per_sample * static_cast<double>(i)));
    return x;
}

}  // namespace

TEST_CASE("A clean sine has no clipping, dropouts or flat tops", "[signal]") {
    QualityMeter m({1.0, 0.999, 3, 64});
    auto x = sine(100000, 0.5);
    m.process(x);
    const auto c = m.counts();
    CHECK(c.samples == 100000);
    CHECK(c.at_full_scale == 0);
    CHECK(c.dropout_samples == 0);
    CHECK(c.flat_top_samples() == 0);
    CHECK(c.longest_flat_run < 3);
    CHECK_THAT(c.ac_rms(), Catch::Matchers::WithinRel(0.5 / std::sqrt(2.0), 1e-3));  // A / sqrt 2, definition
}

TEST_CASE("A sine clipped at full scale is counted at full scale and as flat tops", "[signal]") {
    QualityMeter m({1.0, 0.999, 3, 64});
    auto x = sine(100000, 2.0);
    for (auto& v : x) v = std::clamp(v, -1.0f, 1.0f);
    m.process(x);
    const auto c = m.counts();
    // |2 sin| >= 1 for 2/3 of the time (arcsin(1/2) = pi/6 each side): computed from the definition.
    const double share = static_cast<double>(c.at_full_scale) / static_cast<double>(c.samples);
    CHECK_THAT(share, Catch::Matchers::WithinAbs(2.0 / 3.0, 0.01));
    CHECK(c.flat_top_samples() > c.samples / 2);
}

TEST_CASE("Flat tops below full scale are found at the record's own extremes", "[signal]") {
    // An analogue overload at 0.6 of full scale, or a float file with no full scale.
    QualityMeter m({0.0, 0.999, 3, 64});
    auto x = sine(50000, 1.0);
    for (auto& v : x) v = std::clamp(v, -0.6f, 0.6f);
    m.process(x);
    const auto c = m.counts();
    CHECK(c.at_full_scale == 0);  // full scale unknown
    CHECK(static_cast<double>(c.flat_top_samples()) / static_cast<double>(c.samples) > 0.3);
}

TEST_CASE("Stuck stretches count as dropouts only from the minimum run length", "[signal]") {
    auto x = sine(20000, 0.5);
    for (std::size_t i = 1000; i < 1063; ++i) x[i] = 0.0f;  // 63 samples: one short of a dropout
    for (std::size_t i = 5000; i < 5200; ++i) x[i] = 0.25f;  // 200 samples stuck at a value
    QualityMeter m({1.0, 0.999, 3, 64});
    m.process(x);
    const auto c = m.counts();
    CHECK(c.dropout_samples == 200);
    CHECK(c.longest_flat_run == 200);
}

TEST_CASE("Runs are measured across block boundaries and at the end of the data", "[signal]") {
    auto x = sine(10000, 0.5);
    for (std::size_t i = 9900; i < 10000; ++i) x[i] = 0.0f;  // stuck at the end
    QualityMeter one({1.0, 0.999, 3, 64}), blocks({1.0, 0.999, 3, 64});
    one.process(x);
    for (std::size_t i = 0; i < x.size(); i += 333)
        blocks.process(std::span<float>(x.data() + i, std::min<std::size_t>(333, x.size() - i)));
    CHECK(one.counts().dropout_samples == 100);
    CHECK(blocks.counts().dropout_samples == 100);
    CHECK(blocks.counts().zero_samples == one.counts().zero_samples);
}

TEST_CASE("Non-finite samples are counted and replaced by zero", "[signal]") {
    std::vector<float> x = {0.1f, std::numeric_limits<float>::quiet_NaN(), 0.2f, std::numeric_limits<float>::infinity()};
    QualityMeter m({1.0, 0.999, 3, 64});
    m.process(x);
    CHECK(m.counts().non_finite == 2);
    CHECK(x[1] == 0.0f);
    CHECK(x[3] == 0.0f);
}

// The meter against the plain definition of each count, sample by sample, on
// quantised noise with clipped stretches, stuck runs and non-finite samples,
// fed in blocks of random sizes; and the same record in one block must give
// bit-identical counts (sums included).
TEST_CASE("QualityMeter equals the sample-by-sample definition, whatever the blocks", "[signal]") {
    std::mt19937 rng(7);
    std::normal_distribution<double> g(0.0, 0.3);
    std::vector<float> x(50000);
    for (auto& v : x) v = static_cast<float>(std::round(std::clamp(g(rng), -1.0, 1.0) * 200.0) / 200.0);
    for (std::size_t i = 1000; i < 1010; ++i) x[i] = 1.0f;    // flat top at full scale
    for (std::size_t i = 2000; i < 2100; ++i) x[i] = 0.25f;   // stuck
    x[3000] = std::numeric_limits<float>::quiet_NaN();
    x[3001] = -std::numeric_limits<float>::infinity();
    const QualityConfig cfg{1.0, 0.999, 3, 64};
    // The definition.
    std::size_t non_finite = 0, at_fs = 0, zeros = 0, longest = 0, dropout = 0, run = 0;
    double max_abs = 0.0, sum = 0.0, sum_sq = 0.0;
    float last = 0.0f;
    for (std::size_t i = 0; i < x.size(); ++i) {
        float v = x[i];
        if (!std::isfinite(v)) { ++non_finite; v = 0.0f; }
        const double d = v;
        at_fs += std::abs(d) >= 0.999;
        zeros += v == 0.0f;
        max_abs = std::max(max_abs, std::abs(d));
        if (i > 0 && v == last) ++run;
        else { if (run >= 64) dropout += run; run = 1; }
        longest = std::max(longest, run);
        last = v;
        sum += d;
        sum_sq += d * d;
    }
    if (run >= 64) dropout += run;
    auto y = x;
    QualityMeter blocks(cfg), one(cfg);
    std::uniform_int_distribution<std::size_t> len(1, 5000);
    for (std::size_t i = 0; i < y.size();) {
        const std::size_t k = std::min(len(rng), y.size() - i);
        blocks.process(std::span<float>(y.data() + i, k));
        i += k;
    }
    auto z = x;
    one.process(z);
    const auto b = blocks.counts(), o = one.counts();
    CHECK(b.samples == x.size());
    CHECK(b.non_finite == non_finite);
    CHECK(b.at_full_scale == at_fs);
    CHECK(b.zero_samples == zeros);
    CHECK(b.longest_flat_run == longest);
    CHECK(b.dropout_samples == dropout);
    CHECK(b.max_abs == max_abs);
    CHECK_THAT(b.sum, Catch::Matchers::WithinAbs(sum, 1e-9));
    CHECK_THAT(b.sum_sq, Catch::Matchers::WithinRel(sum_sq, 1e-12));
    CHECK(b.flat_top_samples() == 10);
    CHECK(y[3000] == 0.0f);
    CHECK(y[3001] == 0.0f);
    // Block boundaries change nothing, not even the last bit of the sums.
    CHECK(o.sum == b.sum);
    CHECK(o.sum_sq == b.sum_sq);
    CHECK(o.max_abs == b.max_abs);
    CHECK(o.longest_flat_run == b.longest_flat_run);
    CHECK(o.dropout_samples == b.dropout_samples);
}
