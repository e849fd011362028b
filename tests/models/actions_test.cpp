// The next steps of a finding (models/actions.hpp). The priorities and
// intervals are cavitas's own choice (said in each action's basis), except the
// "raise the suction head now" of a pump below its margin, which is common
// practice, no source. What is checked here is that each thing found gets its
// own action, that the step follows the evidence, and the order.
#include <catch2/catch.hpp>

#include <algorithm>

#include "models/actions.hpp"

using namespace cavitas::models;
using Catch::Matchers::Contains;

namespace {

Finding finding(Verdict v) {
    Finding f;
    f.verdict = v;
    f.confidence = 0.9;
    return f;
}

MarginContext margin(MarginAgreement agreement, double ratio, bool below_guidance = false) {
    MarginContext m;
    m.agreement = agreement;
    m.margin_ratio = ratio;
    m.npsha_m = 3.0 * ratio;  // NPSH3 3 m
    m.below_guidance = below_guidance;
    return m;
}

bool sorted_soonest_first(const std::vector<Action>& a) {
    return std::is_sorted(a.begin(), a.end(), [](const Action& x, const Action& y) { return rank(x.priority) < rank(y.priority); });
}

}  // namespace

TEST_CASE("A normal finding with nothing else found asks for nothing", "[models][actions]") {
    CHECK(plan_actions(finding(Verdict::normal), std::nullopt).empty());
    CHECK(plan_actions(finding(Verdict::normal), margin(MarginAgreement::consistent, 3.0)).empty());
}

TEST_CASE("Developed cavitation at a large margin points away from the suction level", "[models][actions]") {
    Finding f = finding(Verdict::developed);
    const auto a = plan_actions(f, margin(MarginAgreement::unexplained, 14.4));
    REQUIRE(a.size() == 1);
    CHECK(a[0].topic == ActionTopic::cavitation);
    CHECK(a[0].priority == Priority::soon);
    CHECK_THAT(a[0].step, Contains("14.40 x NPSH3") && Contains("air drawn in") &&
                              Contains("blockage"));
    CHECK_THAT(a[0].step, !Contains("Raise the suction head"));
    // Far off the baseline's flow as well: recirculation is named first, and the duty gets its own action.
    f.off_duty = true;
    f.other_findings.push_back({Concern::off_duty, "duty far from the baseline's: ..."});
    const auto b = plan_actions(f, margin(MarginAgreement::unexplained, 14.4));
    REQUIRE(b.size() == 2);
    CHECK_THAT(b[0].step, Contains("suction recirculation at part load is the first suspect"));
    CHECK(b[1].concern == Concern::off_duty);
    CHECK_THAT(b[1].step, Contains("not valid"));
}

TEST_CASE("Cavitation below the margin guidance is urgent, re-checked the next day", "[models][actions]") {
    const auto a = plan_actions(finding(Verdict::developed), margin(MarginAgreement::consistent, 1.07, true));
    REQUIRE(a.size() == 1);
    CHECK(a[0].priority == Priority::urgent);
    CHECK(a[0].recheck_days == 1);
    CHECK(a[0].basis == "common practice, no source");
    CHECK_THAT(a[0].step, Contains("Raise the suction head now") && Contains("1.07 x NPSH3"));
}

TEST_CASE("Incipient cavitation within guidance is watched, not acted on at once", "[models][actions]") {
    const auto a = plan_actions(finding(Verdict::incipient), margin(MarginAgreement::consistent, 2.5));
    REQUIRE(a.size() == 1);
    CHECK(a[0].priority == Priority::planned);
    CHECK_THAT(a[0].step, Contains("Watch the trend"));
    // Without an operating point: check the suction side and record the duty next time.
    const auto b = plan_actions(finding(Verdict::incipient), std::nullopt);
    REQUIRE(b.size() == 1);
    CHECK_THAT(b[0].step, Contains("record the suction pressure, temperature and flow"));
}

TEST_CASE("A bearing family on a normal pump is a job of its own", "[models][actions]") {
    Finding f = finding(Verdict::normal);
    f.bearing_like = true;
    f.bearing_order = 3.31;
    f.other_findings.push_back({Concern::bearing_impacts, "periodic impacts at 3.31x shaft speed ..."});
    const auto a = plan_actions(f, margin(MarginAgreement::consistent, 4.65));
    REQUIRE(a.size() == 1);
    CHECK(a[0].topic == ActionTopic::other_finding);
    CHECK(a[0].concern == Concern::bearing_impacts);
    CHECK(a[0].priority == Priority::soon);
    CHECK_THAT(a[0].step, Contains("3.31x shaft speed") && Contains("bearings"));
}

TEST_CASE("Every other finding, a record that cannot be judged and a doubtful baseline get their own actions", "[models][actions]") {
    Finding f = finding(Verdict::normal);
    f.lf_rise_db = 8.6;
    for (Concern c : {Concern::mains_pickup, Concern::flow_unsteadiness, Concern::speed_change, Concern::recirculation})
        f.other_findings.push_back({c, "..."});
    f.baseline_warnings.push_back({"step", "a.wav", 3.0, "a step of 6 dB at 3 s"});
    const auto a = plan_actions(f, std::nullopt);
    REQUIRE(a.size() == 5);
    CHECK(sorted_soonest_first(a));
    CHECK(a.front().concern == Concern::recirculation);  // the only "soon" one
    CHECK(a.back().concern == Concern::speed_change);    // "watch": re-measure only
    CHECK(std::any_of(a.begin(), a.end(), [](const Action& x) {
        return x.topic == ActionTopic::baseline && x.step.find("a step of 6 dB at 3 s") != std::string::npos;
    }));
    CHECK(std::any_of(a.begin(), a.end(), [](const Action& x) {
        return x.concern == Concern::flow_unsteadiness && x.step.find("+8.6 dB") != std::string::npos;
    }));

    Finding u = finding(Verdict::indeterminate);
    u.reasons.push_back("clipped: 2 % of samples at full scale");
    const auto b = plan_actions(u, std::nullopt);
    REQUIRE(b.size() == 1);
    CHECK(b[0].topic == ActionTopic::cannot_judge);
    CHECK_THAT(b[0].step, Contains("clipped"));

    const auto c = plan_actions(finding(Verdict::normal), margin(MarginAgreement::at_risk, 1.05, true));
    REQUIRE(c.size() == 1);
    CHECK(c[0].topic == ActionTopic::suction_margin);
    CHECK(c[0].priority == Priority::soon);
}

TEST_CASE("A judged record the quality gate warned about asks for the sensor and mount to be checked", "[models][actions]") {
    Finding f = finding(Verdict::normal);
    QualityCheck c;
    c.name = "dc_offset";
    c.status = CheckStatus::warn;
    c.message = "DC offset 3 % of full scale: check the sensor's bias and its cable";
    f.quality.checks.push_back(c);
    const auto a = plan_actions(f, std::nullopt);
    REQUIRE(a.size() == 1);
    CHECK(a[0].topic == ActionTopic::recording_quality);
    CHECK(a[0].priority == Priority::planned);
    CHECK_THAT(a[0].step, Contains("sensor, its mount") && Contains("DC offset 3 %"));
}
