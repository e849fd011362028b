// Each check of the quality gate at its limit and just inside it, so that the
// limits do what DEVELOPERS.md says and a clean recording is never flagged.
#include <catch2/catch.hpp>

#include <algorithm>

#include "models/quality.hpp"

using namespace cavitas::models;

namespace {

constexpr std::size_t kSamples = 1'000'000;

RecordingAnalysis clean() {
    RecordingAnalysis a;
    a.setup.fs_hz = 25600;
    a.setup.segment_s = 1.0;
    a.setup.hf = {2560, 10240};
    a.full_scale = 50.0;
    a.rpm = 1485;
    a.quality.samples = kSamples;
    a.quality.sum_sq = 0.01 * kSamples;  // 0.1 rms, no DC
    a.quality.max_abs = 0.5;
    for (std::size_t i = 0; i < kSegmentIndicatorCount; ++i) a.series.values[i].assign(10, 1.0);
    return a;
}

Baseline base() {
    Baseline b;
    b.setup.fs_hz = 25600;
    b.setup.hf = {2560, 10240};
    b.rpm = 1485;
    b.speed.rpm_ref = b.speed.rpm_low = b.speed.rpm_high = 1485;
    b.speed.speeds = 1;
    b.unit = "g";
    b.full_scale = 50.0;
    return b;
}

RecordingContext ctx() {
    RecordingContext c;
    c.unit = "g";
    return c;
}

CheckStatus status_of(const QualityReport& r, const std::string& name) {
    for (const auto& c : r.checks)
        if (c.name == name) return c.status;
    FAIL("no check named " << name);
    return CheckStatus::fail;
}

CheckStatus check(const RecordingAnalysis& a, const std::string& name, const RecordingContext& c = ctx(),
                  const Baseline& b = base()) {
    return status_of(assess_quality(a, b, c), name);
}

}  // namespace

TEST_CASE("A clean recording passes every check with no warning", "[models]") {
    const QualityReport r = assess_quality(clean(), base(), ctx());
    CHECK(r.usable());
    CHECK(r.warning_count() == 0);
    CHECK(r.reasons().empty());
}

TEST_CASE("Clipping warns from 0.01 % and fails from 0.1 % of samples", "[models]") {
    auto a = clean();
    a.quality.at_full_scale = 99;  // just inside the warning limit (100 of 1e6)
    CHECK(check(a, "clipping") == CheckStatus::pass);
    a.quality.at_full_scale = 100;
    CHECK(check(a, "clipping") == CheckStatus::warn);
    a.quality.at_full_scale = 999;
    CHECK(check(a, "clipping") == CheckStatus::warn);
    a.quality.at_full_scale = 1000;
    CHECK(check(a, "clipping") == CheckStatus::fail);
    a.quality.at_full_scale = kSamples * 47 / 100;
    const auto r = assess_quality(a, base(), ctx());
    REQUIRE(r.reasons().size() == 1);
    CHECK_THAT(r.reasons()[0], Catch::Contains("47.00 %") && Catch::Contains("reduce the input range"));
}

TEST_CASE("Flat tops at the record's extremes count as clipping", "[models]") {
    auto a = clean();
    a.quality.flat_runs[0] = {0.5, 2000};  // at max |x|
    CHECK(check(a, "clipping") == CheckStatus::fail);
    a.quality.flat_runs[0] = {0.3, 2000};  // a flat run well inside the range is not clipping
    CHECK(check(a, "clipping") == CheckStatus::pass);
}

TEST_CASE("Dropouts warn from 0.1 % and fail from 1 % of the record", "[models]") {
    auto a = clean();
    a.quality.dropout_samples = 999;
    CHECK(check(a, "dropouts") == CheckStatus::pass);
    a.quality.dropout_samples = 1000;
    CHECK(check(a, "dropouts") == CheckStatus::warn);
    a.quality.dropout_samples = 9999;
    CHECK(check(a, "dropouts") == CheckStatus::warn);
    a.quality.dropout_samples = 10000;
    CHECK(check(a, "dropouts") == CheckStatus::fail);
}

TEST_CASE("An all-zero or flat record fails with what to check", "[models]") {
    auto a = clean();
    a.quality.zero_samples = kSamples;
    a.quality.sum_sq = 0;
    const auto r = assess_quality(a, base(), ctx());
    CHECK_FALSE(r.usable());
    CHECK_THAT(r.reasons()[0], Catch::Contains("all samples are zero"));
}

TEST_CASE("A DC offset warns from 2 % and fails from 20 % of full scale", "[models]") {
    auto a = clean();
    const double n = static_cast<double>(kSamples);
    auto set_dc = [&](double share) {
        const double dc = share * 50.0;
        a.quality.sum = dc * n;
        a.quality.sum_sq = (0.01 + dc * dc) * n;
    };
    set_dc(0.0199);
    CHECK(check(a, "dc_offset") == CheckStatus::pass);
    set_dc(0.0201);
    CHECK(check(a, "dc_offset") == CheckStatus::warn);
    set_dc(0.199);
    CHECK(check(a, "dc_offset") == CheckStatus::warn);
    set_dc(0.201);
    CHECK(check(a, "dc_offset") == CheckStatus::fail);
}

