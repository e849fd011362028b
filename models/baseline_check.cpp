#include "models/baseline_check.hpp"

#include <algorithm>
#include <cmath>

#include "models/margin_reading.hpp"
#include "models/text.hpp"

namespace cavitas::models {

namespace {

struct Level {
    SegmentIndicator indicator;
    const char* name;
};
constexpr Level kLevels[] = {{SegmentIndicator::hf_band_level, "HF"}, {SegmentIndicator::lf_band_level, "LF"}};

std::string band_text(const Baseline& b, SegmentIndicator i) {
    const Band& band = i == SegmentIndicator::hf_band_level ? b.setup.hf : b.setup.lf;
    return fmt("%s band %.0f-%.0f Hz", i == SegmentIndicator::hf_band_level ? "HF" : "LF", band.low_hz, band.high_hz);
}

// The split of one series into before/after that moves the median most, with
// the spread of the residuals within the two parts.
struct Split {
    std::size_t at = 0;
    double change_db = 0.0;
    double within_db = 0.0;
};
// The change point by least absolute deviations (each part about its own
// median); the split with the smallest total deviation wins.
Split best_split(const std::vector<double>& v) {
    Split best;
    double best_cost = 0.0;
    for (std::size_t k = 2; k + 2 <= v.size(); ++k) {
        const std::vector<double> before(v.begin(), v.begin() + static_cast<std::ptrdiff_t>(k));
        const std::vector<double> after(v.begin() + static_cast<std::ptrdiff_t>(k), v.end());
        const double mb = median(before), ma = median(after);
        std::vector<double> resid;
        double cost = 0.0;
        for (double x : before) resid.push_back(x - mb);
        for (double x : after) resid.push_back(x - ma);
        for (double r : resid) cost += std::abs(r);
        if (best.at != 0 && cost >= best_cost) continue;
        best = {k, ma - mb, robust_stat(resid).sigma};
        best_cost = cost;
    }
    return best;
}

void check_unsteady(const Baseline& b, const BaselineSource& s, SegmentIndicator i, const BaselineCheckLimits& L,
                    std::vector<BaselineWarning>& out) {
    std::vector<double> v = s.series[i];
    if (v.size() < 2) return;
    std::sort(v.begin(), v.end());
    const std::size_t trim = v.size() >= 6 ? 1 : 0;
    const double lo = v[trim], hi = v[v.size() - 1 - trim];
    if (hi - lo <= L.unsteady_db) return;
    out.push_back({"unsteady", s.file, -1.0,
                   fmt("%s: the %s level ranges over %.1f dB between its %.4g s segments (%.1f to %.1f dB): not a "
                       "steady state; the machine, its duty or the measurement changed while recording; use a "
                       "steady recording",
                       s.file.c_str(), band_text(b, i).c_str(), hi - lo, b.setup.segment_s, lo, hi)});
}

void check_steps(const Baseline& b, const BaselineCheckLimits& L, std::vector<BaselineWarning>& out) {
    for (const auto& s : b.sources)
        for (const auto& lv : kLevels) {
            const auto& v = s.series[lv.indicator];
            const Split sp = best_split(v);
            const double needed = std::max(L.step_db, L.step_spreads * std::max(sp.within_db, 0.1));
            if (std::abs(sp.change_db) < needed) {
                check_unsteady(b, s, lv.indicator, L, out);
                continue;
            }
            const double t = static_cast<double>(sp.at) * b.setup.segment_s;
            out.push_back({"level_step", s.file, t,
                           fmt("%s: the %s level moves by %+.1f dB from about %.1f s on (spread within the parts "
                               "%.1f dB): the machine or the measurement changed during the recording; use a steady "
                               "recording, or cut it at %.1f s",
                               s.file.c_str(), band_text(b, lv.indicator).c_str(), sp.change_db, t, sp.within_db, t)});
        }
}

// How far two visits' levels may lie apart from re-mounting alone: a 3-sigma
// difference of two readings, each with the mount's repeatability.
double disagree_limit_db(const Baseline& b, const BaselineCheckLimits& L) {
    return std::max(L.disagree_min_db, 3.0 * std::sqrt(2.0) * repeatability_floor_db(b.mount));
}

void check_disagreement(const Baseline& b, const BaselineCheckLimits& L, std::vector<BaselineWarning>& out) {
    if (b.sources.size() < 2) return;
    const double limit = disagree_limit_db(b, L);
    for (const auto& lv : kLevels) {
        const std::vector<double> at_ref = b.visit_levels_at_ref(lv.indicator);
        if (at_ref.size() < 2) return;  // visits without values (an older baseline)
        // Two visits: their difference; more: each against the median of all.
        const double mid = median(at_ref);
        for (std::size_t k = 0; k < at_ref.size(); ++k) {
            const bool pair = at_ref.size() == 2;
            const double d = pair ? at_ref[1] - at_ref[0] : at_ref[k] - mid;
            if (std::abs(d) <= limit || (pair && k == 0)) continue;
            out.push_back({"visits_disagree", b.sources[k].file, -1.0,
                           fmt("%s: its %s level is %+.1f dB from %s, more than re-mounting explains (%.1f dB: "
                               "3 sqrt(2) x the %.1f dB repeatability floor of the mount)%s: a changed machine, duty "
                               "or sensor; check which recording is right before trusting the baseline",
                               b.sources[k].file.c_str(), band_text(b, lv.indicator).c_str(), d,
                               pair ? b.sources[0].file.c_str() : "the recordings' median", limit,
                               repeatability_floor_db(b.mount), b.speed.speeds > 1 ? " (levels brought to one speed)" : "")});
        }
    }
}

void check_cavitating(const Baseline& b, const std::vector<std::optional<Hydraulics>>& duties,
                      const BaselineCheckLimits& L, std::vector<BaselineWarning>& out) {
    for (std::size_t k = 0; k < b.sources.size(); ++k) {
        const auto& s = b.sources[k];
        const double kurt = median(s.series[SegmentIndicator::hf_kurtosis]);
        const double bpf_db = s.recording[static_cast<std::size_t>(RecordingIndicator::envelope_bpf_prominence)];
        const double depth = s.recording[static_cast<std::size_t>(RecordingIndicator::modulation_bpf)];
        const bool locked_line = kurt >= L.cavitating_kurtosis && bpf_db >= L.cavitating_bpf_line_db;
        const bool locked_depth = kurt >= L.strongly_impulsive_kurtosis && depth >= L.cavitating_bpf_depth;
        if (b.vanes > 0 && (locked_line || locked_depth))
            out.push_back({"cavitating", s.file, -1.0,
                           fmt("%s: impulsive HF (kurtosis %.1f) modulated at blade passage (envelope line %.1f dB "
                               "over its floor, depth %.2f): the pump may already be cavitating in this \"known-good\" "
                               "recording (or a bearing is failing); every later finding would call that state normal",
                               s.file.c_str(), kurt, bpf_db, depth)});
        if (k >= duties.size() || !duties[k] || !duties[k]->npsh) continue;
        const Hydraulics& h = *duties[k];
        if (h.margin && (h.margin->margin_class == MarginClass::below_npsh3 || h.margin->margin_class == MarginClass::thin))
            out.push_back({"low_margin", s.file, -1.0,
                           fmt("%s: recorded at NPSHa %.2f m against NPSH3 %.2f m (%s the guidance minimum %.2f m): "
                               "the pump may have been cavitating; learn the baseline at an ample margin",
                               s.file.c_str(), h.margin->npsha_m, h.margin->npsh3_m,
                               h.margin->margin_class == MarginClass::below_npsh3 ? "below NPSH3, under" : "under",
                               h.margin->required_m)});
        else if (h.npsh->npsha_m < kNearBoilingNpshM)
            out.push_back({"low_npsh", s.file, -1.0,
                           fmt("%s: recorded at NPSHa %.2f m, within %.1f m of zero: the liquid at the impeller eye "
                               "was near its boiling point, so the pump was most likely cavitating",
                               s.file.c_str(), h.npsh->npsha_m, kNearBoilingNpshM)});
    }
}

// A suppression run is only a reference once raising the suction head further
// changes nothing: the HF level of its lowest-NPSHa recording should not stand
// above that of its highest by a step (twice the power) or more.
void check_suppression(const Baseline& b, const std::vector<std::optional<Hydraulics>>& duties,
                       const BaselineCheckLimits& L, std::vector<BaselineWarning>& out) {
    if (!b.suppression) return;
    std::optional<std::size_t> low, high;
    for (std::size_t k = 0; k < b.sources.size() && k < duties.size(); ++k) {
        if (!duties[k] || !duties[k]->npsh) continue;
        const double npsha = duties[k]->npsh->npsha_m;
        if (!low || npsha < duties[*low]->npsh->npsha_m) low = k;
        if (!high || npsha > duties[*high]->npsh->npsha_m) high = k;
    }
    if (!low || !high || *low == *high) return;
    const auto level = [&](std::size_t k) { return median(b.sources[k].series[SegmentIndicator::hf_band_level]); };
    const double fall_db = level(*low) - level(*high);
    if (fall_db >= L.step_db)
        out.push_back({"suppression_incomplete", b.sources[*low].file, -1.0,
                       fmt("%s: its HF level is %.1f dB above that of %s, recorded at a higher suction head (NPSHa %.2f "
                           "against %.2f m): raising the head still quietened the pump, so cavitation was not yet "
                           "suppressed at the lower head; raise it further, or learn from the highest only",
                           b.sources[*low].file.c_str(), fall_db, b.sources[*high].file.c_str(),
                           duties[*high]->npsh->npsha_m, duties[*low]->npsh->npsha_m)});
}

void check_amount(const Baseline& b, const BaselineCheckLimits& L, std::vector<BaselineWarning>& out) {
    if (b.sources.size() == 1 && b.sources.front().duration_s < L.short_recording_s)
        out.push_back({"too_little", b.sources.front().file, -1.0,
                       fmt("a single recording of %.1f s: too short to show how much the machine's levels vary; add "
                           "recordings from other visits (baseline --add-to)",
                           b.sources.front().duration_s)});
    else if (b.segments < L.min_segments)
        out.push_back({"too_little", "", -1.0,
                       fmt("%zu analysis segments in all (fewer than %zu): the baseline's spread is a guess; add "
                           "recordings (baseline --add-to)",
                           b.segments, L.min_segments)});
}

}  // namespace

double keep_quieter_part(BaselineSource& s, double segment_s, const BaselineCheckLimits& L) {
    const auto& hf = s.series[SegmentIndicator::hf_band_level];
    const Split sp = best_split(hf);
    if (sp.at == 0 || std::abs(sp.change_db) < std::max(L.step_db, L.step_spreads * std::max(sp.within_db, 0.1)))
        return -1.0;
    const bool keep_before = sp.change_db > 0.0;
    for (auto& v : s.series.values) {
        if (keep_before) v.resize(sp.at);
        else v.erase(v.begin(), v.begin() + static_cast<std::ptrdiff_t>(sp.at));
    }
    return static_cast<double>(sp.at) * segment_s;
}

std::vector<std::size_t> louder_visits(const Baseline& b, const BaselineCheckLimits& L) {
    std::vector<std::size_t> out;
    if (b.sources.size() < 2) return out;
    const double limit = disagree_limit_db(b, L);
    const std::vector<double> at_ref = b.visit_levels_at_ref(SegmentIndicator::hf_band_level);
    if (at_ref.size() < 2) return out;
    if (b.sources.size() == 2) {
        if (std::abs(at_ref[1] - at_ref[0]) > limit) out.push_back(at_ref[1] > at_ref[0] ? 1 : 0);
        return out;
    }
    const double mid = median(at_ref);
    for (std::size_t k = 0; k < at_ref.size(); ++k)
        if (at_ref[k] - mid > limit) out.push_back(k);
    return out;
}

std::vector<BaselineWarning> check_baseline(const Baseline& b, const std::vector<std::optional<Hydraulics>>& duties,
                                            const BaselineCheckLimits& L) {
    std::vector<BaselineWarning> out;
    check_cavitating(b, duties, L, out);
    check_steps(b, L, out);
    check_disagreement(b, L, out);
    check_amount(b, L, out);
    check_suppression(b, duties, L, out);
    return out;
}

}  // namespace cavitas::models
