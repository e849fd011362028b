#include <catch2/catch.hpp>

#include "models/baseline.hpp"

using namespace cavitas::models;
using Catch::Matchers::WithinAbs;
using Catch::Matchers::WithinRel;

TEST_CASE("Robust statistics ignore one outlier", "[models]") {
    // median 3, |x - 3| = {2,1,0,1,97} -> MAD 1 -> sigma 1.4826 (Rousseeuw & Croux 1993 consistency factor).
    const RobustStat s = robust_stat({1, 2, 3, 4, 100});
    CHECK(s.median == 3.0);
    CHECK_THAT(s.sigma, WithinRel(1.4826, 1e-12));
    CHECK(s.count == 5);
}

TEST_CASE("Median and quantiles of an even-length series interpolate", "[models]") {
    CHECK(median({4, 1, 3, 2}) == 2.5);
    CHECK_THAT(quantile({0, 10}, 0.1), WithinAbs(1.0, 1e-12));
}

namespace {
RecordingAnalysis fake(double fs, double hf_db, std::size_t segments) {
    RecordingAnalysis a;
    a.setup.fs_hz = fs;
    a.rpm = 1485;
    a.vanes = 7;
    for (std::size_t k = 0; k < segments; ++k)
        for (std::size_t i = 0; i < kSegmentIndicatorCount; ++i)
            a.series.values[i].push_back(i == static_cast<std::size_t>(SegmentIndicator::hf_level_db)
                                             ? hf_db + 0.1 * static_cast<double>(k % 3)
                                             : 1.0);
    return a;
}
}  // namespace

TEST_CASE("A baseline pools the segments of all its recordings", "[models]") {
    const Baseline b = learn_baseline({fake(25600, -40, 8), fake(25600, -41, 8)});
    CHECK(b.segments == 16);
    CHECK(b.rpm == 1485);
    CHECK(b.vanes == 7);
    const RobustStat& hf = b[SegmentIndicator::hf_level_db];
    CHECK(hf.count == 16);
    CHECK(hf.median > -41.0);
    CHECK(hf.median < -39.8);
}

TEST_CASE("A baseline refuses no recordings or mixed sample rates", "[models]") {
    CHECK_THROWS_AS(learn_baseline({}), std::invalid_argument);
    CHECK_THROWS_AS(learn_baseline({fake(25600, -40, 4), fake(51200, -40, 4)}), std::invalid_argument);
}
