#include <catch2/catch.hpp>

#include <cmath>
#include <string>
#include <vector>

#include "models/classifier.hpp"
#include "models/inception.hpp"

using namespace cavitas::models;
using Catch::Detail::Approx;

namespace {

// A step of two recordings of five segments, the levels `level_db` with a fixed,
// zero-mean scatter of +-spread_db (the same pattern at every step).
SweepStep step(double npsha_m, double level_db, double spread_db = 0.3, double rpm = 1485.0) {
    const double pattern[2][5] = {{-1.0, 0.5, 0.0, 1.0, -0.5}, {0.5, -1.0, 1.0, 0.0, -0.5}};
    SweepStep s;
    s.npsha_m = npsha_m;
    s.rpm = rpm;
    for (const auto& rec : pattern) {
        std::vector<double> v;
        for (double p : rec) v.push_back(level_db + spread_db * p);
        s.hf_level_db.push_back(v);
    }
    return s;
}

double hinge(double x, double k, double a, double b) { return a + b * std::max(0.0, k - x); }

InceptionConfig config() {
    InceptionConfig c;
    c.rise_threshold_db = ClassifierConfig{}.hf_alert_db;
    c.replicates = 400;
    return c;
}

}  // namespace

TEST_CASE("Hinge fit reproduces the methods check: knee 8 m, plateau 60 dB, 4 dB/m", "[inception]") {
    // Methods review A1, check [C]: a 60 dB plateau for NPSHA >= 8 m rising 4 dB/m below, points 12 ... 5 m.
    std::vector<double> x, y;
    for (double v = 12.0; v >= 5.0; v -= 1.0) {
        x.push_back(v);
        y.push_back(hinge(v, 8.0, 60.0, 4.0));
    }
    const HingeFit f = fit_hinge(x, y, {}, 5.0, 12.0);
    CHECK(f.knee_m == Approx(8.000).margin(1e-6));
    CHECK(f.plateau_db == Approx(60.0).margin(1e-9));
    CHECK(f.slope_db_per_m == Approx(4.0).margin(1e-9));
    CHECK(f.rss == Approx(0.0).margin(1e-12));
    // A knee between the steps is found too (computed from the definition: 7.3 m, not a knot).
    for (std::size_t i = 0; i < x.size(); ++i) y[i] = hinge(x[i], 7.3, 60.0, 4.0);
    const HingeFit g = fit_hinge(x, y, {}, 5.0, 12.0);
    CHECK(g.knee_m == Approx(7.3).margin(1e-4));
    CHECK(g.slope_db_per_m == Approx(4.0).margin(1e-3));
    CHECK_THROWS_AS(fit_hinge(std::vector<double>{5, 5}, std::vector<double>{1, 2}, {}, 5, 5), std::invalid_argument);
}

TEST_CASE("NPSH3 by interpolation reproduces the methods check of 4.384615 m", "[inception]") {
    // Methods review A1, check [C]: H_ref 50.0 m, target 48.5 m (3 % drop).
    const std::vector<double> x{8.0, 6.0, 5.0, 4.5, 4.0, 3.5}, h{50.0, 49.9, 49.5, 48.8, 47.5, 44.0};
    const Npsh3Reading r = npsh3_by_head_drop(x, h, 50.0);
    REQUIRE(r.npsh3_m);
    CHECK(*r.npsh3_m == Approx(4.384615).margin(1e-6));
    CHECK(r.target_head_m == Approx(48.5));
    // A head that never falls 3 %: no NPSH3, and the reason says so.
    const std::vector<double> flat{50.0, 49.9, 49.8, 49.6, 49.5, 49.2};
    const Npsh3Reading n = npsh3_by_head_drop(x, flat, 50.0);
    CHECK_FALSE(n.npsh3_m);
    CHECK(n.reason.find("never fell by 3 %") != std::string::npos);
}

TEST_CASE("Affinity scaling of NPSHa and of the level", "[inception]") {
    // Computed from the definition: 6.5 m x (1000 / 714)^2 = 12.7502 m (NPSHR ~ N^2, methods A2).
    CHECK(npsha_at_speed_m(6.5, 714.0, 1000.0) == Approx(12.7502).margin(1e-4));
    // Methods A2 check [C]: speed ratio 1.1, m = 2 -> 1.6557 dB; a level at 1100 rpm read at 1000 rpm falls by it.
    CHECK(level_shift_db(1100.0, 1000.0) == Approx(-1.6557).margin(1e-4));
    // 1780 / 1480 rpm, m = 2 -> 3.2063 dB (methods A2 check [C]).
    CHECK(level_shift_db(1780.0, 1480.0) == Approx(-3.2063).margin(1e-4));
}

TEST_CASE("A sweep with a knee well inside it is located by the fit, with an interval around it", "[inception]") {
    std::vector<SweepStep> steps;
    for (double v = 12.0; v >= 5.0; v -= 1.0) steps.push_back(step(v, hinge(v, 8.0, 60.0, 4.0)));
    const InceptionResult r = find_inception(steps, config());
    REQUIRE(r.npshi_m);
    CHECK(r.located == Located::fitted);
    CHECK(*r.npshi_m == Approx(8.0).margin(0.05));
    REQUIRE(r.interval_m);
    CHECK(r.interval_m->first <= 8.0);
    CHECK(r.interval_m->second >= 8.0);
    CHECK(r.interval_m->second - r.interval_m->first < 1.0);
    CHECK(r.rise_db == Approx(12.0).margin(0.3));
    CHECK(r.clear_share == Approx(1.0));
    CHECK_FALSE(r.scaling.applied);
    CHECK(r.steps.back().fitted);
    CHECK(r.steps.front().hf_rise_db == Approx(0.0).margin(0.3));
}