TEST_CASE("Without a full scale a large DC offset only warns", "[models]") {
    auto a = clean();
    a.full_scale = 0.0;  // float file
    const double n = static_cast<double>(kSamples);
    a.quality.sum = 1.0 * n;                  // DC 1 (e.g. gravity on a DC-coupled sensor)
    a.quality.sum_sq = (0.01 + 1.0) * n;      // AC rms 0.1
    CHECK(check(a, "dc_offset") == CheckStatus::warn);
}

TEST_CASE("A ski slope warns from 30 dB and fails from 40 dB, or from 15 and 25 dB over the baseline", "[models]") {
    auto a = clean();
    auto set = [&](double db) { a.recording[static_cast<std::size_t>(RecordingIndicator::ski_slope)] = db; };
    set(29.9);
    CHECK(check(a, "ski_slope") == CheckStatus::pass);
    set(30.0);
    CHECK(check(a, "ski_slope") == CheckStatus::warn);
    set(39.9);
    CHECK(check(a, "ski_slope") == CheckStatus::warn);
    set(40.0);
    CHECK(check(a, "ski_slope") == CheckStatus::fail);
    // 15 dB over the baseline's own value warns even below 30 dB.
    Baseline b = base();
    b.recording[static_cast<std::size_t>(RecordingIndicator::ski_slope)] = {5.0, 1.0, 5.0, 5.0, 2};
    set(19.9);
    CHECK(check(a, "ski_slope", ctx(), b) == CheckStatus::pass);
    set(20.0);
    CHECK(check(a, "ski_slope", ctx(), b) == CheckStatus::warn);
    // 25 dB over the baseline's fails even below 40 dB.
    set(29.9);
    CHECK(check(a, "ski_slope", ctx(), b) == CheckStatus::warn);
    set(30.0);
    CHECK(check(a, "ski_slope", ctx(), b) == CheckStatus::fail);
}

TEST_CASE("Fewer than 3 segments fail and fewer than 5 warn", "[models]") {
    auto a = clean();
    for (auto& v : a.series.values) v.assign(2, 1.0);
    CHECK(check(a, "segments") == CheckStatus::fail);
    for (auto& v : a.series.values) v.assign(3, 1.0);
    CHECK(check(a, "segments") == CheckStatus::warn);
    for (auto& v : a.series.values) v.assign(5, 1.0);
    CHECK(check(a, "segments") == CheckStatus::pass);
}

TEST_CASE("A speed change warns from 5 % and fails outside what the baseline covers", "[models]") {
    // One speed (assumed scaling): covered +-10 % (kCoverAssumed), warned from 5 %.
    auto a = clean();
    a.rpm = 1485 * 1.049;
    CHECK(check(a, "speed_coverage") == CheckStatus::pass);
    a.rpm = 1485 * 1.051;
    CHECK(check(a, "speed_coverage") == CheckStatus::warn);
    a.rpm = 1485 / 1.099;
    CHECK(check(a, "speed_coverage") == CheckStatus::warn);
    a.rpm = 1485 / 1.101;
    CHECK(check(a, "speed_coverage") == CheckStatus::fail);
    // Three speeds 1000-1485 rpm with a fitted slope: covered 1000/1.05 .. 1485 x 1.05, no warning inside.
    Baseline b = base();
    b.speed.rpm_low = 1000;
    b.speed.speeds = 3;
    b.speed.fitted = true;
    a.rpm = 1200;
    CHECK(check(a, "speed_coverage", ctx(), b) == CheckStatus::pass);
    a.rpm = 1000 / 1.049;
    CHECK(check(a, "speed_coverage", ctx(), b) == CheckStatus::pass);
    a.rpm = 1485 * 1.051;
    CHECK(check(a, "speed_coverage", ctx(), b) == CheckStatus::fail);
}

TEST_CASE("A different rate, unit or channel from the baseline's fails", "[models]") {
    auto a = clean();
    a.setup.fs_hz = 12800;
    CHECK(check(a, "sample_rate") == CheckStatus::fail);
    auto c = ctx();
    c.unit = "m/s2";
    CHECK(check(clean(), "unit", c) == CheckStatus::fail);
    c = ctx();
    c.channel = 2;
    CHECK(check(clean(), "channel", c) == CheckStatus::fail);
}

TEST_CASE("An HF band above the sensor's stated range fails, one inside it passes", "[models]") {
    auto c = ctx();
    c.sensor_max_hz = 5000;  // magnet mount; the baseline's band reaches 10.24 kHz
    const auto r = assess_quality(clean(), base(), c);
    CHECK(status_of(r, "sensor_range") == CheckStatus::fail);
    CHECK_THAT(r.reasons()[0], Catch::Contains("5.0 kHz limit"));
    c.sensor_max_hz = 10240;
    CHECK(check(clean(), "sensor_range", c) == CheckStatus::pass);
}

TEST_CASE("NaN or Inf samples fail", "[models]") {
    auto a = clean();
    a.quality.non_finite = 1;
    CHECK(check(a, "non_finite") == CheckStatus::fail);
}
