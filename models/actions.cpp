#include "models/actions.hpp"

#include <algorithm>

#include "models/text.hpp"

namespace cavitas::models {

namespace {

// Where the priorities and intervals come from. A site sets its own; these say so.
constexpr const char* kOurChoice = "our choice (cavitas default; set your site's own)";
constexpr const char* kTradePractice = "common practice, no source";

// Re-check intervals, days (our choice unless the action says otherwise): a day
// after a correction of a pump below its margin, a week for developed
// cavitation or a point that cannot be judged, two weeks for a bearing family
// or recirculation, a month (a typical route interval) for the rest.
constexpr int kAfterCorrectionDays = 1;
constexpr int kWeekDays = 7;
constexpr int kTwoWeeksDays = 14;
constexpr int kRouteIntervalDays = 30;

// " (NPSHa 3.50 m, 1.07 x NPSH3)": the margin in numbers, as far as it is known.
std::string ratio_words(const std::optional<MarginContext>& m) {
    if (!m || (!m->npsha_m && !m->margin_ratio)) return "";
    std::string s = " (";
    if (m->npsha_m) s += fmt("NPSHa %.2f m", *m->npsha_m);
    if (m->margin_ratio) s += fmt("%s%.2f x NPSH3", m->npsha_m ? ", " : "", *m->margin_ratio);
    return s + ")";
}

Action cavitation_action(const Finding& f, const std::optional<MarginContext>& m) {
    const bool developed = f.verdict == Verdict::developed;
    const MarginAgreement agreement = m ? m->agreement : MarginAgreement::margin_unknown;
    Action a;
    a.topic = ActionTopic::cavitation;
    a.basis = kOurChoice;
    if (f.hydraulic_only) {
        a.priority = Priority::soon;
        a.recheck_days = kWeekDays;
        a.step = "Check the suction reading, the liquid temperature and the NPSH3 value: they say the pump cavitates" +
                 ratio_words(m) + " though the vibration shows no sign of it; if they are right, raise the suction "
                 "head, and check the sensor's mount and the baseline";
        return a;
    }
    if (agreement == MarginAgreement::unexplained) {
        a.priority = Priority::soon;
        a.recheck_days = kWeekDays;
        a.step = "Look beyond the suction level: the NPSH margin is large" + ratio_words(m) +
                 (f.off_duty ? ", and the pump runs far from the baseline's flow, so suction recirculation at part load "
                             "is the first suspect (bring the flow back within the pump's operating range); then"
                           : ";") +
                 " look for air drawn in (a vortex at the intake, a leaking suction joint) or a blockage (strainer, "
                 "part-closed suction valve), and check the suction gauge and the NPSH3 curve";
        return a;
    }
    if (agreement == MarginAgreement::consistent && m && m->margin_ratio) {
        if (m->below_guidance) {
            a.priority = Priority::urgent;
            a.recheck_days = kAfterCorrectionDays;
            a.basis = kTradePractice;
            a.step = "Raise the suction head now" + ratio_words(m) +
                     ": liquid level or suction pressure, the suction strainer and valve, the liquid temperature; cut "
                     "the flow if the process allows; re-measure within a day of the change";
        } else if (developed) {
            a.priority = Priority::soon;
            a.recheck_days = kWeekDays;
            a.step = "Raise the suction pressure or cut the flow: developed cavitation with the margin within guidance" +
                     ratio_words(m) + " means the guidance minimum is not enough for this pump at this duty; check the "
                     "strainer and suction valve, and confirm the NPSH3 value for this impeller";
        } else {
            a.priority = Priority::planned;
            a.recheck_days = kRouteIntervalDays;
            a.step = "Watch the trend: incipient cavitation" + ratio_words(m) +
                     " is expected above NPSH3 (inception lies at 1.5 to more than 5 x NPSH3, higher at part load); "
                     "check the suction strainer and valve at the next planned stop";
        }
        return a;
    }
    a.priority = developed ? Priority::soon : Priority::planned;
    a.recheck_days = developed ? kWeekDays : kTwoWeeksDays;
    a.step = std::string(developed ? "Check the suction conditions this week"
                                   : "Check the suction conditions at the next planned stop") +
             ": liquid level or suction pressure, the suction strainer and valve, the liquid temperature; record the "
             "suction pressure, temperature and flow with the next recording so that the NPSH margin can be worked out";
    return a;
}

Action concern_action(const Finding& f, const OtherFinding& o) {
    Action a;
    a.topic = ActionTopic::other_finding;
    a.concern = o.concern;
    a.basis = kOurChoice;
    switch (o.concern) {
        case Concern::bearing_impacts:
            a.priority = Priority::soon;
            a.recheck_days = kTwoWeeksDays;
            a.step = fmt("Check the bearings: impacts repeat at %.2fx shaft speed, a non-integer order like a bearing "
                         "defect's; compare it with the bearings' defect frequencies, check lubrication and temperature, "
                         "and plan a change if the family grows",
                         f.bearing_order);
            break;
        case Concern::recirculation:
            a.priority = Priority::soon;
            a.recheck_days = kTwoWeeksDays;
            a.step = fmt("Bring the flow above the pump's minimum continuous flow: LF %+.1f dB re baseline with impacts "
                         "at blade passage is recirculation at the vane inlets, which erodes them if it persists",
                         f.lf_rise_db);
            break;
        case Concern::flow_unsteadiness:
            a.priority = Priority::planned;
            a.recheck_days = kRouteIntervalDays;
            a.step = fmt("Compare the flow with the pump's minimum continuous and best-efficiency flows and check the "
                         "valve positions: LF %+.1f dB re baseline with no HF rise is flow turbulence",
                         f.lf_rise_db);
            break;
        case Concern::off_duty:
            a.priority = f.off_duty ? Priority::soon : Priority::planned;
            a.recheck_days = f.off_duty ? kWeekDays : kRouteIntervalDays;
            a.step = std::string("Re-measure at the baseline's duty, or learn a baseline at this duty if the pump now "
                                 "runs there") +
                     (f.off_duty ? ": this verdict was reached where the baseline is not valid" : "");
            break;
        case Concern::speed_change:
            a.priority = Priority::watch;
            a.recheck_days = kRouteIntervalDays;
            a.step = "Re-measure at the baseline's speed, or learn a baseline at this speed if the machine now runs there";
            break;
        case Concern::mains_pickup:
            a.priority = Priority::planned;
            a.recheck_days = kRouteIntervalDays;
            a.step = "Check the sensor cable's shield and grounding and its route past motor and drive cables, then "
                     "re-record: mains hum is electrical pickup, not the machine";
            break;
    }
    return a;
}

}  // namespace

const char* to_string(Priority p) {
    switch (p) {
        case Priority::urgent: return "urgent";
        case Priority::soon: return "soon";
        case Priority::planned: return "planned";
        case Priority::watch: return "watch";
    }
    return "";
}

int rank(Priority p) { return static_cast<int>(p) + 1; }

const char* to_string(ActionTopic t) {
    switch (t) {
        case ActionTopic::cavitation: return "cavitation";
        case ActionTopic::suction_margin: return "suction_margin";
        case ActionTopic::other_finding: return "other_finding";
        case ActionTopic::cannot_judge: return "cannot_judge";
        case ActionTopic::recording_quality: return "recording_quality";
        case ActionTopic::baseline: return "baseline";
    }
    return "";
}

std::vector<Action> plan_actions(const Finding& f, const std::optional<MarginContext>& m) {
    std::vector<Action> out;
    if (f.verdict == Verdict::indeterminate) {
        Action a;
        a.topic = ActionTopic::cannot_judge;
        a.priority = Priority::soon;
        a.recheck_days = kWeekDays;
        a.basis = kOurChoice;
        a.step = "Re-record this point: " + (f.reasons.empty() ? std::string("the record could not be judged")
                                                               : f.reasons.front());
        out.push_back(a);
    } else if (f.verdict == Verdict::developed || f.verdict == Verdict::incipient) {
        out.push_back(cavitation_action(f, m));
    } else if (m && m->agreement == MarginAgreement::at_risk) {
        Action a;
        a.topic = ActionTopic::suction_margin;
        a.priority = Priority::soon;
        a.recheck_days = kTwoWeeksDays;
        a.basis = kOurChoice;
        a.step = "Raise the NPSH margin" + ratio_words(m) +
                 ": no cavitation is heard yet, but a fall in suction level, a warmer liquid or more flow can start it";
        out.push_back(a);
    }
    for (const auto& o : f.other_findings) out.push_back(concern_action(f, o));
    if (const auto warned = f.quality.warnings(); f.verdict != Verdict::indeterminate && !warned.empty()) {
        Action a;
        a.topic = ActionTopic::recording_quality;
        a.priority = Priority::planned;
        a.recheck_days = kRouteIntervalDays;
        a.basis = kOurChoice;
        a.step = "Check the sensor, its mount and the collector's input range before the next visit: " + warned.front();
        out.push_back(a);
    }
    if (!f.baseline_warnings.empty()) {
        Action a;
        a.topic = ActionTopic::baseline;
        a.priority = Priority::planned;
        a.recheck_days = kRouteIntervalDays;
        a.basis = kOurChoice;
        a.step = "Review this point's baseline (" + f.baseline_warnings.front().message +
                 "); learn it again from known-good visits if it is wrong";
        out.push_back(a);
    }
    if (f.reference == ReferenceKind::sister && f.verdict != Verdict::indeterminate) {
        // A sister's baseline sees only large rises: this machine's own sees small ones.
        Action a;
        a.topic = ActionTopic::baseline;
        a.priority = Priority::planned;
        a.recheck_days = kRouteIntervalDays;
        a.basis = kOurChoice;
        a.step = f.verdict == Verdict::normal
                     ? "Learn this machine's own baseline from this and later normal visits ('cavitas baseline'): "
                       "judged against a sister machine's, only a large rise shows"
                     : "Once the cause is removed, learn this machine's own baseline ('cavitas baseline', or a "
                       "suppression run with 'baseline --suppression'): judged against a sister machine's, only a "
                       "large rise shows";
        out.push_back(a);
    }
    std::stable_sort(out.begin(), out.end(), [](const Action& a, const Action& b) { return a.priority < b.priority; });
    return out;
}

}  // namespace cavitas::models