TEST_CASE("A flat sweep gives no inception and says it lies below the range tested", "[inception]") {
    std::vector<SweepStep> steps;
    for (double v = 12.0; v >= 5.0; v -= 1.0) steps.push_back(step(v, 60.0 + 0.2 * std::sin(v)));
    const InceptionResult r = find_inception(steps, config());
    CHECK_FALSE(r.npshi_m);
    CHECK_FALSE(r.interval_m);
    CHECK(r.located == Located::not_found);
    CHECK(r.reason.find("below the range tested") != std::string::npos);
    CHECK(r.npsh3.reason.find("no head") != std::string::npos);
}

TEST_CASE("Steps beyond the loudest one are past the peak and not fitted", "[inception]") {
    // Energy rises, then falls again as cavitation develops (methods 1.1): the last two steps fall back.
    std::vector<SweepStep> steps{step(12, 60), step(10, 60), step(8, 60), step(6, 68), step(5, 72), step(4, 66),
                                 step(3, 63)};
    const InceptionResult r = find_inception(steps, config());
    CHECK(r.steps[4].fitted);
    CHECK(r.steps[5].past_peak);
    CHECK(r.steps[6].past_peak);
    CHECK_FALSE(r.steps[6].fitted);
    REQUIRE(r.npshi_m);
}

TEST_CASE("One risen step only brackets the knee: located between the steps", "[inception]") {
    std::vector<SweepStep> steps{step(12, 60), step(10, 60), step(8, 60), step(6, 70)};
    const InceptionResult r = find_inception(steps, config());
    REQUIRE(r.npshi_m);
    CHECK(r.located == Located::between_steps);
    REQUIRE(r.bracket_m);
    CHECK(r.bracket_m->first == Approx(6.0));
    CHECK(r.bracket_m->second == Approx(8.0));
    CHECK(*r.npshi_m == Approx(7.0));
    REQUIRE(r.interval_m);
    CHECK(r.interval_m->first <= 6.0);
    CHECK(r.interval_m->second >= 8.0);
}

TEST_CASE("A rise lost in the scatter is not called inception", "[inception]") {
    // 3.5 dB at the last step against a +-4 dB scatter of the segments: the resampled sweeps disagree.
    std::vector<SweepStep> steps{step(12, 60, 4.0), step(10, 60, 4.0), step(8, 60, 4.0), step(6, 61.5, 4.0),
                                 step(5, 63.5, 4.0)};
    const InceptionResult r = find_inception(steps, config());
    CHECK_FALSE(r.npshi_m);
    CHECK(r.clear_share < 0.95);
}

TEST_CASE("Steps at different speeds are read at the reference speed", "[inception]") {
    // A sweep made at 1000 rpm whose steps drifted to 1100 rpm: each level measured there is
    // 1.6557 dB higher (m = 2) and each NPSHa 1.21 x lower than at 1000 rpm (computed from the definitions).
    std::vector<SweepStep> steps;
    const double knee = 8.0;
    for (double v = 12.0; v >= 5.0; v -= 1.0) {
        const double rpm = v < 9.5 ? 1100.0 : 1000.0;
        const double ratio = rpm / 1000.0;
        steps.push_back(step(v * ratio * ratio, hinge(v, knee, 60.0, 4.0) + 40.0 * std::log10(ratio), 0.3, rpm));
    }
    const InceptionResult r = find_inception(steps, config());
    CHECK(r.scaling.applied);
    CHECK(r.scaling.reference_rpm == 1000.0);
    CHECK(r.steps[5].npsha_scaled_m == Approx(7.0));
    REQUIRE(r.npshi_m);
    CHECK(*r.npshi_m == Approx(knee).margin(0.05));
    CHECK(r.fit->plateau_db == Approx(60.0).margin(0.1));
    // --at-rpm with every step at one speed scales too.
    std::vector<SweepStep> same;
    for (double v = 12.0; v >= 5.0; v -= 1.0) same.push_back(step(v, 60.0, 0.3, 714.0));
    const InceptionResult at = find_inception(same, config(), 1000.0);
    CHECK(at.scaling.applied);
    CHECK(at.steps[6].npsha_scaled_m == Approx(npsha_at_speed_m(6.0, 714.0, 1000.0)));
    CHECK(at.steps[0].level_shift_db == Approx(5.8521).margin(1e-3));  // -40 log10(0.714), from the definition
}

TEST_CASE("The sweep's rules are enforced", "[inception]") {
    CHECK_THROWS_AS(find_inception({step(12, 60), step(10, 60)}, config()), std::invalid_argument);
    CHECK_THROWS_AS(find_inception({step(12, 60), step(12, 60), step(10, 60)}, config()), std::invalid_argument);
    // Steps given in any order are read in falling NPSHa.
    const InceptionResult any = find_inception({step(8, 60), step(12, 60), step(10, 60)}, config());
    CHECK(any.steps[0].step == 1);
    CHECK(any.steps[2].npsha_scaled_m == 8.0);
    SweepStep empty = step(8, 60);
    empty.hf_level_db.clear();
    CHECK_THROWS_AS(find_inception({step(12, 60), step(10, 60), empty}, config()), std::invalid_argument);
}

TEST_CASE("Inception results do not depend on anything but the sweep and the seed", "[inception]") {
    std::vector<SweepStep> steps;
    for (double v = 12.0; v >= 5.0; v -= 1.0) steps.push_back(step(v, hinge(v, 7.4, 60.0, 3.0), 1.0));
    const InceptionResult a = find_inception(steps, config()), b = find_inception(steps, config());
    REQUIRE(a.interval_m);
    CHECK(a.interval_m == b.interval_m);
    CHECK(a.clear_share == b.clear_share);
}
