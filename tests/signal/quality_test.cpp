#include <catch2/catch.hpp>

#include <cmath>
#include <limits>
#include <numbers>
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
