// What someone should do about a finding: one action per thing found, each
// with a priority, a re-check interval and the step in words specific to the
// evidence. The verdict and the NPSH margin choose the cavitation step (a
// large margin points away from the suction level, towards recirculation, air
// or a blockage); every other finding (bearing impacts, flow unsteadiness,
// recirculation, a duty or speed off the baseline's, mains pickup), a record
// that cannot be judged, a record the quality gate warned about (sensor, mount,
// input range) and a baseline with warnings get their own.
//
// The priorities and intervals are our choice unless marked otherwise: each
// action says which (`basis`), so that a site can set its own.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "models/classifier.hpp"
#include "models/margin_reading.hpp"

namespace cavitas::models {

/// How soon: urgent (act within a day), soon (within a week), planned (at the
/// next planned stop or visit), watch (nothing to do but re-measure).
enum class Priority { urgent, soon, planned, watch };
const char* to_string(Priority p);
/// 1 urgent .. 4 watch: smaller is sooner.
int rank(Priority p);

/// What an action is about: cavitation, one of the other findings, or the
/// record itself.
enum class ActionTopic {
    cavitation,
    suction_margin,   ///< no cavitation heard, but the NPSH margin is thin
    other_finding,    ///< see `concern`
    cannot_judge,     ///< indeterminate: re-record
    recording_quality,  ///< judged, but the quality gate warned (sensor, mount, range)
    baseline,         ///< the baseline carries warnings
};
const char* to_string(ActionTopic t);

struct Action {
    ActionTopic topic = ActionTopic::cavitation;
    std::optional<Concern> concern;  ///< set for other_finding
    Priority priority = Priority::watch;
    int recheck_days = 0;            ///< re-measure within this many days
    std::string step;                ///< what to do, in words specific to the evidence
    std::string basis;               ///< where the priority and interval come from
};

/// What the margin says beside the verdict, when an operating point was given.
struct MarginContext {
    MarginAgreement agreement = MarginAgreement::margin_unknown;
    std::optional<double> margin_ratio;  ///< NPSHa / NPSH3
    std::optional<double> npsha_m;
    bool below_guidance = false;         ///< the margin is under the guidance minimum or below NPSH3
};

/// The actions of a finding, soonest first (stable within a priority: the
/// order the evidence gives). A normal finding with nothing else found has
/// none: the route's own interval applies.
std::vector<Action> plan_actions(const Finding& finding, const std::optional<MarginContext>& margin);

}  // namespace cavitas::models
