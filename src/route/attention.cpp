#include "src/route/attention.hpp"

#include <algorithm>
#include <map>
#include <set>
#include <tuple>

namespace cavitas::app {

int severity_rank(const SummaryRow& r) {
    if (r.verdict == "developed") return 0;
    if (r.verdict == "incipient") return 1;
    if (r.failed()) return 2;
    if (r.verdict == "indeterminate") return 3;
    if (r.agreement == "at_risk" || !r.other_findings.empty()) return 4;
    return 5;
}

bool worse_first(const SummaryRow& a, const SummaryRow& b) {
    if (severity_rank(a) != severity_rank(b)) return severity_rank(a) < severity_rank(b);
    if (a.confidence != b.confidence) return a.confidence > b.confidence;
    const double ha = a.hf_rise_db.value_or(-1e9), hb = b.hf_rise_db.value_or(-1e9);
    if (ha != hb) return ha > hb;
    return a.line < b.line;
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
