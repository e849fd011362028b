#include "models/compare.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>

#include "models/rank_tests.hpp"
#include "models/text.hpp"

namespace cavitas::models {

const char* to_string(Change c) {
    switch (c) {
        case Change::improved: return "improved";
        case Change::unchanged: return "unchanged";
        case Change::worse: return "worse";
    }
    return "";
}

namespace {

int severity(Verdict v) {
    switch (v) {
        case Verdict::normal: return 0;
        case Verdict::incipient: return 1;
        case Verdict::developed: return 2;
        case Verdict::indeterminate: return -1;
    }
    return -1;
}

const char* severity_word(int s) {
    return s == 0 ? "normal" : s == 1 ? "incipient" : s == 2 ? "developed" : "none usable";
}

std::vector<double> pooled(const std::vector<RecordingSide>& side, SegmentIndicator i) {
    std::vector<double> v;
    for (const auto& r : side) {
        if (r.finding->verdict == Verdict::indeterminate) continue;
        const auto& s = r.analysis->series[i];
        for (double x : s)
            if (std::isfinite(x)) v.push_back(x);
    }
    return v;
}

// One value per usable recording: its median (the recording, a visit, as the unit).
std::vector<double> medians(const std::vector<RecordingSide>& side, SegmentIndicator i) {
    std::vector<double> v;
    for (const auto& r : side) {
        if (r.finding->verdict == Verdict::indeterminate || r.analysis->series[i].empty()) continue;
        v.push_back(median(r.analysis->series[i]));
    }
    return v;
}

std::size_t usable(const std::vector<RecordingSide>& side) {
    std::size_t n = 0;
    for (const auto& r : side) n += r.finding->verdict == Verdict::indeterminate ? 0 : 1;
    return n;
}

}  // namespace

BeforeAfter compare_before_after(const std::vector<RecordingSide>& before, const std::vector<RecordingSide>& after,
                                 const std::string& unit, const CompareConfig& c) {
    BeforeAfter out;
    for (const auto& r : before) out.before_severity = std::max(out.before_severity, severity(r.finding->verdict));
    for (const auto& r : after) out.after_severity = std::max(out.after_severity, severity(r.finding->verdict));
    if (out.before_severity < 0) throw std::invalid_argument("no usable recording before (all indeterminate)");
    if (out.after_severity < 0) throw std::invalid_argument("no usable recording after (all indeterminate)");

    const SegmentIndicator keys[] = {SegmentIndicator::hf_band_level, SegmentIndicator::hf_kurtosis,
                                     SegmentIndicator::impulse_rate, SegmentIndicator::lf_band_level,
                                     SegmentIndicator::hf_spectral_kurtosis, SegmentIndicator::overall_rms};
    const bool visits = usable(before) >= c.min_visits && usable(after) >= c.min_visits;
    for (SegmentIndicator k : keys) {
        const auto a = visits ? medians(before, k) : pooled(before, k), b = visits ? medians(after, k) : pooled(after, k);
        if (a.empty() || b.empty()) continue;
        const IndicatorInfo& inf = info(k);
        IndicatorChange ic;
        ic.key = json_key(inf, unit);
        ic.label = std::string(inf.label);
        ic.before_segments = a.size();
        ic.after_segments = b.size();
        ic.before_median = median(a);
        ic.after_median = median(b);
        const auto hl = hodges_lehmann(a, b, c.confidence);
        ic.shift = hl.shift;
        ic.ci_low = hl.ci_low;
        ic.ci_high = hl.ci_high;
        const auto u = mann_whitney_u(a, b);
        ic.p_value = u.p_two_sided;
        ic.exact = u.exact;
        ic.cliffs_delta = cliffs_delta(a, b);
        ic.significant = ic.p_value <= c.alpha;
        ic.units = visits ? "recordings" : "segments";
        if (k == SegmentIndicator::hf_band_level) {
            if (!visits) {
                ic.widened_db = 1.96 * std::sqrt(2.0) * c.repeatability_db;
                ic.ci_low -= ic.widened_db;
                ic.ci_high += ic.widened_db;
            }
            // Visits: a few recordings cannot reach a small p; the interval clear of zero decides.
            const bool clear = ic.ci_low > 0.0 || ic.ci_high < 0.0;
            ic.significant = visits ? clear : ic.significant && clear;
        }
        out.indicators.push_back(ic);
    }
    const IndicatorChange& hf = out.indicators.front();
    const bool hf_down = hf.significant && hf.shift < 0.0, hf_up = hf.significant && hf.shift > 0.0;
    const bool material_down = hf_down && hf.shift <= -c.material_db;
    const bool material_up = hf_up && hf.shift >= c.material_db;
    const bool verdict_better = out.after_severity < out.before_severity;
    const bool verdict_worse = out.after_severity > out.before_severity;

    const std::string hf_text =
        visits ? fmt("HF band level %+.1f dB (%.0f %% interval %+.1f .. %+.1f dB over the medians of %zu recordings before "
                     "and %zu after, each recording a unit; Mann-Whitney p = %.2g, Cliff's delta %+.2f)",
                     hf.shift, 100.0 * c.confidence, hf.ci_low, hf.ci_high, hf.before_segments, hf.after_segments,
                     hf.p_value, hf.cliffs_delta)
               : fmt("HF band level %+.1f dB (%.0f %% interval %+.1f .. %+.1f dB: the %zu and %zu segments of fewer than "
                     "%zu recordings a side share a mount and a duty, so the segment interval is widened by +-%.1f dB "
                     "for re-mounting (%.1f dB repeatability); segment-level Mann-Whitney p = %.2g, Cliff's delta "
                     "%+.2f)",
                     hf.shift, 100.0 * c.confidence, hf.ci_low, hf.ci_high, hf.before_segments, hf.after_segments,
                     c.min_visits, hf.widened_db, c.repeatability_db, hf.p_value, hf.cliffs_delta);
    const std::string verdicts =
        fmt("worst verdict before: %s, after: %s", severity_word(out.before_severity), severity_word(out.after_severity));
    if (material_down || (verdict_better && hf_down)) {
        out.change = Change::improved;
        out.evidence.push_back(hf_text);
        out.evidence.push_back(verdicts);
        if (!material_down)
            out.evidence.push_back(fmt("the HF fall is under %.0f dB, but the verdict improved with it", c.material_db));
    } else if (material_up || (verdict_worse && hf_up)) {
        out.change = Change::worse;
        out.evidence.push_back(hf_text);
        out.evidence.push_back(verdicts);
        if (!material_up)
            out.evidence.push_back(fmt("the HF rise is under %.0f dB, but the verdict worsened with it", c.material_db));
    } else {
        out.change = Change::unchanged;
        out.evidence.push_back("no significant change: " + hf_text);
        out.evidence.push_back(verdicts);
        if (hf.significant)
            out.evidence.push_back(fmt("the HF shift is statistically significant but under the %.0f dB that matters on "
                                       "its own, and the verdicts did not move with it",
                                       c.material_db));
        else if (verdict_better || verdict_worse)
            out.evidence.push_back("the verdicts differ, but the HF level did not move significantly: judge again with "
                                   "more or longer recordings");
    }
    for (std::size_t i = 1; i < out.indicators.size(); ++i) {
        const auto& ic = out.indicators[i];
        const IndicatorInfo* inf = indicator_of_key(ic.key);
        if (ic.significant && inf)
            out.evidence.push_back(ic.label + " " + shown_value(*inf, ic.before_median, unit) + " -> " +
                                   shown_value(*inf, ic.after_median, unit) + " (shift " +
                                   shown_value(*inf, ic.shift, unit, true) +
                                   fmt(", p = %.2g, Cliff's delta %+.2f)", ic.p_value, ic.cliffs_delta));
    }
    return out;
}

std::vector<std::string> compare_duties(const OperatingPointSummary& b, const OperatingPointSummary& a) {
    std::vector<std::string> out;
    if (b.flow_m3_s && a.flow_m3_s && *b.flow_m3_s > 0.0) {
        const double ch = (*a.flow_m3_s - *b.flow_m3_s) / *b.flow_m3_s;
        if (std::abs(ch) > 0.10)
            out.push_back(fmt("flow before %.4g m3/h, after %.4g m3/h (%+.0f %%): flow alone changes the HF noise and the "
                              "NPSH the pump needs, and may explain the change",
                              *b.flow_m3_s * 3600.0, *a.flow_m3_s * 3600.0, 100.0 * ch));
    }
    if (b.rpm && a.rpm && *b.rpm > 0.0) {
        const double ch = (*a.rpm - *b.rpm) / *b.rpm;
        if (std::abs(ch) > 0.05)
            out.push_back(fmt("speed before %.0f rpm, after %.0f rpm (%+.1f %%): levels scale with speed, and the change "
                              "may be the speed's",
                              *b.rpm, *a.rpm, 100.0 * ch));
    }
    return out;
}

}  // namespace cavitas::models
