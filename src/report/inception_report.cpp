#include "src/report/inception_report.hpp"

#include <algorithm>
#include <cmath>
#include <optional>
#include <utility>
#include <vector>

#include "src/io/errors.hpp"
#include "src/output/format.hpp"
#include "src/output/plain_text.hpp"
#include "src/report/plot.hpp"

namespace cavitas::app {

namespace {

using nlohmann::json;
using doc::Block;
using doc::Document;
using doc::Field;
using doc::Figure;
using doc::Kind;

// ---- the input, checked field by field (a report's input is any file) --------------------------

struct Reader {
    const std::string& origin;
    [[noreturn]] void fail(const std::string& field, const std::string& what) const {
        throw InputError(origin + ": " + field + ": " + what);
    }
    const json& member(const json& j, const std::string& key, const std::string& path) const {
        if (!j.is_object() || !j.contains(key)) fail(path + key, "missing");
        return j[key];
    }
    double number(const json& j, const std::string& key, const std::string& path = "") const {
        const json& v = member(j, key, path);
        if (!v.is_number() || !std::isfinite(v.get<double>())) fail(path + key, "not a finite number");
        return v.get<double>();
    }
    std::optional<double> maybe(const json& j, const std::string& key, const std::string& path = "") const {
        if (!j.is_object() || !j.contains(key) || j[key].is_null()) return std::nullopt;
        return number(j, key, path);
    }
    std::string text(const json& j, const std::string& key, const std::string& path = "") const {
        if (!j.is_object() || !j.contains(key) || j[key].is_null()) return "";
        if (!j[key].is_string()) fail(path + key, "not text");
        return valid_utf8(j[key].get<std::string>());
    }
    bool flag(const json& j, const std::string& key, const std::string& path) const {
        const json& v = member(j, key, path);
        if (!v.is_boolean()) fail(path + key, "not true or false");
        return v.get<bool>();
    }
    std::optional<std::pair<double, double>> pair(const json& j, const std::string& key) const {
        if (!j.contains(key) || j[key].is_null()) return std::nullopt;
        const json& v = j[key];
        if (!v.is_array() || v.size() != 2 || !v[0].is_number() || !v[1].is_number() ||
            !std::isfinite(v[0].get<double>()) || !std::isfinite(v[1].get<double>()) || v[0].get<double>() > v[1].get<double>())
            fail(key, "not [low, high]");
        return std::pair{v[0].get<double>(), v[1].get<double>()};
    }
    std::vector<std::string> texts(const json& j, const std::string& key) const {
        std::vector<std::string> out;
        if (!j.contains(key)) return out;
        if (!j[key].is_array() || j[key].size() > 50) fail(key, "not a list of at most 50 texts");
        for (const auto& v : j[key]) {
            if (!v.is_string()) fail(key, "not a list of texts");
            out.push_back(valid_utf8(v.get<std::string>()));
        }
        return out;
    }
};

struct StepView {
    double npsha_m = 0, npsha_scaled_m = 0, rpm = 0, level_db = 0, low_db = 0, high_db = 0, rise_db = 0, kurtosis = 0,
           lf_db = 0;
    std::optional<double> head_m;
    std::size_t recordings = 0;
    bool fitted = false, past_peak = false;
};

struct SweepView {
    std::string machine, point, level_unit, located, reason, npsh3_reason, advice, sha256, version, path;
    std::optional<double> npshi_m, npsh3_m, plateau_db, slope_db_per_m, knee_m, ratio, reference_head_m;
    std::optional<std::pair<double, double>> interval_m;
    double threshold_db = 3, rise_db = 0, clear_share = 0, clear_required = 0.95, hf_low_hz = 0, hf_high_hz = 0;
    double reference_rpm = 0;
    bool scaled = false;
    std::vector<StepView> steps;
    std::vector<std::string> cautions, sources;
};

StepView read_step(const Reader& rd, const json& s, std::size_t i) {
    const std::string p = "steps[" + std::to_string(i) + "].";
    StepView v;
    v.npsha_m = rd.number(s, "npsha_m", p);
    v.npsha_scaled_m = rd.number(s, "npsha_scaled_m", p);
    v.rpm = rd.number(s, "rpm", p);
    v.level_db = rd.number(s, "hf_level_db", p);
    v.low_db = rd.number(s, "hf_level_p10_db", p);
    v.high_db = rd.number(s, "hf_level_p90_db", p);
    v.rise_db = rd.number(s, "hf_rise_db", p);
    v.kurtosis = rd.number(s, "hf_kurtosis", p);
    v.lf_db = rd.number(s, "lf_level_db", p);
    v.head_m = rd.maybe(s, "head_scaled_m", p);
    v.fitted = rd.flag(s, "fitted", p);
    v.past_peak = rd.flag(s, "past_peak", p);
    const json& recs = rd.member(s, "recordings", p);
    if (!recs.is_array() || recs.empty()) rd.fail(p + "recordings", "not a list of recordings");
    v.recordings = recs.size();
    return v;
}

SweepView read_sweep(const json& j, const std::string& origin) {
    const Reader rd{origin};
    SweepView v;
    const json& sweep = rd.member(j, "sweep", "");
    v.machine = rd.text(sweep, "machine", "sweep.");
    v.point = rd.text(sweep, "point", "sweep.");
    v.sha256 = rd.text(sweep, "sha256", "sweep.");
    v.path = rd.text(sweep, "path", "sweep.");
    v.version = rd.text(j, "cavitas_version");
    v.level_unit = rd.text(j, "level_unit");
    v.located = rd.text(j, "located");
    v.reason = rd.text(j, "npshi_reason");
    v.npsh3_reason = rd.text(j, "npsh3_reason");
    v.advice = rd.text(j, "advice");
    v.npshi_m = rd.maybe(j, "npshi_m");
    v.npsh3_m = rd.maybe(j, "npsh3_m");
    v.plateau_db = rd.maybe(j, "plateau_level_db");
    v.slope_db_per_m = rd.maybe(j, "rise_db_per_m");
    v.knee_m = rd.maybe(j, "knee_m");
    v.ratio = rd.maybe(j, "npshi_to_npsh3");
    v.reference_head_m = rd.maybe(j, "reference_head_m");
    v.interval_m = rd.pair(j, "npshi_interval_m");
    v.threshold_db = rd.number(j, "rise_threshold_db");
    v.rise_db = rd.number(j, "rise_db");
    v.clear_share = rd.number(j, "clear_share");
    v.clear_required = rd.number(j, "clear_share_required");
    const json& bands = rd.member(j, "bands", "");
    v.hf_low_hz = rd.number(bands, "hf_low_hz", "bands.");
    v.hf_high_hz = rd.number(bands, "hf_high_hz", "bands.");
    const json& sc = rd.member(j, "speed_scaling", "");
    v.scaled = rd.flag(sc, "applied", "speed_scaling.");
    v.reference_rpm = rd.number(sc, "reference_rpm", "speed_scaling.");
    const json& steps = rd.member(j, "steps", "");
    if (!steps.is_array() || steps.size() < 2 || steps.size() > kMaxSweepSteps)
        rd.fail("steps", "not a list of 2 to " + std::to_string(kMaxSweepSteps) + " steps");
    for (std::size_t i = 0; i < steps.size(); ++i) v.steps.push_back(read_step(rd, steps[i], i));
    if (v.npshi_m && !v.interval_m) rd.fail("npshi_interval_m", "missing beside npshi_m");
    v.cautions = rd.texts(j, "cautions");
    v.sources = rd.texts(j, "sources");
    return v;
}

// ---- charts ---------------------------------------------------------------------------------------

plot::Axis npsha_axis(const SweepView& v) {
    double lo = v.steps.back().npsha_scaled_m, hi = v.steps.front().npsha_scaled_m;
    for (const auto& s : v.steps) lo = std::min(lo, s.npsha_scaled_m), hi = std::max(hi, s.npsha_scaled_m);
    const double pad = 0.06 * std::max(hi - lo, 0.5);
    plot::Axis a;
    a.lo = std::max(0.0, lo - pad);
    a.hi = hi + pad;
    a.label = v.scaled ? "NPSHa at " + fixed(v.reference_rpm, 0) + " rpm, m" : "NPSHa, m";
    return a;
}

void mark_npsh(plot::Chart& c, const SweepView& v) {
    if (v.npshi_m) {
        c.spans.push_back({v.interval_m->first, v.interval_m->second, "NPSHi 95 % interval", plot::palette::band_shade});
        c.markers.push_back({*v.npshi_m, "NPSHi " + fixed(*v.npshi_m, 2) + " m", plot::palette::verdict("incipient"), true});
    }
    if (v.npsh3_m) c.markers.push_back({*v.npsh3_m, "NPSH3 " + fixed(*v.npsh3_m, 2) + " m", plot::palette::verdict("developed"), true});
    // Labels are laid left to right (one that would overlap the one before is left out).
    std::sort(c.markers.begin(), c.markers.end(), [](const plot::Marker& a, const plot::Marker& b) { return a.x < b.x; });
}

plot::Chart level_chart(const SweepView& v) {
    plot::Chart c;
    c.title = "HF band level against NPSHa (" + fixed(v.hf_low_hz, 0) + "-" + fixed(v.hf_high_hz, 0) + " Hz)";
    c.x = npsha_axis(v);
    double lo = v.steps.front().low_db, hi = v.steps.front().high_db;
    plot::Series fitted{{}, {}, "step median (fitted)", plot::palette::recording, 1.4, false, true, {}};
    plot::Series past{{}, {}, "step median (past the peak)", plot::palette::baseline, 1.4, false, true, {}};
    for (const auto& s : v.steps) {
        lo = std::min(lo, s.low_db), hi = std::max(hi, s.high_db);
        (s.fitted ? fitted : past).x.push_back(s.npsha_scaled_m);
        (s.fitted ? fitted : past).y.push_back(s.level_db);
        c.series.push_back({{s.npsha_scaled_m, s.npsha_scaled_m}, {s.low_db, s.high_db}, "",
                            s.fitted ? plot::palette::recording : plot::palette::baseline, 1.0, false, false, {}});
    }
    if (v.plateau_db && v.slope_db_per_m && v.knee_m) {
        plot::Series line{{}, {}, "two-segment fit", plot::palette::marker_blade, 1.6, false, false, {}};
        double x_min = v.steps.front().npsha_scaled_m, x_max = x_min;
        for (const auto& s : v.steps)
            if (s.fitted) x_min = std::min(x_min, s.npsha_scaled_m), x_max = std::max(x_max, s.npsha_scaled_m);
        for (double x : {x_max, std::clamp(*v.knee_m, x_min, x_max), x_min}) {
            line.x.push_back(x);
            line.y.push_back(*v.plateau_db + *v.slope_db_per_m * std::max(0.0, *v.knee_m - x));
        }
        c.series.push_back(line);
        c.hlines.push_back({*v.plateau_db + v.threshold_db, "plateau +" + fixed(v.threshold_db, 0) + " dB",
                            plot::palette::baseline});
        hi = std::max(hi, *v.plateau_db + v.threshold_db);
    }
    if (!fitted.x.empty()) c.series.push_back(fitted);
    if (!past.x.empty()) c.series.push_back(past);
    const double pad = 0.08 * std::max(hi - lo, 1.0);
    c.y.lo = lo - pad;
    c.y.hi = hi + pad;
    c.y.label = "HF level, " + v.level_unit;
    mark_npsh(c, v);
    return c;
}

std::optional<plot::Chart> head_chart(const SweepView& v) {
    plot::Series head{{}, {}, "head", plot::palette::recording, 1.4, false, true, {}};
    for (const auto& s : v.steps)
        if (s.head_m) head.x.push_back(s.npsha_scaled_m), head.y.push_back(*s.head_m);
    if (head.x.size() < 2) return std::nullopt;
    plot::Chart c;
    c.title = "Pump head against NPSHa";
    c.x = npsha_axis(v);
    const auto [lo, hi] = std::minmax_element(head.y.begin(), head.y.end());
    const double pad = 0.1 * std::max(*hi - *lo, 0.5);
    c.y.lo = *lo - pad;
    c.y.hi = *hi + pad;
    c.y.label = "head, m";
    plot::Series line = head;
    line.name = "";
    line.points = false;
    c.series = {line, head};
    if (v.reference_head_m) {
        c.hlines.push_back({0.97 * *v.reference_head_m, "97 % of " + fixed(*v.reference_head_m, 2) + " m",
                            plot::palette::verdict("developed")});
        c.y.lo = std::min(c.y.lo, 0.97 * *v.reference_head_m - pad);
    }
    mark_npsh(c, v);
    return c;
}

Figure figure_of(std::vector<plot::Chart> charts, const std::string& caption) {
    Figure f;
    f.caption = caption;
    f.aspect = charts.size() > 1 ? 0.95 : 0.55;
    f.draw = [charts](cairo_t* cr, double w, double h) { plot::draw_stacked(cr, w, h, charts); };
    return f;
}

// ---- words ------------------------------------------------------------------------------------------

std::string headline(const SweepView& v) {
    if (!v.npshi_m) return "No cavitation inception found in the range tested";
    return "Cavitation inception at NPSHa " + fixed(*v.npshi_m, 2) + " m";
}

std::string detail(const SweepView& v) {
    if (!v.npshi_m) return v.reason;
    std::string s = "95 % interval " + fixed(v.interval_m->first, 2) + " to " + fixed(v.interval_m->second, 2) + " m";
    s += v.located == "between_steps" ? ", between the last quiet step and the first risen one. "
                                      : ", where the two-segment fit puts the knee. ";
    s += "The HF level rises " + fixed(v.rise_db, 1) + " dB over its plateau by the lowest fitted step (" +
         fixed(v.threshold_db, 0) + " dB counts as inception; " + fixed(100.0 * v.clear_share, 0) +
         " % of the resampled sweeps agree).";
    if (v.scaled) s += " Read at " + fixed(v.reference_rpm, 0) + " rpm.";
    return s;
}

std::string step_state(const StepView& s) { return s.past_peak ? "past the peak" : (s.fitted ? "fitted" : "-"); }

doc::Table step_table(const SweepView& v) {
    doc::Table t;
    t.header = {"NPSHa, m", v.scaled ? "at " + fixed(v.reference_rpm, 0) + " rpm, m" : "as read, m", "rpm", "recordings",
                "HF level, dB", "rise, dB", "HF kurtosis", "LF level, dB", "head, m", "fit"};
    t.numeric = {true, true, true, true, true, true, true, true, true, false};
    t.widths = {1.0, 1.2, 0.8, 1.0, 1.1, 0.9, 1.0, 1.1, 0.9, 1.2};
    for (const auto& s : v.steps) {
        t.rows.push_back({fixed(s.npsha_m, 2), fixed(s.npsha_scaled_m, 2), fixed(s.rpm, 0), std::to_string(s.recordings),
                          fixed(s.level_db, 1), signed_fixed(std::abs(s.rise_db) < 0.05 ? 0.0 : s.rise_db, 1), fixed(s.kurtosis, 2), fixed(s.lf_db, 1),
                          s.head_m ? fixed(*s.head_m, 2) : "-", step_state(s)});
        t.row_verdict.push_back(s.rise_db >= v.threshold_db && s.fitted ? "incipient" : "");
    }
    return t;
}

std::vector<Field> provenance(const SweepView& v) {
    std::vector<Field> f = {{"Sweep", v.path}, {"Sweep SHA-256", v.sha256}, {"HF band", fixed(v.hf_low_hz, 0) + "-" +
                                                                                           fixed(v.hf_high_hz, 0) + " Hz"},
                            {"Levels", v.level_unit}, {"cavitas", v.version}};
    return f;
}

}  // namespace

Document inception_document(const json& j, const std::string& origin, const ReportOptions& o) {
    const SweepView v = read_sweep(j, origin);
    Document d;
    d.title = "Acoustic NPSH test";
    const std::vector<Field> header = {{"Work order", o.work_order}, {"Site", o.site},
                                       {"Machine", o.machine.empty() ? v.machine : o.machine},
                                       {"Point", o.point.empty() ? v.point : o.point}, {"Analyst", o.analyst}};
    for (const auto& f : header)
        if (!f.value.empty()) d.header.push_back(f);
    Block verdict = doc::make(Kind::verdict, headline(v));
    verdict.verdict = v.npshi_m ? "incipient" : "normal";
    verdict.detail = detail(v);
    d.blocks.push_back(verdict);
    std::vector<std::string> said;
    if (!v.advice.empty()) said.push_back(v.advice);
    said.push_back(v.npsh3_m ? "NPSH3 (3 % head drop from " + fixed(*v.reference_head_m, 2) + " m): " + fixed(*v.npsh3_m, 2) + " m." +
                                   (v.ratio ? " NPSHi / NPSH3 = " + fixed(*v.ratio, 2) +
                                                  "; published inception ratios run from 2 to 20 (Budris)." : "")
                             : "NPSH3 not found: " + v.npsh3_reason + ".");
    if (v.scaled)
        said.push_back("Steps brought to " + fixed(v.reference_rpm, 0) + " rpm: NPSHa and head by (n_ref / n)^2, HF levels "
                       "by -40 log10(n / n_ref) dB (the exponent is assumed, not measured on this pump).");
    d.bullets(said);
    Block cautions = doc::make(Kind::cautions);
    cautions.text = "Cautions before and during a sweep";
    cautions.items = v.cautions;
    d.blocks.push_back(cautions);
    d.heading("The sweep");
    std::vector<plot::Chart> charts{level_chart(v)};
    if (auto h = head_chart(v)) charts.push_back(*h);
    d.blocks.push_back(doc::figures_block({figure_of(charts, "Each step's median HF level, with the 10th to 90th "
                                                              "percentile of its segments; the fit runs down to the "
                                                              "loudest step. Shaded: the NPSHi interval.")}));
    Block table = doc::make(Kind::table);
    table.table = step_table(v);
    d.blocks.push_back(table);
    d.heading("Where the numbers come from");
    d.bullets(v.sources);
    Block fields = doc::make(Kind::fields);
    fields.fields = provenance(v);
    d.blocks.push_back(fields);
    d.footer = "cavitas " + v.version + " - acoustic NPSH test of " + v.machine + " " + v.point;
    return d;
}

}  // namespace cavitas::app
