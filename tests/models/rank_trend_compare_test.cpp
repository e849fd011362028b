// Rank tests, the trend judgement and the before/after decision. Published or
// hand-countable values beside each check; tests/reference/scipy_check.py
// compares the same functions with scipy.stats on generated data.
#include <catch2/catch.hpp>

#include <cmath>
#include <vector>

#include "models/compare.hpp"
#include "models/rank_tests.hpp"
#include "models/trend.hpp"

using namespace cavitas::models;
using Catch::Matchers::Contains;
using Catch::Matchers::WithinAbs;
using Catch::Matchers::WithinRel;

TEST_CASE("Mann-Whitney U: exact p-values counted by hand", "[models][ranks]") {
    // Two samples of 3 with no overlap: 1 of the C(6,3) = 20 equally likely arrangements
    // is as extreme on each side, two-sided p = 2/20 = 0.1 (computed from the definition).
    const std::vector<double> a{1, 2, 3}, b{4, 5, 6};
    const auto r = mann_whitney_u(a, b);
    CHECK(r.exact);
    CHECK(r.u == 0.0);
    CHECK_THAT(r.p_two_sided, WithinRel(0.1, 1e-12));
    // 8 against 8 separated: 2 / C(16,8) = 2 / 12870.
    std::vector<double> x, y;
    for (int i = 0; i < 8; ++i) {
        x.push_back(i);
        y.push_back(100 + i);
    }
    CHECK_THAT(mann_whitney_u(x, y).p_two_sided, WithinRel(2.0 / 12870.0, 1e-12));
    // Identical samples with ties: no evidence at all.
    const std::vector<double> same{2, 2, 2, 2};
    CHECK(mann_whitney_u(same, same).p_two_sided == 1.0);
    CHECK_THROWS_AS(mann_whitney_u(std::vector<double>{}, a), std::invalid_argument);
}

TEST_CASE("Hodges-Lehmann shift and Cliff's delta from their definitions", "[models][ranks]") {
    // b = a + 10 exactly: every pairwise difference spread around 10, the median is 10;
    // every b above every a: Cliff's delta = 1.
    const std::vector<double> a{1, 2, 3, 4, 5}, b{11, 12, 13, 14, 15};
    const auto hl = hodges_lehmann(a, b);
    CHECK(hl.shift == 10.0);
    CHECK(hl.ci_low <= 10.0);
    CHECK(hl.ci_high >= 10.0);
    CHECK(cliffs_delta(a, b) == 1.0);
    CHECK(cliffs_delta(b, a) == -1.0);
    CHECK(cliffs_delta(a, a) == 0.0);
}

TEST_CASE("Mann-Kendall and Theil-Sen: exact values counted by hand", "[models][ranks]") {
    // Four rising values: S = 6 (all 6 pairs concordant); only 1 of 4! = 24 orders is that
    // extreme, so the one-sided p = 1/24 (Kendall's exact null distribution).
    const std::vector<double> t{0, 30, 60, 90}, y{0.1, 0.5, 0.9, 1.6};
    const auto mk = mann_kendall(t, y);
    CHECK(mk.exact);
    CHECK(mk.s == 6.0);
    CHECK_THAT(mk.tau, WithinAbs(1.0, 1e-12));
    CHECK_THAT(mk.p_rising, WithinRel(1.0 / 24.0, 1e-12));
    CHECK_THAT(mk.p_two_sided, WithinRel(2.0 / 24.0, 1e-12));
    // Theil-Sen on a straight line with one outlier: the slope of the line (median of pairwise slopes).
    const std::vector<double> tt{0, 1, 2, 3, 4}, yy{0, 2, 4, 60, 8};
    CHECK_THAT(theil_sen_slope(tt, yy), WithinAbs(2.0, 1e-12));
}

TEST_CASE("A slowly worsening point is flagged before it reaches the alert, a flat one is not", "[models][trend]") {
    // Synthetic visits every 28 days, HF over baseline creeping up by about 0.4 dB a visit with
    // +-0.15 dB of scatter, all under the +3 dB alert (every verdict would be normal).
    const double rise[] = {0.0, 0.55, 0.7, 1.3, 1.45, 2.1};
    std::vector<TrendPoint> worsening, flat;
    for (int i = 0; i < 6; ++i) {
        worsening.push_back({28.0 * i, rise[i], true});
        flat.push_back({28.0 * i, (i % 2 ? 0.3 : -0.2) + 0.05 * i * (i % 3 == 0 ? -1 : 1), true});
    }
    const TrendJudgement w = judge_hf_trend(worsening);
    CHECK(w.rising);
    REQUIRE(w.days_to_alert);
    CHECK(*w.days_to_alert > 0.0);
    CHECK(*w.latest_fit_db < 3.0);
    CHECK_THAT(*w.slope_db_per_30d, WithinAbs(0.45, 0.1));  // about 0.42 dB per 28 days
    CHECK_THAT(w.text, Contains("rising") && Contains("Mann-Kendall") && Contains("alert"));
    // Exactly monotonic over 6 visits: p = 1/720 (from the definition).
    CHECK_THAT(*w.p_rising, WithinRel(1.0 / 720.0, 1e-9));
    const TrendJudgement f = judge_hf_trend(flat);
    CHECK_FALSE(f.rising);
    // Three visits can never be significant at 0.05 (smallest p = 1/6): no judgement.
    const std::vector<TrendPoint> three(worsening.begin(), worsening.begin() + 3);
    const TrendJudgement t3 = judge_hf_trend(three);
    CHECK_FALSE(t3.rising);
    CHECK_THAT(t3.text, Contains("too few"));
    // Indeterminate visits are left out.
    auto with_bad = worsening;
    with_bad.insert(with_bad.begin() + 2, TrendPoint{40.0, 25.0, false});
    CHECK(judge_hf_trend(with_bad).rising);
}

