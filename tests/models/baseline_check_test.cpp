// check_baseline: each defect a baseline can carry is found and named, and a
// clean baseline draws no warning. Limits: BaselineCheckLimits (our choices).
#include <catch2/catch.hpp>

#include "models/baseline_check.hpp"
#include "models/hydraulics.hpp"

using namespace cavitas::models;

namespace {

RecordingAnalysis steady(double hf_db, std::size_t segments = 10, double rpm = 1485) {
    RecordingAnalysis a;
    a.setup.fs_hz = 25600;
    a.setup.segment_s = 1.0;
    a.rpm = rpm;
    a.vanes = 7;
    a.duration_s = static_cast<double>(segments);
    for (std::size_t k = 0; k < segments; ++k)
        for (std::size_t i = 0; i < kSegmentIndicatorCount; ++i) a.series.values[i].push_back(3.0);
    for (std::size_t k = 0; k < segments; ++k) {
        a.series[SegmentIndicator::hf_band_level][k] = hf_db + 0.2 * static_cast<double>(k % 3);
        a.series[SegmentIndicator::lf_band_level][k] = -20.0 + 0.2 * static_cast<double>(k % 2);
    }
    return a;
}

Baseline learned(std::vector<RecordingAnalysis> v) {
    Baseline b = learn_baseline(v);
    for (std::size_t k = 0; k < b.sources.size(); ++k) b.sources[k].file = "rec" + std::to_string(k + 1) + ".wav";
    return b;
}

bool has(const std::vector<BaselineWarning>& w, const std::string& check) {
    for (const auto& x : w)
        if (x.check == check) return true;
    return false;
}

}  // namespace

TEST_CASE("A clean baseline draws no warning", "[models]") {
    CHECK(check_baseline(learned({steady(-40), steady(-40.5)})).empty());
}

TEST_CASE("A level step inside a recording is found with its file and time", "[models]") {
    auto a = steady(-40);
    for (std::size_t k = 6; k < 10; ++k) a.series[SegmentIndicator::hf_band_level][k] += 12.0;
    const auto w = check_baseline(learned({steady(-40), a}));
    REQUIRE(has(w, "level_step"));
    for (const auto& x : w)
        if (x.check == "level_step") {
            CHECK(x.file == "rec2.wav");
            CHECK(x.time_s == 6.0);
        }
}

TEST_CASE("A level that wanders without one step is unsteady", "[models]") {
    // The pattern of the real 1200 rpm lab record: -10.6, -0.6, 9.5, 2.4, 9.6 dB (SOURCE.md set).
    auto a = steady(-40, 5);
    a.series[SegmentIndicator::hf_band_level] = {-10.6, -0.6, 9.5, 2.4, 9.6};
    CHECK(has(check_baseline(learned({a})), "unsteady"));
}

TEST_CASE("Visits that disagree beyond re-mounting are named", "[models]") {
    // Magnet floor 1.0 dB -> limit 3 sqrt(2) = 4.24 dB; the third visit is 8 dB off the others.
    const auto w = check_baseline(learned({steady(-40), steady(-40.5), steady(-32)}));
    REQUIRE(has(w, "visits_disagree"));
    CHECK(w.front().file == "rec3.wav");
    // 3 dB apart is within re-mounting.
    CHECK_FALSE(has(check_baseline(learned({steady(-40), steady(-37)})), "visits_disagree"));
}

TEST_CASE("A baseline at low NPSH or under the margin guidance is suspected of cavitating", "[models]") {
    const Baseline b = learned({steady(-40), steady(-40)});
    Hydraulics near_boiling;
    near_boiling.npsh = NpshAvailable{0.3, 0.0, 0.0, 0.3};
    CHECK(has(check_baseline(b, {near_boiling, std::nullopt}), "low_npsh"));
    Hydraulics thin;
    thin.npsh = NpshAvailable{3.3, 0.0, 0.0, 3.3};
    thin.margin = npsh_margin(3.3, 3.2);  // 1.03 x NPSH3: under max(1.1 x, +0.6 m) (ANSI/HI 9.6.1 summaries)
    CHECK(has(check_baseline(b, {std::nullopt, thin}), "low_margin"));
    Hydraulics ample;
    ample.npsh = NpshAvailable{9.0, 0.0, 0.0, 9.0};
    ample.margin = npsh_margin(9.0, 3.0);
    CHECK(check_baseline(b, {ample, ample}).empty());
}

TEST_CASE("Impulsive HF at blade passage in a known-good record is suspected", "[models]") {
    auto a = steady(-40);
    a.series[SegmentIndicator::hf_kurtosis].assign(10, 5.5);
    a.recording[static_cast<std::size_t>(RecordingIndicator::envelope_bpf_prominence)] = 14.0;
    CHECK(has(check_baseline(learned({a, steady(-40)})), "cavitating"));
}

TEST_CASE("Too little: one short recording, or few segments", "[models]") {
    auto a = steady(-40, 2);
    CHECK(has(check_baseline(learned({a})), "too_little"));
    CHECK_FALSE(has(check_baseline(learned({steady(-40, 5)})), "too_little"));
}

TEST_CASE("A suppression run whose HF level still falls as the suction head rises is warned", "[models]") {
    // Two recordings of a suppression run: at 12 m and at 20 m of NPSHa (NPSH3 4 m: 3 x and 5 x).
    Hydraulics lower, higher;
    lower.npsh = NpshAvailable{12.0, 0.0, 0.0, 12.0};
    lower.margin = npsh_margin(12.0, 4.0);
    higher.npsh = NpshAvailable{20.0, 0.0, 0.0, 20.0};
    higher.margin = npsh_margin(20.0, 4.0);
    Baseline b = learned({steady(-34), steady(-40)});  // 6 dB quieter at the higher head
    b.suppression = SuppressionRun{12.0, 20.0, 3.0, 4.0};
    const auto w = check_baseline(b, {lower, higher});
    REQUIRE(has(w, "suppression_incomplete"));
    for (const auto& x : w)
        if (x.check == "suppression_incomplete") CHECK(x.file == "rec1.wav");
    // Within the step (3 dB, BaselineCheckLimits::step_db) of each other: the head no longer matters.
    Baseline quiet = learned({steady(-40), steady(-41)});
    quiet.suppression = b.suppression;
    CHECK_FALSE(has(check_baseline(quiet, {lower, higher}), "suppression_incomplete"));
    // Not a suppression run: no such check.
    CHECK_FALSE(has(check_baseline(learned({steady(-34), steady(-40)}), {lower, higher}), "suppression_incomplete"));
}
