#include <catch2/catch.hpp>

#include <cmath>

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
            a.series.values[i].push_back(i == static_cast<std::size_t>(SegmentIndicator::hf_band_level)
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
    const RobustStat& hf = b[SegmentIndicator::hf_band_level];
    CHECK(hf.count == 16);
    CHECK(hf.median > -41.0);
    CHECK(hf.median < -39.8);
}

TEST_CASE("A baseline refuses no recordings or mixed sample rates", "[models]") {
    CHECK_THROWS_AS(learn_baseline({}), std::invalid_argument);
    CHECK_THROWS_AS(learn_baseline({fake(25600, -40, 4), fake(51200, -40, 4)}), std::invalid_argument);
}

namespace {
// A visit at `rpm` whose HF level is `hf_db` (+- 0.1 dB over its segments) and LF level `lf_db`.
RecordingAnalysis visit(double rpm, double hf_db, double lf_db = -20.0, std::size_t segments = 8) {
    RecordingAnalysis a = fake(25600, hf_db, segments);
    a.rpm = rpm;
    a.series[SegmentIndicator::lf_band_level].assign(segments, lf_db);
    return a;
}
}  // namespace

TEST_CASE("Levels are regressed on log speed when the visits span three speeds", "[models]") {
    // Hand-computed fit: x = log10(n / 1200) at 800, 1200, 1800 rpm = -0.176091, 0, +0.176091;
    // HF medians -40 + 50 x (m = 2.5): -48.80, -40.00, -31.20 (+0.1 from the fake's 0/0.1/0.2
    // pattern shifts every median alike, so the slope is exactly 50 dB/decade).
    std::vector<RecordingAnalysis> v;
    for (double rpm : {800.0, 1200.0, 1800.0})
        v.push_back(visit(rpm, -40.0 + 50.0 * std::log10(rpm / 1200.0), -20.0 + 30.0 * std::log10(rpm / 1200.0)));
    const Baseline b = learn_baseline(v);
    REQUIRE(b.speed.fitted);
    CHECK(b.speed.speeds == 3);
    CHECK_THAT(b.speed.hf_slope_db_per_decade, WithinAbs(50.0, 1e-9));
    CHECK_THAT(b.speed.lf_slope_db_per_decade, WithinAbs(30.0, 1e-9));
    // At 1000 rpm the baseline predicts -40 + 50 log10(1000/1200) + 0.1 = -43.859 dB.
    CHECK_THAT(b.expected(SegmentIndicator::hf_band_level, 1000.0).median, WithinAbs(-43.859, 1e-3));
    // Covered: 800/1.05 .. 1800 x 1.05 (kCoverFitted).
    CHECK_THAT(b.speed.covered_low_rpm(), WithinAbs(761.905, 1e-3));
    CHECK_THAT(b.speed.covered_high_rpm(), WithinAbs(1890.0, 1e-9));
}

TEST_CASE("One speed: the assumed 40 dB/decade, covered +-10 %", "[models]") {
    // methods review A2 [C]: 1780/1480 rpm at m = 2 -> 20 x 2 x log10(1780/1480) = 3.2063 dB.
    const Baseline b = learn_baseline({visit(1480, -40.0), visit(1480, -40.0)});
    CHECK_FALSE(b.speed.fitted);
    CHECK_THAT(b.speed.shift_db(SegmentIndicator::hf_band_level, 1780.0), WithinAbs(3.2063, 1e-4));
    // Ratio 1.1 at m = 2: 1.6557 dB (methods review A2 [C]).
    CHECK_THAT(b.speed.shift_db(SegmentIndicator::hf_band_level, 1480.0 * 1.1), WithinAbs(1.6557, 1e-4));
    CHECK_THAT(b.speed.covered_high_rpm(), WithinAbs(1628.0, 1e-9));
    CHECK(b.speed.shift_db(SegmentIndicator::hf_kurtosis, 1780.0) == 0.0);  // only band levels scale
}

TEST_CASE("The spread judged against is the larger of within, between visits and the mount's floor", "[models]") {
    // Two visits with the same within-recording scatter (0.1 dB pattern, robust sigma 0.148 dB).
    Baseline same = learn_baseline({visit(1485, -40.0), visit(1485, -40.0)});
    CHECK(same.expected(SegmentIndicator::hf_band_level, 1485).sigma == 1.0);  // floor: mount not stated = magnet
    same.mount = "stud";
    CHECK(same.expected(SegmentIndicator::hf_band_level, 1485).sigma == 0.5);
    // Re-mounted visits 4 dB apart: between-visit robust sigma of {-42, -38} + 0.1 = 1.4826 x 2.
    const Baseline apart = learn_baseline({visit(1485, -42.0), visit(1485, -38.0)});
    CHECK_THAT(apart.expected(SegmentIndicator::hf_band_level, 1485).sigma, WithinAbs(1.4826 * 2.0, 1e-9));
    CHECK_THAT(apart.expected(SegmentIndicator::hf_band_level, 1485).median, WithinAbs(-39.9, 1e-9));
}

TEST_CASE("Repeatability floors per mount", "[models]") {
    // Our choices from the remount scatter in the methods review A3 ([M]).
    CHECK(repeatability_floor_db("stud") == 0.5);
    CHECK(repeatability_floor_db("adhesive") == 0.7);
    CHECK(repeatability_floor_db("magnet") == 1.0);
    CHECK(repeatability_floor_db("handheld") == 2.0);
    CHECK(repeatability_floor_db("") == 1.0);
}
