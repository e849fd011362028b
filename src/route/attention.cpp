#include "src/route/attention.hpp"

#include <algorithm>
#include <map>
#include <set>
#include <tuple>

#include "models/margin_reading.hpp"
#include "src/output/format.hpp"

namespace cavitas::app {

int severity_rank(const SummaryRow& r) {
    if (r.verdict == "developed") return 0;
    if (r.verdict == "incipient") return 1;
    if (r.failed()) return 2;
    if (r.verdict == "indeterminate") return 3;
    if (r.agreement == "at_risk" || !r.other_findings.empty() || !r.actions.empty()) return 4;
    return 5;
}

int margin_tier(const SummaryRow& r) {
    const bool boiling = r.npsha_m && *r.npsha_m < models::kNearBoilingNpshM;
    // The least margin the guidance allows (ANSI/HI 9.6.1: 1.1 x NPSH3), as the margin reading uses it.
    const bool thin = r.margin_ratio && *r.margin_ratio < models::MarginGuidance{}.min_ratio;
    if (boiling || thin || r.agreement == "at_risk") return 0;
    return r.margin_ratio ? 2 : 1;
}

bool worse_first(const SummaryRow& a, const SummaryRow& b) {
    if (severity_rank(a) != severity_rank(b)) return severity_rank(a) < severity_rank(b);
    if (margin_tier(a) != margin_tier(b)) return margin_tier(a) < margin_tier(b);
    if (a.margin_ratio && b.margin_ratio && *a.margin_ratio != *b.margin_ratio) return *a.margin_ratio < *b.margin_ratio;
    if (a.soonest_rank() != b.soonest_rank()) return a.soonest_rank() < b.soonest_rank();
    const double ta = a.hf_rise_change_db.value_or(0.0), tb = b.hf_rise_change_db.value_or(0.0);
    if (ta != tb) return ta > tb;
    if (a.confidence != b.confidence) return a.confidence > b.confidence;
    const double ha = a.hf_rise_db.value_or(-1e9), hb = b.hf_rise_db.value_or(-1e9);
    if (ha != hb) return ha > hb;
    return a.line < b.line;
}

std::string attention_reason(const SummaryRow& r) {
    if (r.failed()) return "not analysed: " + r.reason;
    std::string s = r.verdict == "developed"       ? "developed cavitation"
                    : r.verdict == "incipient"     ? "incipient cavitation"
                    : r.verdict == "indeterminate" ? "no verdict possible"
                                                   : "no cavitation";
    if (r.hf_rise_db && r.verdict != "indeterminate") s += ", HF band " + signed_fixed(*r.hf_rise_db, 1) + " dB re baseline";
    if (r.npsha_m) {
        s += "; NPSHa " + fixed(*r.npsha_m, 2) + " m";
        if (r.margin_ratio) s += " = " + fixed(*r.margin_ratio, 2) + " x NPSH3";
        if (*r.npsha_m < models::kNearBoilingNpshM) s += ", near boiling at the impeller eye";
        else if (r.agreement == "unexplained_by_margin") s += ", a margin that does not explain it";
        else if (margin_tier(r) == 0) s += ", under the guidance minimum";
    }
    if (!r.previous_datetime.empty() && r.hf_rise_change_db)
        s += "; " + signed_fixed(*r.hf_rise_change_db, 1) + " dB since " + r.previous_datetime.substr(0, 10) + " (" +
             r.previous_verdict + ")";
    if (!r.actions.empty())
        s += "; first step " + r.actions.front().priority + ", re-check within " +
             std::to_string(r.actions.front().recheck_days) + " d";
    return s;
}

std::vector<PointState> latest_per_point(const std::vector<SummaryRow>& rows) {
    std::map<std::tuple<std::string, std::string, int>, std::vector<const SummaryRow*>> by_point;
    for (const auto& r : rows)
        if (!r.machine.empty() && !r.point.empty()) by_point[{r.machine, r.point, r.channel}].push_back(&r);
    std::vector<PointState> out;
    for (auto& [key, list] : by_point) {
        std::stable_sort(list.begin(), list.end(), [](const SummaryRow* a, const SummaryRow* b) {
            if (a->failed() != b->failed()) return a->failed();  // failed rows first: the latest analysed row wins
            return a->days < b->days;
        });
        out.push_back({list.back(), std::vector<const SummaryRow*>(list.begin(), list.end() - 1)});
    }
    std::stable_sort(out.begin(), out.end(),
                     [](const PointState& a, const PointState& b) { return worse_first(*a.latest, *b.latest); });
    return out;
}

std::vector<MachineState> machine_states(const std::vector<PointState>& latest) {
    std::vector<MachineState> out;
    std::map<std::string, std::size_t> at;
    std::map<std::string, std::set<std::string>> points;
    for (const auto& p : latest) {  // worst first, so a machine's first row is its worst
        const SummaryRow& r = *p.latest;
        auto [it, fresh] = at.emplace(r.machine, out.size());
        if (fresh) out.push_back({r.machine, &r, 0, 0, 0});
        MachineState& m = out[it->second];
        points[r.machine].insert(r.point);
        m.points = points[r.machine].size();
        ++m.channels;
        m.cavitating += r.verdict == "developed" || r.verdict == "incipient";
    }
    return out;
}

}  // namespace cavitas::app