namespace {

// A recording side made of per-segment HF levels (other indicators constant).
struct FakeRecording {
    RecordingAnalysis analysis;
    Finding finding;
    FakeRecording(std::vector<double> hf_db, Verdict v) {
        analysis.series[SegmentIndicator::hf_band_level] = hf_db;
        for (auto i : {SegmentIndicator::hf_kurtosis, SegmentIndicator::impulse_rate, SegmentIndicator::lf_band_level,
                       SegmentIndicator::hf_spectral_kurtosis, SegmentIndicator::overall_rms})
            analysis.series[i] = std::vector<double>(hf_db.size(), 1.0);
        finding.verdict = v;
    }
    RecordingSide side() const { return {&analysis, &finding}; }
};

std::vector<double> around(double level, int n, double spread) {
    std::vector<double> v;
    for (int i = 0; i < n; ++i) v.push_back(level + spread * std::sin(1.7 * i + level));
    return v;
}

}  // namespace

TEST_CASE("Before/after: improved, worse and unchanged by the stated rule", "[models][compare]") {
    const FakeRecording cavitating(around(-20.0, 8, 0.4), Verdict::developed);
    const FakeRecording healthy(around(-38.0, 8, 0.4), Verdict::normal);
    const FakeRecording healthy2(around(-38.1, 8, 0.4), Verdict::normal);
    const FakeRecording slightly_up(around(-36.5, 8, 0.2), Verdict::normal);
    auto run = [](const FakeRecording& b, const FakeRecording& a) {
        return compare_before_after({b.side()}, {a.side()}, "g");
    };
    const BeforeAfter fixed = run(cavitating, healthy);
    CHECK(fixed.change == Change::improved);
    CHECK_THAT(fixed.indicators.front().shift, WithinAbs(-18.0, 0.5));
    CHECK(fixed.indicators.front().key == "hf_band_level_db");
    CHECK(run(healthy, cavitating).change == Change::worse);
    // A shift of a fraction of a dB between two healthy recordings is not a change.
    const BeforeAfter same = run(healthy, healthy2);
    CHECK(same.change == Change::unchanged);
    CHECK_THAT(same.evidence.front(), Contains("no significant change"));
    // +1.5 dB with one recording a side: the segments share a mount, so the interval is widened by
    // 1.96 sqrt(2) x the 1.0 dB floor = 2.77 dB each side and takes in zero (CompareConfig).
    const BeforeAfter small = run(healthy, slightly_up);
    CHECK(small.change == Change::unchanged);
    CHECK_FALSE(small.indicators.front().significant);
    CHECK(small.indicators.front().units == "segments");
    CHECK_THAT(small.indicators.front().widened_db, WithinAbs(1.96 * std::sqrt(2.0), 1e-12));
    CHECK_THAT(small.evidence.front(), Contains("widened"));
    // Three recordings a side: each recording is a unit, and the interval is over their medians.
    const FakeRecording h3(around(-38.2, 8, 0.4), Verdict::normal), c2(around(-20.5, 8, 0.4), Verdict::developed),
        c3(around(-19.6, 8, 0.4), Verdict::developed);
    const BeforeAfter visits =
        compare_before_after({cavitating.side(), c2.side(), c3.side()}, {healthy.side(), healthy2.side(), h3.side()}, "g");
    CHECK(visits.indicators.front().units == "recordings");
    CHECK(visits.indicators.front().before_segments == 3);
    CHECK(visits.change == Change::improved);
    CHECK_THAT(visits.evidence.front(), Contains("each recording a unit"));
    // A side with nothing usable cannot be compared.
    const FakeRecording bad(around(-38.0, 8, 0.4), Verdict::indeterminate);
    CHECK_THROWS_AS(run(bad, healthy), std::invalid_argument);
    CHECK(to_string(Change::improved) == std::string("improved"));
}

TEST_CASE("Before/after: a change of duty that could explain the change is named", "[models][compare]") {
    OperatingPointSummary b, a;
    b.flow_m3_s = 0.12;
    a.flow_m3_s = 0.08;
    b.rpm = 1485;
    a.rpm = 1490;
    const auto w = compare_duties(b, a);
    REQUIRE(w.size() == 1);
    CHECK_THAT(w.front(), Contains("flow") && Contains("-33 %"));
    a.rpm = 1300;
    CHECK(compare_duties(b, a).size() == 2);
    a.flow_m3_s = 0.121;
    a.rpm = 1480;
    CHECK(compare_duties(b, a).empty());
}
