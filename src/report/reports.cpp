#include "src/report/reports.hpp"

#include <algorithm>
#include <cmath>
#include <initializer_list>
#include <filesystem>
#include <map>
#include <ostream>
#include <set>
#include <sstream>

#include "models/classifier.hpp"
#include "models/indicators.hpp"
#include "src/analysis/analysis.hpp"
#include "src/io/atomic_file.hpp"
#include "src/io/datetime.hpp"
#include "src/io/errors.hpp"
#include "src/io/output_guard.hpp"
#include "src/io/text_file.hpp"
#include "src/output/format.hpp"
#include "src/output/plain_text.hpp"
#include "src/output/reviews.hpp"
#include "src/report/inception_report.hpp"
#include "src/report/plot.hpp"
#include "src/route/attention.hpp"
#include "src/route/route.hpp"
#include "src/route/store.hpp"

namespace cavitas::app {

namespace fs = std::filesystem;
using nlohmann::json;
using doc::Block;
using doc::Document;
using doc::Field;
using doc::Figure;
using doc::Kind;

namespace {

// ---- reading JSON without surprises -------------------------------------------------------

// A member of an object, or null when absent: operator[] on a const json with a
// missing key is undefined behaviour, and a report's input is any file.
const json& field(const json& j, const char* key) {
    static const json none;
    if (!j.is_object()) return none;
    const auto it = j.find(key);
    return it == j.end() ? none : *it;
}

double num(const json& j, const char* key, double fallback = 0.0) {
    return j.is_object() && j.contains(key) && j[key].is_number() ? j[key].get<double>() : fallback;
}
std::string str(const json& j, const char* key) {
    return j.is_object() && j.contains(key) && j[key].is_string() ? j[key].get<std::string>() : std::string();
}
// What the finding was judged against (its "reference"; findings from before it read as own).
std::string reference_kind(const json& f) {
    const json& r = field(f, "reference");
    return r.is_object() ? str(r, "kind") : "own";
}

std::vector<double> nums(const json& j, const char* key) {
    std::vector<double> v;
    if (j.is_object() && j.contains(key) && j[key].is_array())
        for (const auto& x : j[key])
            if (x.is_number()) v.push_back(x.get<double>());
    return v;
}
std::vector<std::string> strs(const json& j, const char* key) {
    std::vector<std::string> v;
    if (j.is_object() && j.contains(key) && j[key].is_array())
        for (const auto& x : j[key])
            if (x.is_string()) v.push_back(x.get<std::string>());
    return v;
}

// ---- what a report reads at most (file sizes; the fields are checked further down) ------------
// A finding written by analyze --json is 50-85 kB (the demo's seven, tools/demo.sh), a
// comparison 25 kB, a route.json under 1 kB and a summary line about 1 kB. The limits are
// ~100 times that and more: a real file never meets them, an edited one cannot make a
// report of hundreds of MB. Checked before a byte is parsed.
constexpr std::size_t kMaxDocumentBytes = 8u << 20;      // a finding or a comparison
constexpr std::size_t kMaxRouteRunBytes = 8u << 20;      // route.json (merged_from lists up to 100 000 shards)
constexpr std::size_t kMaxRouteRows = 20000;             // rows of a route report (a year of weekly visits to 400 points)

const json& checked_finding(const json& f, const std::string& origin);
const json& checked_comparison(const json& c, const std::string& origin);

// ---- words ----------------------------------------------------------------------------------

std::string headline(const std::string& verdict) {
    if (verdict == "developed") return "Developed cavitation";
    if (verdict == "incipient") return "Incipient cavitation";
    if (verdict == "normal") return "No cavitation found";
    if (verdict == "indeterminate") return "No verdict: the recording cannot support one";
    return "Not analysed";
}

// grade: the finding's confidence_grade (high / moderate / low; empty = not known);
// reference: what it was judged against (own, suppression, sister).
std::string plain_detail(const std::string& verdict, const std::string& grade, const std::string& reference) {
    std::string s;
    if (verdict == "developed")
        s = "Dense vapour-bubble collapse on the impeller or runner: pitting damage is likely if it goes on.";
    else if (verdict == "incipient")
        s = "Bubble collapse has begun. The pump still makes its head; this is the time to act, before damage builds up.";
    else if (verdict == "normal")
        s = "Nothing in the high-frequency band, its impulsiveness or its modulation stands out from " +
            std::string(reference == "sister"        ? "the sister machine's baseline it was judged against (a wider "
                                                       "spread: only a large rise would show)."
                        : reference == "suppression" ? "this machine's suppression run (its suction head raised)."
                                                     : "this machine's own known-good baseline.");
    else
        s = "The data quality check failed; re-record before judging this machine.";
    if (verdict != "indeterminate" && verdict != "error" && !grade.empty()) s += " Confidence: " + grade + ".";
    return s;
}

// Generic trade practice, most direct first.
std::vector<std::string> next_steps(const std::string& verdict, const std::string& agreement) {
    std::vector<std::string> s;
    if (verdict == "developed" || verdict == "incipient") {
        s.push_back("Check the suction conditions now: liquid level or suction pressure, the suction strainer and "
                    "suction valve, and the liquid temperature.");
        s.push_back("Confirm the operating point against the pump curve: flow, head and speed, and the NPSH margin at "
                    "that flow.");
        if (agreement == "unexplained_by_margin")
            s.push_back("The NPSH margin is large: look for suction recirculation at low flow, air or gas drawn in, or a "
                        "blockage the suction gauge does not see.");
        s.push_back(verdict == "developed" ? "Plan an impeller inspection at the next opportunity; look for pitting on "
                                             "the vane inlets and wear rings."
                                           : "If the cause cannot be removed soon, plan an impeller inspection.");
        s.push_back("Re-measure at the same point after the change and compare before and after.");
    } else if (verdict == "normal") {
        if (agreement == "at_risk")
            s.push_back("No cavitation heard, but the NPSH margin is thin: raise the suction pressure or level, or "
                        "re-measure sooner than the route interval.");
        else
            s.push_back("No action for cavitation; keep to the route interval.");
        s.push_back("Act on any other finding listed below (bearings, flow, electrical pickup).");
    } else if (verdict == "indeterminate") {
        s.push_back("Record again, after putting right what the quality check names.");
    } else {
        s.push_back("Put right the reason this row failed, then analyse it again.");
    }
    return s;
}

// The finding's own limits where it states them (a point's limits file), else the defaults.
std::string threshold_of(const std::string& key, const json& limits) {
    models::ClassifierConfig c;
    c.hf_alert_db = num(limits, "hf_alert_db", c.hf_alert_db);
    c.hf_developed_db = num(limits, "hf_developed_db", c.hf_developed_db);
    c.lf_alert_db = num(limits, "lf_alert_db", c.lf_alert_db);
    if (key == "hf_band_level_db")
        return "alert +" + fixed(c.hf_alert_db, 0) + " dB with z >= " + fixed(c.z_alert, 0) + "; developed +" +
               fixed(c.hf_developed_db, 0) + " dB";
    if (key == "hf_kurtosis_ratio") return "+" + fixed(c.kurtosis_rise, 0) + " over baseline with z >= 3";
    if (key == "impulse_rate_per_s") return "3 x baseline + 5 /s";
    if (key.rfind("envelope_", 0) == 0)
        return fixed(c.line_prominence_db, 0) + " dB over floor and +" + fixed(c.line_rise_db, 0) + " dB over baseline";
    if (key == "modulation_bpf_ratio") return "2 x baseline with z >= 3";
    if (key == "lf_band_level_db") return "+" + fixed(c.lf_alert_db, 0) + " dB (flow, when HF is quiet)";
    return "-";
}

std::string signed_or_plain(double v, bool db) { return db ? signed_fixed(v, 1) + " dB" : signed_fixed(v, 3); }

std::vector<Field> header_fields(const ReportOptions& o, const std::string& machine, const std::string& point,
                                 const std::string& date) {
    // Only what is known: a field with nothing to say is left out, not shown as "-".
    std::vector<Field> all = {{"Work order", o.work_order},
                              {"Site", o.site},
                              {"Machine", o.machine.empty() ? machine : o.machine},
                              {"Point", o.point.empty() ? point : o.point},
                              {"Recorded", o.date.empty() ? date : o.date},
                              {"Analyst", o.analyst}};
    std::vector<Field> known;
    for (auto& f : all)
        if (!f.value.empty()) known.push_back(std::move(f));
    return known;
}

Block cautions_block() {
    Block b = doc::make(Kind::cautions);
    b.text = "Cautions before anyone opens the machine";
    b.items = models::cavitation_cautions();
    return b;
}

Block verdict_block(const std::string& verdict, const std::string& headline_text, const std::string& detail) {
    Block b = doc::make(Kind::verdict);
    b.verdict = verdict;
    b.text = headline_text;
    b.detail = detail;
    return b;
}

// ---- charts -----------------------------------------------------------------------------------

Figure spectrum_figure(const json& sp, const std::string& title, const std::string& caption) {
    Figure f;
    f.caption = caption;
    f.aspect = 0.5;
    f.draw = [sp, title](cairo_t* cr, double w, double h) {
        plot::Chart c;
        c.title = title;
        const auto x = nums(sp, "center_hz");
        const auto y = nums(sp, "level_db");
        c.x.log = true;
        c.x.lo = x.empty() ? 10.0 : x.front();
        c.x.hi = x.empty() ? 10000.0 : x.back();
        c.x.label = "frequency, Hz (log)";
        c.y.label = str(sp, "level_reference").empty() ? "level, dB" : "PSD, " + str(sp, "level_reference");
        double lo = 1e9, hi = -1e9;
        auto extend = [&](const std::vector<double>& v) {
            for (double d : v) {
                lo = std::min(lo, d);
                hi = std::max(hi, d);
            }
        };
        extend(y);
        const auto bm = nums(sp, "baseline_median_db"), b10 = nums(sp, "baseline_p10_db"), b90 = nums(sp, "baseline_p90_db");
        extend(b10);
        extend(b90);
        c.y.lo = std::floor((lo - 3.0) / 10.0) * 10.0;
        c.y.hi = std::ceil((hi + 3.0) / 10.0) * 10.0;
        if (num(sp, "hf_high_hz") > 0.0)
            c.spans.push_back({num(sp, "hf_low_hz"), num(sp, "hf_high_hz"), "HF band judged", plot::palette::band_shade});
        if (b10.size() == x.size() && b90.size() == x.size())
            c.bands.push_back({x, b10, b90, "baseline 10-90 % of segments", plot::palette::baseline, 0.25});
        if (bm.size() == x.size()) {
            plot::Series s{x, bm, "baseline median", plot::palette::baseline, 1.2, true, false, {}};
            c.series.push_back(s);
        }
        c.series.push_back({x, y, "this recording (mean)", plot::palette::recording, 1.5, false, false, {}});
        plot::draw_chart(cr, w, h, c);
    };
    return f;
}

// The averaged spectrum as RMS amplitude per line: acceleration in its unit,
// or velocity in mm/s RMS (from the low cut up) when the finding carries it.
Figure line_spectrum_figure(const json& as, bool velocity) {
    Figure f;
    const std::string unit = str(as, "unit");
    const double low_cut = num(as, "velocity_low_cut_hz");
    f.caption = velocity
                    ? "Velocity spectrum: the averaged acceleration spectrum integrated line by line (v = a / 2 pi f), "
                      "mm/s RMS per line, lines below " + fixed(low_cut, 0) + " Hz left out."
                    : "Amplitude spectrum: the averaged spectrum as RMS amplitude per line, " + unit +
                          " (a sine of amplitude A shows A / 1.414 at its line).";
    f.aspect = 0.42;
    f.draw = [as, velocity, unit](cairo_t* cr, double w, double h) {
        const auto y = nums(as, velocity ? "velocity_rms_mm_s" : "rms");
        const double bin = velocity && num(as, "velocity_bin_hz") > 0.0 ? num(as, "velocity_bin_hz") : num(as, "bin_hz", 1.0);
        plot::Chart c;
        c.title = velocity ? "Velocity spectrum" : "Amplitude spectrum";
        plot::Series s;
        s.name = "this recording (mean)";
        const double top_hz = static_cast<double>(y.size()) * bin;
        double hi = 0.0;
        for (std::size_t k = 1; k < y.size() && static_cast<double>(k) * bin <= top_hz; ++k) {
            s.x.push_back(static_cast<double>(k) * bin);
            s.y.push_back(y[k]);
            hi = std::max(hi, y[k]);
        }
        c.x.lo = 0.0;
        c.x.hi = std::max(bin, std::min(top_hz, static_cast<double>(y.size()) * bin));
        c.x.label = "frequency, Hz";
        c.y.lo = 0.0;
        c.y.hi = hi > 0.0 ? hi * 1.1 : 1.0;
        c.y.label = velocity ? "velocity, mm/s RMS" : "amplitude, " + unit + " RMS";
        c.series.push_back(s);
        plot::draw_chart(cr, w, h, c);
    };
    return f;
}

// The finding's overall velocity, its zone and the absolute band levels, in
// words with their units and references.
std::vector<std::string> levels_sentences(const json& f) {
    std::vector<std::string> items;
    const json& bands = field(f, "bands");
    const std::string abs_ref = str(bands, "absolute_level_reference");
    if (!abs_ref.empty()) {
        for (const auto& [key, label] : {std::pair<std::string, std::string>{"hf", "HF"}, {"lf", "LF"}}) {
            for (const char* suffix : {"re_1um_s2", "re_1upa"}) {
                const std::string k = key + "_level_db_" + suffix;
                if (bands.contains(k) && bands[k].is_number())
                    items.push_back(label + " band " + fixed(num(bands, (key + "_low_hz").c_str()), 0) + "-" +
                                    fixed(num(bands, (key + "_high_hz").c_str()), 0) + " Hz: " +
                                    fixed(bands[k].get<double>(), 1) + " " + abs_ref);
            }
        }
    }
    const json& v = field(f, "velocity");
    if (v.is_object() && v.contains("overall_rms_mm_s") && v["overall_rms_mm_s"].is_number()) {
        std::string t = "Overall velocity " + fixed(num(v, "overall_rms_mm_s"), 2) + " mm/s RMS (" +
                        fixed(num(v, "band_low_hz"), 0) + "-" + fixed(num(v, "band_high_hz"), 0) + " Hz, lines below " +
                        fixed(num(v, "low_cut_hz"), 0) + " Hz left out)";
        const json& z = field(v, "zone");
        if (z.is_object() && !str(z, "name").empty())
            t += ": zone " + str(z, "name") + " by " + str(z, "source") + " (the analyst's zone file; boundaries " +
                 fixed(num(z, "a_b_mm_s"), 1) + " / " + fixed(num(z, "b_c_mm_s"), 1) + " / " + fixed(num(z, "c_d_mm_s"), 1) +
                 " mm/s), " + str(z, "meaning") + ". Zones are context: they do not change the cavitation verdict";
        items.push_back(t + ".");
    } else if (v.is_object() && !str(v, "unavailable").empty()) {
        items.push_back("No velocity: " + str(v, "unavailable") + ".");
    }
    return items;
}

Figure envelope_figure(const json& es) {
    Figure f;
    f.caption = "Squared-envelope spectrum of the HF band, in dB over its median (the floor). Cavitation that "
                "collapses at blade passage shows lines at BPF and its harmonics; bearing faults show lines at "
                "non-integer orders.";
    f.aspect = 0.5;
    f.draw = [es](cairo_t* cr, double w, double h) {
        const auto a = nums(es, "amplitude");
        const double bin = num(es, "bin_hz", 1.0), fr = num(es, "shaft_hz"), bpf = num(es, "bpf_hz");
        std::vector<double> sorted;
        for (std::size_t k = 1; k < a.size(); ++k) sorted.push_back(a[k]);
        std::sort(sorted.begin(), sorted.end());
        const double floor = sorted.empty() ? 1.0 : std::max(sorted[sorted.size() / 2], 1e-30);
        plot::Chart c;
        c.title = "Envelope spectrum";
        plot::Series s;
        s.name = "this recording";
        double top = -1e9;
        for (std::size_t k = 1; k < a.size(); ++k) {
            s.x.push_back(static_cast<double>(k) * bin);
            s.y.push_back(20.0 * std::log10(std::max(a[k], 1e-30) / floor));
            top = std::max(top, s.y.back());
        }
        c.x.lo = 0.0;
        c.x.hi = a.empty() ? 100.0 : static_cast<double>(a.size()) * bin;
        c.x.label = "envelope frequency, Hz";
        c.y.lo = -10.0;
        c.y.hi = std::max(20.0, std::ceil((top + 3.0) / 5.0) * 5.0);
        c.y.label = "dB over the floor";
        if (fr > 0.0)
            for (int k = 1; k * fr < c.x.hi; ++k)
                c.markers.push_back({k * fr, k <= 3 ? std::to_string(k) + "X" : "", plot::palette::marker_shaft, false});
        if (bpf > 0.0)
            for (int k = 1; k * bpf < c.x.hi; ++k)
                c.markers.push_back({k * bpf, k == 1 ? "BPF" : std::to_string(k) + "BPF", plot::palette::marker_blade, true});
        c.series.push_back(s);
        if (fr > 0.0) c.series.push_back({{}, {}, "shaft orders 1X, 2X ...", plot::palette::marker_shaft, 1.0, true, false, {}});
        if (bpf > 0.0) c.series.push_back({{}, {}, "blade pass BPF and harmonics", plot::palette::marker_blade, 1.0, false, false, {}});
        plot::draw_chart(cr, w, h, c);
    };
    return f;
}

Figure kurtogram_figure(const json& kg) {
    Figure f;
    f.caption = "Fast kurtogram (mean over the segments): how impulsive each frequency band is, finer bands lower "
                "down. The outlined cell is the most impulsive band inside the HF band.";
    f.aspect = 0.5;
    f.draw = [kg](cairo_t* cr, double w, double h) {
        plot::HeatMap m;
        m.title = "Kurtogram";
        m.y_label = "level (finer bands down)";
        m.value_label = "kurtosis (Gaussian = 3)";
        const double shown = models::info(models::RecordingIndicator::kurtogram_max).shown_offset;
        m.x.label = "frequency, Hz";
        double fmax = 0.0;
        const json rows = kg.contains("rows") && field(kg, "rows").is_array() ? field(kg, "rows") : json::array();
        const double chosen_c = num(field(kg, "chosen"), "center_hz"), chosen_w = num(field(kg, "chosen"), "bandwidth_hz"),
                     chosen_l = num(field(kg, "chosen"), "level", -1);
        for (std::size_t r = 0; r < rows.size(); ++r) {
            const auto& row = rows[r];
            plot::HeatRow hr;
            hr.values = nums(row, "mean");
            for (double& v : hr.values) v += shown;  // spectral kurtosis to the one convention
            const double bw = num(row, "bandwidth_hz");
            hr.x0 = 0.0;
            hr.x1 = bw * static_cast<double>(hr.values.size());
            fmax = std::max(fmax, hr.x1);
            hr.label = fixed(num(row, "level"), 1);
            if (chosen_w > 0.0 && std::abs(num(row, "level") - chosen_l) < 1e-6)
                m.outline = std::make_pair(r, std::make_pair(chosen_c - chosen_w / 2, chosen_c + chosen_w / 2));
            m.rows.push_back(hr);
        }
        m.x.lo = 0.0;
        m.x.hi = fmax > 0.0 ? fmax : 1.0;
        if (num(kg, "hf_low_hz") > 0.0) {
            m.markers.push_back({num(kg, "hf_low_hz"), "HF", plot::palette::marker_blade, false});
            m.markers.push_back({num(kg, "hf_high_hz"), "", plot::palette::marker_blade, false});
        }
        plot::draw_heatmap(cr, w, h, m);
    };
    return f;
}

// The most impulsive segment's waveform (plots.waveform): the raw trace above the
// HF band-passed one, both against milliseconds from the excerpt's first sample;
// dashed lines one shaft revolution apart when the speed is known, so that the
// eye can tell impacts locked to the rotation from bursts scattered across it.
Figure waveform_figure(const json& w, double shaft_hz) {
    const double fs = num(w, "sample_rate_hz", 1.0), start_s = num(w, "start_s");
    const double lo_hz = num(w, "hf_low_hz"), hi_hz = num(w, "hf_high_hz");
    const std::string unit = str(w, "unit").empty() ? "signal units" : str(w, "unit");
    const std::size_t n = field(w, "raw").is_array() ? field(w, "raw").size() : 0;
    const double span_ms = 1000.0 * static_cast<double>(n) / fs;
    const std::string band = fixed(lo_hz, 0) + "-" + fixed(hi_hz, 0) + " Hz";
    Figure f;
    f.caption = "Waveform of the most impulsive stretch of the recording: " + fixed(span_ms, 1) + " ms starting " +
                fixed(start_s, 3) + " s into the recording, from the segment with the highest HF-band kurtosis (" +
                fixed(num(w, "segment_kurtosis"), 2) + "; 3 for noise without impacts), centred on its largest HF-band "
                "peak. Top: as recorded; bottom: band-passed to the HF band, " + band + "." +
                (shaft_hz > 0.0 ? " Dashed lines are one shaft revolution apart." : "") +
                " A guide to reading it: sharp impacts at a regular spacing (once a revolution, or at a steady rate) "
                "point towards bearing damage or rubbing; bursts at irregular moments, spread across the revolution, "
                "point towards cavitation. The verdict above rests on the indicators, not on this picture.";
    f.aspect = 0.62;
    f.draw = [w, fs, unit, band, span_ms, shaft_hz](cairo_t* cr, double width, double height) {
        auto chart = [&](const char* key, const std::string& title, const std::string& name) {
            const auto y = nums(w, key);
            plot::Chart c;
            c.title = title;
            plot::Series s;
            s.name = name;
            s.width = 0.7;
            double top = 0.0;
            for (std::size_t i = 0; i < y.size(); ++i) {
                s.x.push_back(1000.0 * static_cast<double>(i) / fs);
                s.y.push_back(y[i]);
                top = std::max(top, std::abs(y[i]));
            }
            if (!(top > 0.0)) top = 1.0;
            c.x.lo = 0.0;
            c.x.hi = span_ms > 0.0 ? span_ms : 1.0;
            c.x.label = "time from the excerpt's start, ms";
            c.y.lo = -1.1 * top;
            c.y.hi = 1.1 * top;
            c.y.label = "amplitude, " + unit;
            const double rev_ms = shaft_hz > 0.0 ? 1000.0 / shaft_hz : 0.0;
            if (rev_ms > 0.0 && span_ms / rev_ms <= 64.0)
                for (int k = 1; k * rev_ms < c.x.hi; ++k)
                    c.markers.push_back({k * rev_ms, "", plot::palette::marker_shaft, false});
            c.series.push_back(std::move(s));
            if (rev_ms > 0.0) c.series.push_back({{}, {}, "one shaft revolution", plot::palette::marker_shaft, 1.0, true, false, {}});
            return c;
        };
        plot::draw_stacked(cr, width, height,
                           {chart("raw", "Waveform as recorded", "raw signal"),
                            chart("hf", "Waveform band-passed to the HF band, " + band, "HF band " + band)});
    };
    return f;
}

struct TrendPoint {
    double days;
    double hf;
    std::string verdict;
};

// The point's history, its connecting line broken at each maintenance event
// (drawn as a vertical line with its date and words): a repair starts a new run.
Figure trend_figure(const std::string& machine, const std::string& point, const std::vector<TrendPoint>& pts,
                    const std::vector<Event>& events = {}) {
    Figure f;
    f.caption = "HF band level over the baseline at each visit of " + machine + " " + point +
                "; the marks show the verdict, the dashed line the +3 dB alert" +
                (events.empty() ? "." : "; a vertical line marks each maintenance event (listed below), where the "
                                        "line between visits is broken.");
    f.aspect = 0.42;
    f.draw = [pts, machine, point, events](cairo_t* cr, double w, double h) {
        plot::Chart c;
        c.title = "History of " + machine + " " + point;
        plot::Series s;
        s.name = "visits";
        s.points = true;
        double lo = 0.0, hi = 6.0, d0 = 1e18, d1 = -1e18;
        for (const auto& p : pts) {
            s.x.push_back(p.days);
            s.y.push_back(p.hf);
            s.point_verdicts.push_back(p.verdict);
            lo = std::min(lo, p.hf);
            hi = std::max(hi, p.hf);
            d0 = std::min(d0, p.days);
            d1 = std::max(d1, p.days);
        }
        for (const auto& e : events) {
            d0 = std::min(d0, e.days);
            d1 = std::max(d1, e.days);
        }
        // One line a run of visits between events.
        std::size_t next = 0;
        for (std::size_t k = 0; k <= events.size(); ++k) {
            plot::Series line;
            line.colour = plot::palette::baseline;
            line.width = 0.8;
            for (; next < pts.size() && (k == events.size() || pts[next].days < events[k].days); ++next) {
                line.x.push_back(pts[next].days);
                line.y.push_back(pts[next].hf);
            }
            c.series.push_back(line);
        }
        c.series.push_back(s);
        for (const auto& e : events) c.markers.push_back({e.days, e.label().substr(0, 10), plot::palette::ink, true});
        if (!events.empty()) c.series.push_back({{}, {}, "maintenance event", plot::palette::ink, 1.0, false, false, {}});
        const double pad = std::max(3.0, 0.06 * (d1 - d0));
        c.x.lo = d0 - pad;
        c.x.hi = d1 + pad;
        c.x.dates = true;
        c.x.label = "date of the visit";
        c.y.lo = std::floor((lo - 2.0) / 5.0) * 5.0;
        c.y.hi = std::ceil((hi + 2.0) / 5.0) * 5.0;
        c.y.label = "HF over baseline, dB";
        c.hlines.push_back({3.0, "+3 dB alert", plot::palette::verdict("incipient")});
        plot::draw_chart(cr, w, h, c);
    };
    return f;
}

// The maintenance events of a machine point a route report shows: the store's
// and those route.json lists (its manifest's), once each, oldest first.
std::vector<Event> point_events(const HistoryStore* store, const std::vector<Event>& route_events,
                                const std::string& machine, const std::string& point) {
    std::vector<Event> out = store ? store->events(machine, point) : std::vector<Event>{};
    for (const auto& e : route_events) {
        if (e.machine != machine || !e.applies_to(point)) continue;
        const bool known = std::any_of(out.begin(), out.end(), [&](const Event& x) {
            return x.happened_at == e.happened_at && x.what == e.what && x.point == e.point;
        });
        if (!known) out.push_back(e);
    }
    std::stable_sort(out.begin(), out.end(), [](const Event& a, const Event& b) { return a.days < b.days; });
    return out;
}

std::vector<std::string> event_items(const std::vector<Event>& events) {
    std::vector<std::string> items;
    for (const auto& e : events)
        items.push_back("Event " + e.label() + (e.point.empty() ? " (every point of the machine)" : " (this point)") +
                        ": the trend is judged on the visits from it on.");
    return items;
}

// What a value of an indicator of a comparison is shifted by to be read in the one kurtosis convention.
double shown_offset(const json& indicator) {
    const models::IndicatorInfo* inf = models::indicator_of_key(str(indicator, "key"));
    return inf ? inf->shown_offset : 0.0;
}

doc::Table indicator_table(const json& finding) {
    doc::Table t;
    t.header = {"indicator", "value", "baseline (median +- spread)", "change", "threshold"};
    t.widths = {2.1, 1.0, 1.6, 1.0, 2.4};
    t.numeric = {false, true, true, true, false};
    const json& ind = field(finding, "indicators");
    if (!ind.is_object()) return t;
    const std::vector<std::string> order = {
        "hf_band_level_db",         "hf_kurtosis_ratio",           "impulse_rate_per_s",  "envelope_bpf_prominence_db",
        "envelope_2bpf_prominence_db", "envelope_1x_prominence_db", "modulation_bpf_ratio", "lf_band_level_db",
        "hf_spectral_kurtosis_ratio", "kurtogram_max_ratio",       "hf_crest_ratio"};
    for (const auto& key : order) {
        if (!ind.contains(key) || !ind[key].is_object()) continue;
        const json& v = ind[key];
        const bool db = key.size() > 3 && key.compare(key.size() - 3, 3, "_db") == 0;
        const int dec = db ? 1 : 2;
        const models::IndicatorInfo* inf = models::indicator_of_key(key);
        const double shown = inf ? inf->shown_offset : 0.0;
        t.rows.push_back({models::indicator_heading(key), fixed(num(v, "value") + shown, dec),
                          fixed(num(v, "baseline_median") + shown, dec) + " +- " + fixed(num(v, "baseline_sigma"), dec),
                          signed_or_plain(num(v, "change"), db), threshold_of(key, field(finding, "limits"))});
    }
    for (const auto& [key, v] : ind.items()) {
        if (std::find(order.begin(), order.end(), key) != order.end() || !v.is_object() || !v.contains("value")) continue;
        if (key.rfind("overall_rms", 0) != 0 && key.rfind("overall_peak", 0) != 0) continue;
        t.rows.push_back({models::indicator_heading(key), fixed(num(v, "value"), 3),
                          fixed(num(v, "baseline_median"), 3) + " +- " + fixed(num(v, "baseline_sigma"), 3),
                          signed_fixed(num(v, "change"), 3), "-"});
    }
    return t;
}

// Velocity, zone and absolute levels, and the line spectra they come from.
void add_levels_section(Document& d, const json& f, const json& plots) {
    const auto items = levels_sentences(f);
    if (!items.empty()) {
        d.paragraph("Levels in the trade's units, with their references:");
        d.bullets(items);
    }
    const json& as = field(plots, "amplitude_spectrum");
    if (as.is_object() && as.contains("rms")) {
        std::vector<Figure> figs{line_spectrum_figure(as, false)};
        if (as.contains("velocity_rms_mm_s")) figs.push_back(line_spectrum_figure(as, true));
        for (auto& fig : figs) d.blocks.push_back(doc::figures_block({fig}));
    }
}

// The waveform chart of a finding page; findings written before it existed have none.
void add_waveform_section(Document& d, const json& plots) {
    if (!plots.contains("waveform")) return;
    const double shaft_hz = num(field(plots, "envelope_spectrum"), "shaft_hz");
    d.blocks.push_back(doc::figures_block({waveform_figure(field(plots, "waveform"), shaft_hz)}));
}

// "Soon, re-check within 7 days: Look beyond ..." (with the basis when it is not ours).
std::string action_line(const std::string& priority, int recheck_days, const std::string& step, const std::string& basis) {
    std::string s = priority.empty() ? std::string("-") : priority;
    s[0] = static_cast<char>(std::toupper(static_cast<unsigned char>(s[0])));
    s += ", re-check within " + std::to_string(recheck_days) + (recheck_days == 1 ? " day: " : " days: ") + step;
    if (basis.rfind("our choice", 0) != 0 && !basis.empty()) s += " (" + basis + ")";
    return s;
}

constexpr const char* kActionsLegend =
    "Priorities: urgent - act within a day; soon - within a week; planned - at the next planned stop or visit; "
    "watch - nothing to do but re-measure. Priorities and re-check intervals are cavitas defaults (our choice) "
    "unless marked otherwise: set your site's own.";

void add_finding_sections(Document& d, const json& f, bool full) {
    const std::string verdict = str(f, "verdict");
    const json op = f.contains("operating_point") ? field(f, "operating_point") : json::object();
    const std::string agreement = str(op, "agreement");
    d.blocks.push_back(verdict_block(verdict, headline(verdict), plain_detail(verdict, str(f, "confidence_grade"), reference_kind(f))));
    const auto evidence = strs(f, "evidence");
    const auto reasons = strs(field(f, "quality"), "reasons");
    if (!reasons.empty()) {
        d.paragraph("Why no verdict:");
        d.bullets(reasons);
    }
    if (!evidence.empty()) {
        d.paragraph("What the recording shows, against the baseline:");
        d.bullets(std::vector<std::string>(evidence.begin(), evidence.begin() + static_cast<std::ptrdiff_t>(
                                                                                std::min<std::size_t>(evidence.size(), 5))));
    }
    if (!op.empty() && !str(op, "summary").empty()) {
        std::vector<std::string> items{"NPSH: " + str(op, "summary") + " - " + models::agreement_words(agreement)};
        for (const auto& n : strs(op, "reading_notes")) items.push_back(n);
        d.paragraph("The operating point beside the verdict:");
        d.bullets(items);
    }
    const auto others = strs(f, "other_findings");
    if (!others.empty()) {
        d.paragraph("Other findings (each with its own action below; they do not change the cavitation verdict):");
        d.bullets(others);
    }
    if (!str(f, "operator_note").empty()) d.paragraph("Operator's note: \"" + str(f, "operator_note") + "\"");
    d.heading("What to do next");
    if (f.contains("actions")) {
        std::vector<std::string> lines;
        for (const auto& a : field(f, "actions"))
            lines.push_back(action_line(str(a, "priority"), static_cast<int>(num(a, "recheck_days")), str(a, "step"),
                                        str(a, "basis")));
        if (lines.empty()) lines.push_back("No action: nothing found needs one; keep to the route interval.");
        d.bullets(lines);
        d.paragraph(kActionsLegend);
    } else {
        d.bullets(next_steps(verdict, agreement));  // a finding of an older cavitas, without actions
    }
    d.blocks.push_back(cautions_block());
    if (!full) return;
    const json plots = f.contains("plots") ? field(f, "plots") : json::object();
    d.heading("Evidence");
    if (plots.contains("spectrum") && field(plots, "spectrum").contains("center_hz"))
        d.blocks.push_back(doc::figures_block({spectrum_figure(field(plots, "spectrum"), "Spectrum against the baseline",
                                             "Power spectral density of this recording (mean over its 1 s segments) "
                                             "against the baseline's median and the 10-90 % range of its segments; "
                                             "the shaded band is the HF band the verdict is judged on.")}));
    if (plots.contains("envelope_spectrum") && plots.contains("kurtogram")) {
        d.blocks.push_back(doc::figures_block({envelope_figure(field(plots, "envelope_spectrum"))}));
        d.blocks.push_back(doc::figures_block({kurtogram_figure(field(plots, "kurtogram"))}));
    }
    add_levels_section(d, f, plots);
    add_waveform_section(d, plots);
    Block tb = doc::make(Kind::table);
    tb.table = indicator_table(f);
    d.paragraph(std::string("Indicators: the recording's value (median over its segments), the baseline's median and spread "
                "(1.4826 x MAD), the change, and the threshold the verdict uses. Levels are in ") +
                (str(field(f, "bands"), "level_reference").empty() ? std::string("dB")
                                                                   : str(field(f, "bands"), "level_reference")) +
                "; changes of levels are dB re baseline.");
    d.blocks.push_back(tb);
    if (field(f, "limits").is_object())
        d.paragraph("Limits used: HF alert " + signed_fixed(num(field(f, "limits"), "hf_alert_db"), 1) + " dB, developed " +
                    signed_fixed(num(field(f, "limits"), "hf_developed_db"), 1) + " dB, LF alert " +
                    signed_fixed(num(field(f, "limits"), "lf_alert_db"), 1) + " dB re baseline, from " +
                    str(field(f, "limits"), "source") +
                    (str(field(f, "limits"), "reason").empty() ? std::string() : " (" + str(field(f, "limits"), "reason") + ")") +
                    ".");
    const auto warnings = strs(field(f, "quality"), "warnings");
    if (!warnings.empty()) {
        d.paragraph("What lowered the confidence:");
        d.bullets(warnings);
    }
    const auto base_warnings = f.contains("baseline_warnings") && field(f, "baseline_warnings").is_array() ? field(f, "baseline_warnings")
                                                                                                     : json::array();
    if (!base_warnings.empty()) {
        std::vector<std::string> lines;
        for (const auto& w : base_warnings)
            if (w.is_object() && w.contains("message") && field(w, "message").is_string()) lines.push_back(field(w, "message"));
        d.paragraph("The baseline itself carries warnings (every reading against it is less sure):");
        d.bullets(lines);
    }
}

std::vector<Field> finding_provenance(const json& f) {
    const json& in = field(f, "input");
    const json& b = field(f, "baseline");
    const std::string kind = reference_kind(f);
    const std::string label = kind == "sister"        ? "Reference (a sister machine's baseline)"
                              : kind == "suppression" ? "Baseline (a suppression run)"
                                                      : "Baseline";
    std::vector<Field> fields = {
        {"Recording", str(in, "path")},
        {"SHA-256", str(in, "sha256")},
        {"Format", str(in, "format") + ", " + fixed(num(in, "sample_rate_hz"), 0) + " Hz, " +
                       fixed(num(in, "duration_s"), 1) + " s, channel " + fixed(num(in, "channel"), 0)},
        {label, str(b, "path") + " (" + str(b, "machine") + ", " + fixed(num(b, "recordings"), 0) +
                    " recordings, made " + str(b, "created_utc") + ")"}};
    if (kind == "sister") {
        std::string differences;
        for (const auto& m : field(field(f, "reference"), "mismatches"))
            if (m.is_object())
                differences += (differences.empty() ? "" : "; ") + str(m, "field") + " " + str(m, "recording") +
                               " here, " + str(m, "reference") + " there";
        fields.push_back({"Differences from the reference",
                          (differences.empty() ? std::string("none stated") : differences) + "; band levels read with " +
                              fixed(num(field(f, "reference"), "level_floor_db"), 1) + " dB more spread"});
    }
    fields.push_back({"Analysed", str(f, "created_utc") + " by cavitas " + str(f, "cavitas_version")});
    fields.push_back({"Report", utc_now() + " by cavitas " + std::string(kVersion)});
    return fields;
}

// ---- the audit trail: who analysed, and the analysts' reviews kept beside a finding ----------

// Reviews shown at most (the latest), and a reason's length on the page.
constexpr std::size_t kReviewsShown = 50;
constexpr std::size_t kReasonShownBytes = 600;

std::string short_sha(const std::string& sha) { return sha.size() > 16 ? sha.substr(0, 16) + "..." : sha; }

// The finding's "provenance": who ran the analysis, where, and the baseline's bytes.
void add_analyst_fields(std::vector<Field>& fields, const json& f) {
    const json& p = field(f, "provenance");
    if (!p.is_object()) return;
    fields.push_back({"Analyst", str(p, "analyst") + " on " + str(p, "host") + " (name from " +
                                     str(p, "analyst_source") + "), " + str(f, "created_utc") + ", cavitas " +
                                     str(p, "cavitas_version")});
    fields.push_back({"Baseline SHA-256", short_sha(str(p, "baseline_sha256")) + " of " + str(p, "baseline_path") +
                                              ", made " + str(p, "baseline_created_utc")});
}

std::string review_line(const Review& r) {
    std::string s = r.reviewed_utc + ", " + r.analyst + " (" + r.host + "): " +
                    (r.decision == "agree" ? "agrees with " + r.verdict
                                           : "overrides " + r.original_verdict + " with " + r.verdict);
    if (!r.reason.empty()) s += ". Why: " + shortened(valid_utf8(r.reason), kReasonShownBytes);
    return s;
}

// The reviews of the finding at finding_path (its bytes hashing to finding_sha256),
// as blocks to stand under cavitas's verdict; none when it has no reviews file.
std::vector<Block> review_blocks(const std::string& finding_path, const std::string& finding_sha256) {
    const std::string path = reviews_path_for(finding_path);
    std::error_code ec;
    if (!fs::exists(path, ec)) return {};
    const ReviewsFile file = read_reviews_file(path);
    std::vector<Block> out;
    if (file.finding_sha256 != finding_sha256) {
        out.push_back(doc::make(Kind::paragraph, "Analyst reviews: " + path + " holds reviews of another version of this "
                                                 "finding (SHA-256 " + short_sha(file.finding_sha256) + ", this one " +
                                                 short_sha(finding_sha256) + "); they are not shown."));
        return out;
    }
    if (file.reviews.empty()) return out;
    const Review& last = file.reviews.back();
    out.push_back(doc::make(Kind::paragraph, "Analyst review (kept beside the finding in " +
                                                 fs::path(path).filename().string() +
                                                 "; the finding above is cavitas's, unchanged):"));
    Block fb = doc::make(Kind::fields);
    fb.fields = {{"cavitas said", last.original_verdict},
                 {"Analyst decided", last.verdict + (last.decision == "agree" ? " (agrees)" : " (overrides cavitas)")},
                 {"By", last.analyst + " on " + last.host + ", " + last.reviewed_utc}};
    if (!last.reason.empty()) fb.fields.push_back({"Why", shortened(valid_utf8(last.reason), kReasonShownBytes)});
    out.push_back(fb);
    if (file.reviews.size() > 1 || !file.carried_over.empty()) {
        Block list = doc::make(Kind::bullets);
        const std::size_t first = file.reviews.size() > kReviewsShown ? file.reviews.size() - kReviewsShown : 0;
        for (std::size_t k = first; k < file.reviews.size(); ++k) list.items.push_back(review_line(file.reviews[k]));
        for (const auto& c : file.carried_over)
            list.items.push_back(c.carried_utc + ": these reviews followed the finding when it was " +
                                 shortened(valid_utf8(c.note), kReasonShownBytes));
        out.push_back(doc::make(Kind::paragraph, "Every review, oldest first" +
                                                     (first > 0 ? " (the latest " + std::to_string(kReviewsShown) + ")"
                                                                : std::string()) + ":"));
        out.push_back(list);
    }
    return out;
}

// The reviews beside the finding, right under cavitas's verdict (both shown).
void add_finding_reviews(Document& d, const std::string& finding_path, const std::string& finding_sha256) {
    std::vector<Block> blocks = review_blocks(finding_path, finding_sha256);
    if (blocks.empty()) return;
    auto at = std::find_if(d.blocks.begin(), d.blocks.end(), [](const Block& b) { return b.kind == Kind::verdict; });
    at = at == d.blocks.end() ? d.blocks.begin() : at + 1;
    d.blocks.insert(at, blocks.begin(), blocks.end());
}

// A route's reviewed findings: machine, point, what cavitas said, the latest decision, who and why.
void add_route_reviews(Document& d, const std::string& folder, const std::vector<SummaryRow>& rows) {
    doc::Table t;
    t.header = {"machine", "point", "ch", "cavitas said", "review", "analyst", "reviewed", "reason"};
    t.widths = {1.1, 0.7, 0.4, 1.0, 1.3, 1.1, 1.4, 3.0};
    t.numeric = {false, false, true, false, false, false, false, false};
    for (const auto& r : rows) {
        if (r.finding.empty()) continue;
        const std::string finding = (fs::path(folder) / r.finding).string();
        std::error_code ec;
        if (!fs::exists(reviews_path_for(finding), ec)) continue;
        const ReviewsFile file = read_reviews_file(reviews_path_for(finding));
        std::string sha;
        (void)read_text_file(finding, "finding file", kMaxDocumentBytes, &sha);
        if (file.reviews.empty()) continue;
        const Review& last = file.reviews.back();
        const bool same = file.finding_sha256 == sha;
        t.rows.push_back({r.machine, r.point, std::to_string(r.channel), r.verdict,
                          same ? (last.decision == "agree" ? "agree: " : "override: ") + last.verdict
                               : "not shown: of another version of the finding",
                          same ? last.analyst : "-", same ? last.reviewed_utc.substr(0, 16) : "-",
                          same ? shortened(valid_utf8(last.reason), 200) : "-"});
        t.row_verdict.push_back(same ? last.verdict : "");
    }
    if (t.rows.empty()) return;
    d.heading("Analyst reviews");
    d.paragraph("Findings an analyst reviewed (cavitas review), each with cavitas's verdict and the latest decision; "
                "the reviews are kept beside the findings (findings/NAME.reviews.json), which stay as cavitas wrote them.");
    Block tb = doc::make(Kind::table);
    tb.table = t;
    d.blocks.push_back(tb);
}

// Who ran the route (route.json's "provenance"), among the route's sources.
void add_run_analyst(std::vector<Field>& fields, const json& run) {
    const json& p = field(run, "provenance");
    if (p.is_object()) fields.push_back({"Route run by", str(p, "analyst") + " on " + str(p, "host")});
}

json read_json_file(const std::string& path, const char* what, std::size_t max_bytes) {
    const json j = json::parse(read_text_file(path, what, max_bytes), nullptr, false);
    if (j.is_discarded()) throw InputError(path + ": not valid JSON");
    return j;
}


}  // namespace

Document finding_document(const json& f, const ReportOptions& o) {
    Document d;
    // A sister's tag is not this machine's: the header then names only what --machine says.
    const std::string machine = reference_kind(f) == "sister" ? std::string() : str(field(f, "baseline"), "machine");
    d.title = "Cavitation finding" + (machine.empty() ? std::string() : " - " + (o.machine.empty() ? machine : o.machine));
    d.header = header_fields(o, machine, "", "");
    add_finding_sections(d, f, true);
    d.heading("Where this comes from");
    Block pv = doc::make(Kind::fields);
    pv.fields = finding_provenance(f);
    add_analyst_fields(pv.fields, f);
    d.blocks.push_back(pv);
    d.footer = "cavitas finding report. Generated from " + str(field(f, "input"), "path") + ".";
    return d;
}

Document compare_document(const json& c, const ReportOptions& o) {
    Document d;
    const std::string machine = str(field(c, "baseline"), "machine");
    d.title = "Before and after" + (machine.empty() ? std::string() : " - " + (o.machine.empty() ? machine : o.machine));
    d.header = header_fields(o, machine, "", "");
    const std::string change = str(c, "change");
    const std::string colour = change == "improved" ? "normal" : change == "worse" ? "developed" : "indeterminate";
    const std::string head = change == "improved" ? "Improved: the change worked"
                             : change == "worse"  ? "Worse after the change"
                                                  : "No significant change";
    const json hf = field(c, "indicators").is_array() && !field(c, "indicators").empty() ? field(c, "indicators")[0] : json::object();
    d.blocks.push_back(verdict_block(colour, head,
                                     "HF band level " + signed_fixed(num(hf, "shift"), 1) + " dB (95 % interval " +
                                         signed_fixed(num(hf, "ci_low"), 1) + " .. " + signed_fixed(num(hf, "ci_high"), 1) +
                                         " dB) from before to after."));
    d.paragraph("Why:");
    d.bullets(strs(c, "evidence"));
    if (!strs(c, "warnings").empty()) {
        d.paragraph("What else could explain it:");
        d.bullets(strs(c, "warnings"));
    }
    d.heading("Before and after, side by side");
    doc::Table rec;
    rec.header = {"", "recording", "verdict", "confidence", "NPSHa"};
    rec.widths = {0.7, 3.6, 1.2, 1.0, 0.9};
    rec.numeric = {false, false, false, true, true};
    for (const char* side : {"before", "after"})
        if (c.contains(side) && c[side].is_array())
            for (const auto& r : c[side]) {
                rec.rows.push_back({side, str(r, "path"), str(r, "verdict"), fixed(num(r, "confidence"), 2),
                                    r.contains("npsha_m") ? fixed(num(r, "npsha_m"), 2) + " m" : "-"});
                rec.row_verdict.push_back(str(r, "verdict"));
            }
    Block rb = doc::make(Kind::table);
    rb.table = rec;
    d.blocks.push_back(rb);
    doc::Table ind;
    ind.header = {"indicator", "before", "after", "change [95 % interval]", "p", "Cliff's delta"};
    ind.widths = {2.2, 1.0, 1.0, 2.2, 0.8, 0.9};
    ind.numeric = {false, true, true, true, true, true};
    if (field(c, "indicators").is_array())
        for (const auto& i : field(c, "indicators"))
            ind.rows.push_back({models::indicator_heading(str(i, "key")), fixed(num(i, "before_median") + shown_offset(i), 3),
                                fixed(num(i, "after_median") + shown_offset(i), 3),
                                signed_fixed(num(i, "shift"), 3) + " [" + signed_fixed(num(i, "ci_low"), 3) + ", " +
                                    signed_fixed(num(i, "ci_high"), 3) + "]",
                                fixed(num(i, "p_value"), 4), signed_fixed(num(i, "cliffs_delta"), 2)});
    Block ib = doc::make(Kind::table);
    ib.table = ind;
    d.paragraph("Medians over the 1 s segments of each side; the change is the Hodges-Lehmann shift with its 95 % "
                "interval, p from the two-sided Mann-Whitney U test, Cliff's delta the effect size (-1 .. 1).");
    d.blocks.push_back(ib);
    const json plots = c.contains("plots") ? field(c, "plots") : json::object();
    if (plots.contains("center_hz")) {
        Figure sp;
        sp.caption = "Spectra before and after (mean over each side's segments) against the baseline's median and "
                     "10-90 % range; the shaded band is the HF band.";
        sp.aspect = 0.75;
        sp.width_pt = 320.0;
        sp.draw = [plots](cairo_t* cr, double w, double h) {
            plot::Chart ch;
            ch.title = "Spectrum before and after";
            const auto x = nums(plots, "center_hz");
            ch.x.log = true;
            ch.x.lo = x.empty() ? 10 : x.front();
            ch.x.hi = x.empty() ? 1e4 : x.back();
            ch.x.label = "frequency, Hz (log)";
            ch.y.label = "PSD, dB";
            double lo = 1e9, hi = -1e9;
            for (const char* k : {"before_db", "after_db", "baseline_p10_db", "baseline_p90_db"})
                for (double v : nums(plots, k)) {
                    lo = std::min(lo, v);
                    hi = std::max(hi, v);
                }
            ch.y.lo = std::floor((lo - 3) / 10) * 10;
            ch.y.hi = std::ceil((hi + 3) / 10) * 10;
            if (num(plots, "hf_high_hz") > 0)
                ch.spans.push_back({num(plots, "hf_low_hz"), num(plots, "hf_high_hz"), "HF band", plot::palette::band_shade});
            const auto p10 = nums(plots, "baseline_p10_db"), p90 = nums(plots, "baseline_p90_db");
            if (p10.size() == x.size() && p90.size() == x.size())
                ch.bands.push_back({x, p10, p90, "baseline 10-90 %", plot::palette::baseline, 0.25});
            ch.series.push_back({x, nums(plots, "before_db"), "before", plot::palette::verdict("developed"), 1.5, false, false, {}});
            ch.series.push_back({x, nums(plots, "after_db"), "after", plot::palette::verdict("normal"), 1.5, false, false, {}});
            plot::draw_chart(cr, w, h, ch);
        };
        Figure seg;
        seg.caption = "HF band level of every 1 s segment before and after; the bars are the medians.";
        seg.aspect = 0.75;
        seg.width_pt = 320.0;
        seg.draw = [plots](cairo_t* cr, double w, double h) {
            const auto b = nums(field(plots, "hf_segments_db"), "before"), a = nums(field(plots, "hf_segments_db"), "after");
            plot::Chart ch;
            ch.title = "HF level of each segment";
            double lo = 1e9, hi = -1e9;
            plot::Series sb, sa;
            sb.points = sa.points = true;
            sb.name = "before";
            sa.name = "after";
            for (std::size_t i = 0; i < b.size(); ++i) {
                sb.x.push_back(1.0 + 0.5 * (static_cast<double>(i % 9) - 4.0) / 9.0);
                sb.y.push_back(b[i]);
                sb.point_verdicts.push_back("developed");
            }
            for (std::size_t i = 0; i < a.size(); ++i) {
                sa.x.push_back(2.0 + 0.5 * (static_cast<double>(i % 9) - 4.0) / 9.0);
                sa.y.push_back(a[i]);
                sa.point_verdicts.push_back("normal");
            }
            for (double v : b) lo = std::min(lo, v), hi = std::max(hi, v);
            for (double v : a) lo = std::min(lo, v), hi = std::max(hi, v);
            ch.x.lo = 0.4;
            ch.x.hi = 2.6;
            ch.x.label = "before (left)    after (right)";
            ch.x.hide_ticks = true;
            ch.y.lo = std::floor((lo - 2) / 5) * 5;
            ch.y.hi = std::ceil((hi + 2) / 5) * 5;
            ch.y.label = "HF band level, dB";
            auto med = [](std::vector<double> v) {
                std::sort(v.begin(), v.end());
                return v.empty() ? 0.0 : (v.size() % 2 ? v[v.size() / 2] : 0.5 * (v[v.size() / 2 - 1] + v[v.size() / 2]));
            };
            ch.series.push_back({{0.7, 1.3}, {med(b), med(b)}, "", plot::palette::ink, 2.0, false, false, {}});
            ch.series.push_back({{1.7, 2.3}, {med(a), med(a)}, "", plot::palette::ink, 2.0, false, false, {}});
            sb.name.clear();
            sa.name.clear();
            ch.series.push_back(sb);
            ch.series.push_back(sa);
            plot::draw_chart(cr, w, h, ch);
        };
        d.blocks.push_back(doc::figures_block({sp, seg}));
    }
    d.heading("What to do next");
    if (change == "improved")
        d.bullets({"Keep the change; measure again at the next route visit to confirm it lasts.",
                   "If the impeller ran cavitating for long, plan an inspection for pitting."});
    else if (change == "worse")
        d.bullets({"Undo or review the change; check the suction conditions and the operating point.",
                   "Plan an impeller inspection if the cavitation persists."});
    else
        d.bullets({"The change made no measurable difference: look for another cause (suction conditions, operating "
                   "point, the NPSH margin), or measure longer for a finer comparison."});
    d.blocks.push_back(cautions_block());
    d.heading("Where this comes from");
    Block pv = doc::make(Kind::fields);
    pv.fields = {{"Baseline", str(field(c, "baseline"), "path")},
                 {"Compared", str(c, "created_utc") + " by cavitas " + str(c, "cavitas_version")},
                 {"Method", str(field(c, "method"), "test")},
                 {"Report", utc_now() + " by cavitas " + std::string(kVersion)}};
    if (c.contains("event") && c["event"].is_object())
        pv.fields.push_back({"Around the event", str(field(c, "event"), "datetime").substr(0, 10) + " '" +
                                                     str(field(c, "event"), "what") + "' (the visits either side, from " +
                                                     str(field(c, "event"), "store") + ")"});
    for (const char* side : {"before", "after"})
        if (c.contains(side) && c[side].is_array())
            for (const auto& r : c[side]) pv.fields.push_back({std::string(side) + " SHA-256", str(r, "sha256")});
    d.blocks.push_back(pv);
    d.footer = "cavitas before/after report.";
    return d;
}

namespace {

std::string point_label(const SummaryRow& r, bool with_channel) {
    return r.machine + " " + r.point + (with_channel ? ", channel " + std::to_string(r.channel) : std::string());
}

bool several_channels(const std::vector<const SummaryRow*>& latest, const SummaryRow& r) {
    return std::count_if(latest.begin(), latest.end(), [&](const SummaryRow* x) {
               return x->machine == r.machine && x->point == r.point;
           }) > 1;
}

// The banner names the first row of the table under it (route/attention: one order) and says why.
Block route_banner(const SummaryRow& w) {
    const bool act = w.verdict == "developed" || w.verdict == "incipient" || w.failed() || !w.actions.empty();
    if (!act) return verdict_block("normal", "No machine point needs action on this route",
                                   "Every point's latest visit is like its baseline, with nothing else found; keep to "
                                   "the route interval.");
    std::string detail = "Why first: " + attention_reason(w) + " (see 'What to do, point by point').";
    if (!w.note.empty()) detail += " Operator's note: \"" + w.note + "\".";
    const bool cavitating = w.verdict == "developed" || w.verdict == "incipient";
    return verdict_block(cavitating || w.failed() ? w.verdict : "indeterminate",
                         "Look at first: " + w.machine + " " + w.point + " - " +
                             (cavitating || w.failed() ? headline(w.verdict) : "a finding to act on"),
                         detail);
}

std::string when_words(const std::string& datetime) {
    std::string when = datetime.substr(0, 16);
    if (when.size() > 10) when[10] = ' ';
    return when;
}

std::string since_words(const SummaryRow& r) {
    if (r.previous_datetime.empty()) return "-";
    std::string since = r.previous_datetime.substr(0, 10) + " " + r.previous_verdict;
    if (r.hf_rise_change_db) since += ", " + signed_fixed(*r.hf_rise_change_db, 1) + " dB";
    if (!r.event_since_previous.empty()) since += "; then event " + r.event_since_previous.substr(0, 10);
    return since;
}

// Each point's latest visit, in the order of attention: the banner's point is row 1.
void add_latest_table(Document& d, const std::vector<const SummaryRow*>& latest) {
    d.heading("Each point at its latest visit, in the order to look at them");
    doc::Table t;
    t.header = {"#", "machine", "point", "recorded", "verdict", "confidence", "HF dB", "NPSHa m", "NPSHa / NPSH3",
                "since previous visit", "first step"};
    t.widths = {0.35, 1.0, 0.9, 1.3, 1.1, 1.0, 0.7, 0.8, 0.8, 1.6, 1.1};
    t.numeric = {true, false, false, false, false, false, true, true, true, false, false};
    int n = 0;
    for (const auto* r : latest) {
        t.rows.push_back({std::to_string(++n), r->machine,
                          r->point + (several_channels(latest, *r) ? " ch " + std::to_string(r->channel) : std::string()),
                          when_words(r->datetime), r->verdict,
                          r->failed() ? "-" : (r->confidence_grade.empty() ? fixed(r->confidence, 2) : r->confidence_grade),
                          r->hf_rise_db ? signed_fixed(*r->hf_rise_db, 1) : "-", r->npsha_m ? fixed(*r->npsha_m, 2) : "-",
                          r->margin_ratio ? fixed(*r->margin_ratio, 2) : "-", since_words(*r),
                          r->actions.empty() ? "-" : r->actions.front().priority});
        t.row_verdict.push_back(r->verdict == "normal" && !r->actions.empty() ? "action" : r->verdict);
    }
    Block tb = doc::make(Kind::table);
    tb.table = t;
    d.blocks.push_back(tb);
    d.paragraph("HF dB: the high-frequency band level in dB re the point's own baseline. NPSHa: net positive suction "
                "head available at the visit, m of liquid; NPSHa / NPSH3: its ratio to the pump's 3 % head-drop NPSH. "
                "Since previous visit: the date and verdict of the point's visit before, and the change of the HF "
                "level since then. First step: the priority of the point's soonest action (below). The stripe is the "
                "verdict's colour, blue where the verdict is normal but another finding needs action.");
}

// Every point with something to act on, numbered as in the table: the operator's note, the other findings and
// the actions, each whole.
void add_point_actions(Document& d, const std::vector<const SummaryRow*>& latest) {
    d.heading("What to do, point by point");
    int n = 0, shown = 0;
    for (const auto* r : latest) {
        ++n;
        if (r->actions.empty() && r->note.empty() && r->other_findings.empty() && !r->failed()) continue;
        ++shown;
        d.paragraph(std::to_string(n) + ". " + point_label(*r, several_channels(latest, *r)) + ", " +
                    when_words(r->datetime) + " - " + attention_reason(*r));
        std::vector<std::string> items;
        if (!r->note.empty()) items.push_back("Operator's note: \"" + r->note + "\"");
        if (r->failed()) items.push_back("Put right why this row failed, then analyse it again: " + r->reason);
        for (const auto& a : r->actions) items.push_back(action_line(a.priority, a.recheck_days, a.step, a.basis));
        if (!r->other_findings.empty()) items.push_back("Other findings: " + r->other_findings);
        d.bullets(items);
    }
    if (shown == 0) d.paragraph("No machine point needs action; keep to the route interval.");
    d.paragraph("After any work: re-measure every point that was acted on, and compare before and after (cavitas "
                "compare). " + std::string(kActionsLegend));
}

// The route's earlier visits of each point, newest first within a point, in the points' order of attention.
void add_earlier_table(Document& d, const std::vector<PointState>& states) {
    std::map<std::pair<std::string, std::string>, int> channels;  // of each point
    for (const auto& st : states) ++channels[{st.latest->machine, st.latest->point}];
    doc::Table t;
    t.header = {"machine", "point", "recorded", "verdict", "confidence", "HF dB", "NPSHa m", "NPSHa / NPSH3", "note"};
    t.widths = {1.0, 0.9, 1.3, 1.1, 1.0, 0.7, 0.8, 0.8, 3.0};
    t.numeric = {false, false, false, false, false, true, true, true, false};
    for (const auto& st : states) {
        for (auto it = st.earlier.rbegin(); it != st.earlier.rend(); ++it) {
            const SummaryRow& r = **it;
            std::string note = r.failed() ? r.reason : r.note;
            const bool several = channels[{r.machine, r.point}] > 1;
            t.rows.push_back({r.machine, r.point + (several ? " ch " + std::to_string(r.channel) : std::string()),
                              when_words(r.datetime), r.verdict,
                              r.failed() ? "-" : (r.confidence_grade.empty() ? fixed(r.confidence, 2) : r.confidence_grade),
                              r.hf_rise_db ? signed_fixed(*r.hf_rise_db, 1) : "-", r.npsha_m ? fixed(*r.npsha_m, 2) : "-",
                              r.margin_ratio ? fixed(*r.margin_ratio, 2) : "-", note.empty() ? "-" : note});
            t.row_verdict.push_back(r.verdict);
        }
    }
    if (t.rows.empty()) return;
    d.heading("Earlier visits on this route");
    Block tb = doc::make(Kind::table);
    tb.table = t;
    d.blocks.push_back(tb);
}

}  // namespace

Document route_document(const std::string& folder, const ReportOptions& o) {
    const json run = read_json_file((fs::path(folder) / "route.json").string(), "route run file", kMaxRouteRunBytes);
    if (str(run, "schema") != "cavitas.route/1") throw InputError(folder + "/route.json: not a cavitas route run");
    const std::vector<SummaryRow> rows =
        read_route_summary(folder, kMaxRouteRows, "a route report shows at most that many").rows;
    Document d;
    d.title = "Route report - " + fs::path(str(run, "manifest")).filename().string();
    std::string first, last;
    for (const auto& r : rows) {
        if (first.empty() || r.datetime < first) first = r.datetime;
        if (last.empty() || r.datetime > last) last = r.datetime;
    }
    d.header = header_fields(o, "", "", first.substr(0, 10) + (last.substr(0, 10) != first.substr(0, 10)
                                                                 ? " .. " + last.substr(0, 10)
                                                                 : std::string()));
    if (o.machine.empty()) d.header.push_back({"Rows", std::to_string(rows.size()) + " (recordings x channels)"});
    // The latest state of each machine point and channel, worst first (route/attention: as on the terminal).
    const std::vector<PointState> states = latest_per_point(rows);
    std::vector<const SummaryRow*> latest;
    for (const auto& st : states) latest.push_back(st.latest);
    std::map<std::pair<std::string, std::string>, std::vector<const SummaryRow*>> by_point;  // for the history charts
    for (const auto& r : rows) by_point[{r.machine, r.point}].push_back(&r);
    if (!latest.empty()) d.blocks.push_back(route_banner(*latest.front()));
    std::size_t failed = 0, cav = 0;
    for (const auto* r : latest) cav += r->verdict == "developed" || r->verdict == "incipient";
    for (const auto& r : rows) failed += r.failed();
    d.paragraph(std::to_string(rows.size()) + " rows (one per recording and channel) of " +
                std::to_string(by_point.size()) + " machine points, " + std::to_string(latest.size()) +
                " channels in all; " + std::to_string(cav) + " channel(s) cavitating at their latest visit; " +
                std::to_string(failed) + " row(s) could not be analysed.");
    d.heading("Each machine, worst first");
    doc::Table mt;
    mt.header = {"machine", "verdict", "points", "channels", "cavitating", "worst point"};
    mt.widths = {1.4, 1.2, 0.7, 0.8, 0.9, 2.0};
    mt.numeric = {false, false, true, true, true, false};
    for (const auto& m : machine_states(states)) {
        mt.rows.push_back({m.machine, m.worst->verdict, std::to_string(m.points), std::to_string(m.channels),
                           std::to_string(m.cavitating),
                           m.worst->point + (m.channels > m.points ? ", channel " + std::to_string(m.worst->channel) : std::string())});
        mt.row_verdict.push_back(m.worst->verdict == "normal" && !m.worst->actions.empty() ? "action" : m.worst->verdict);
    }
    Block mtb = doc::make(Kind::table);
    mtb.table = mt;
    d.blocks.push_back(mtb);
    add_latest_table(d, latest);
    add_point_actions(d, latest);
    add_earlier_table(d, states);
    d.blocks.push_back(cautions_block());

    // History of each point: this route's visits and, when a store is at hand, the earlier ones.
    std::unique_ptr<HistoryStore> store;
    std::string store_path = o.store ? *o.store : str(run, "store");
    std::error_code ec;
    if (!store_path.empty() && fs::is_regular_file(store_path, ec)) store = std::make_unique<HistoryStore>(store_path);
    bool history_heading = false;
    const std::vector<Event> route_events =
        events_from_json(run.contains("events") ? run["events"] : json(), folder + "/route.json");
    for (const auto& [key, list] : by_point) {
        std::map<std::string, TrendPoint> pts;  // by sha256 + channel: the store and this route overlap
        if (store)
            for (const auto& m : store->history(key.first, key.second))
                if (m.hf_rise_db) pts[m.sha256 + "/" + std::to_string(m.channel)] = {m.days, *m.hf_rise_db, m.verdict};
        for (const auto* r : list)
            if (!r->failed() && r->hf_rise_db) pts[r->sha256 + "/" + std::to_string(r->channel)] = {r->days, *r->hf_rise_db, r->verdict};
        if (pts.size() < 2) continue;
        std::vector<TrendPoint> v;
        for (const auto& [k2, p] : pts) v.push_back(p);
        std::sort(v.begin(), v.end(), [](const TrendPoint& a, const TrendPoint& b) { return a.days < b.days; });
        if (!history_heading) {
            d.heading("History of the points visited more than once");
            history_heading = true;
        }
        const std::vector<Event> events = point_events(store.get(), route_events, key.first, key.second);
        d.blocks.push_back(doc::figures_block({trend_figure(key.first, key.second, v, events)}));
        if (!events.empty()) d.bullets(event_items(events));
    }
    // The evidence for each point that needs attention now.
    for (const auto* r : latest) {
        if (!(r->verdict == "developed" || r->verdict == "incipient") || r->finding.empty()) continue;
        // SummaryRow::from_json took only findings/NAME.json: a file inside the folder.
        const std::string fpath = (fs::path(folder) / r->finding).string();
        const json f = checked_finding(read_json_file(fpath, "finding file", kMaxDocumentBytes), fpath);
        d.blocks.push_back(doc::make(Kind::page_break));
        d.heading("Evidence: " + r->machine + " " + r->point + ", " + r->datetime.substr(0, 16));
        const json plots = f.contains("plots") ? field(f, "plots") : json::object();
        d.bullets(strs(f, "evidence"));
        if (plots.contains("spectrum") && field(plots, "spectrum").contains("center_hz"))
            d.blocks.push_back(doc::figures_block({spectrum_figure(field(plots, "spectrum"), "Spectrum against the baseline",
                                                 "This recording against its point's baseline; the shaded band is the "
                                                 "HF band judged.")}));
        if (plots.contains("envelope_spectrum"))
            d.blocks.push_back(doc::figures_block({envelope_figure(field(plots, "envelope_spectrum"))}));
    }
    add_route_reviews(d, folder, rows);
    d.heading("Where this comes from");
    Block pv = doc::make(Kind::fields);
    pv.fields = {{"Manifest", str(run, "manifest")},
                 {"Manifest SHA-256", str(run, "manifest_sha256")},
                 {"Baselines", str(run, "baselines")},
                 {"Analysed", str(run, "finished_utc") + " by cavitas " + str(run, "cavitas_version")},
                 {"Findings", (fs::path(folder) / "findings").string()},
                 {"Report", utc_now() + " by cavitas " + std::string(kVersion)}};
    add_run_analyst(pv.fields, run);
    d.blocks.push_back(pv);
    doc::Table hashes;
    hashes.header = {"line", "recording", "SHA-256"};
    hashes.widths = {0.5, 2.6, 4.4};
    hashes.numeric = {true, false, false};
    for (const auto& r : rows) hashes.rows.push_back({std::to_string(r.line), r.file, r.sha256.empty() ? "-" : r.sha256});
    Block hb = doc::make(Kind::table);
    hb.table = hashes;
    d.blocks.push_back(hb);
    d.footer = "cavitas route report. Generated from " + folder + ".";
    return d;
}

namespace {

// ---- what a report reads, checked before anything is drawn -----------------------------
// A finding or a comparison may have been edited or cut short: every field the
// report reads is checked for its type, every array for its length against its
// partner and a limit, every frequency for being finite and positive, and the
// first problem is named with the file and the field.

// Our limits, each a generous multiple of what cavitas writes (measured on the demo's
// findings and comparison, tools/demo.sh): checked before anything is drawn, so that an
// edited file cannot make a report of hundreds of MB. They are far above anything analyze
// or compare writes, so a real file is never refused by them.
//   a spectrum has ~130 bands (at most a few hundred), the envelope spectrum ~900 lines
//   (ten thousands with long segments), a kurtogram at most 14 rows of at most 128 cells
//   (levels are clamped to 7), a comparison ~6 indicators and one recording a side.
constexpr std::size_t kMaxPlotPoints = 65536;          // values in one plotted array
constexpr std::size_t kMaxDocumentPoints = 262144;     // values in all the plotted arrays of one document
constexpr std::size_t kMaxKurtogramRows = 32;          // cavitas writes at most 14
constexpr std::size_t kMaxKurtogramCells = 4096;       // in one row; cavitas writes at most 128
constexpr std::size_t kMaxSentences = 1000;            // evidence, cautions ... lines of one list
constexpr std::size_t kMaxTableRows = 1000;            // indicators, recordings of a comparison side
constexpr std::size_t kMaxEnvelopeOrders = 2000;       // shaft orders or BPF harmonics marked on the envelope chart

[[noreturn]] void bad(const std::string& origin, const std::string& field_name, const std::string& problem) {
    throw InputError(origin + ": field '" + field_name + "' " + problem);
}

// The plotted values of one document, counted against kMaxDocumentPoints as the arrays are checked.
struct PointBudget {
    std::size_t used = 0;
    void take(std::size_t n, const std::string& origin, const std::string& name) {
        used += n;
        if (used > kMaxDocumentPoints)
            bad(origin, name, "brings the plotted values to more than " + std::to_string(kMaxDocumentPoints) +
                                  " (a report draws at most that many)");
    }
};

enum class Values { any, positive, increasing };  // increasing: positive and strictly rising (a log frequency axis)

std::size_t number_array(const json& j, const char* key, const std::string& origin, const std::string& where,
                         PointBudget& budget, Values values = Values::any, bool required = true,
                         std::size_t max_values = kMaxPlotPoints) {
    const json& a = field(j, key);
    const std::string name = where + "." + key;
    if (a.is_null() && !required) return 0;
    if (!a.is_array()) bad(origin, name, "is missing or not an array");
    if (a.size() > max_values)
        bad(origin, name, "has " + std::to_string(a.size()) + " values (at most " + std::to_string(max_values) + ")");
    budget.take(a.size(), origin, name);
    double previous = 0.0;
    for (const auto& x : a) {
        if (!x.is_number() || !std::isfinite(x.get<double>())) bad(origin, name, "holds a value that is not a finite number");
        const double v = x.get<double>();
        if (values != Values::any && !(v > 0.0)) bad(origin, name, "holds a frequency that is not above 0 Hz");
        if (values == Values::increasing && !(v > previous)) bad(origin, name, "holds frequencies that do not increase");
        previous = v;
    }
    return a.size();
}

// A number the report draws with: absent (fallback) or finite and within [lo, hi].
double checked_number(const json& j, const char* key, const std::string& origin, const std::string& name, double lo,
                      double hi, double fallback = 0.0) {
    const json& v = field(j, key);
    if (v.is_null()) return fallback;
    if (!v.is_number() || !std::isfinite(v.get<double>()) || v.get<double>() < lo || v.get<double>() > hi)
        bad(origin, name, "is not a number from " + fixed(lo, 0) + " to " + fixed(hi, 0));
    return v.get<double>();
}

// m values for n frequencies; an optional array may be absent (m = 0), a required one may not.
void same_length(std::size_t n, std::size_t m, const std::string& origin, const std::string& name,
                 bool required = false) {
    if ((required || m != 0) && m != n) bad(origin, name, "has " + std::to_string(m) + " values for " + std::to_string(n) + " frequencies");
}

void check_sentences(const json& j, const char* key, const std::string& origin, const std::string& where = "",
                     bool required = true) {
    const json& a = field(j, key);
    const std::string name = where.empty() ? std::string(key) : where + "." + key;
    if (a.is_null() && !required) return;
    if (!a.is_array()) bad(origin, name, "is missing or not an array of sentences");
    if (a.size() > kMaxSentences)
        bad(origin, name, "has " + std::to_string(a.size()) + " entries (at most " + std::to_string(kMaxSentences) + ")");
    for (const auto& x : a)
        if (!x.is_string()) bad(origin, name, "holds an entry that is not text");
}

// An array of objects (table rows) of at most kMaxTableRows entries; absent is allowed.
void check_table(const json& j, const char* key, const std::string& origin) {
    const json& a = field(j, key);
    if (a.is_null()) return;
    if (!a.is_array()) bad(origin, key, "is not an array");
    if (a.size() > kMaxTableRows)
        bad(origin, key, "has " + std::to_string(a.size()) + " entries (at most " + std::to_string(kMaxTableRows) + ")");
    for (const auto& x : a)
        if (!x.is_object()) bad(origin, key, "holds an entry that is not an object");
}

constexpr double kMaxHz = 1e9;  // frequencies drawn: far above any sample rate cavitas reads (5 MHz)

// A band plot: rising frequencies (center_hz), arrays of one value a frequency (the
// required ones must be there), and the HF band's edges.
void check_band_plot(const json& j, const std::string& where, std::initializer_list<const char*> required,
                     std::initializer_list<const char*> optional, const std::string& origin, PointBudget& budget) {
    const std::size_t n = number_array(j, "center_hz", origin, where, budget, Values::increasing);
    for (const char* k : required)
        same_length(n, number_array(j, k, origin, where, budget), origin, where + "." + k, true);
    for (const char* k : optional)
        same_length(n, number_array(j, k, origin, where, budget, Values::any, false), origin, where + "." + k);
    for (const char* k : {"hf_low_hz", "hf_high_hz"}) checked_number(j, k, origin, where + "." + k, 0.0, kMaxHz);
}

// plots.waveform: absent (older findings), or an object whose two traces are
// arrays of the same length, 2 .. kMaxWaveformPoints finite numbers, at a positive
// sample rate, with a band and a start that are finite and in range.
constexpr std::size_t kMaxWaveformPoints = 8192;  // a trace; cavitas writes at most 4096
constexpr double kMaxStartS = 1e9;                // s into a recording (31 years)
void check_waveform(const json& plots, const std::string& origin, PointBudget& budget) {
    const json& w = field(plots, "waveform");
    if (w.is_null()) return;
    const std::string where = "plots.waveform";
    if (!w.is_object()) bad(origin, where, "is not an object");
    const std::size_t n = number_array(w, "raw", origin, where, budget, Values::any, true, kMaxWaveformPoints);
    const std::size_t m = number_array(w, "hf", origin, where, budget, Values::any, true, kMaxWaveformPoints);
    if (m != n) bad(origin, where + ".hf", "has " + std::to_string(m) + " values for the " + std::to_string(n) + " of raw");
    if (n < 2) bad(origin, where + ".raw", "has fewer than 2 values");
    const double fs = checked_number(w, "sample_rate_hz", origin, where + ".sample_rate_hz", 0.0, kMaxHz);
    if (!(fs >= 1.0)) bad(origin, where + ".sample_rate_hz", "is missing or below 1 Hz");
    checked_number(w, "start_s", origin, where + ".start_s", 0.0, kMaxStartS);
    checked_number(w, "segment_kurtosis", origin, where + ".segment_kurtosis", 0.0, 1e12);
    for (const char* k : {"hf_low_hz", "hf_high_hz"}) checked_number(w, k, origin, where + "." + k, 0.0, kMaxHz);
    const json& unit = field(w, "unit");
    if (!unit.is_null() && (!unit.is_string() || unit.get<std::string>().size() > 64))
        bad(origin, where + ".unit", "is not a unit of at most 64 characters");
}

// A finding's limits: numbers of dB within what a limits file allows, text of sane length.
void check_limits(const json& f, const std::string& origin) {
    if (!f.contains("limits")) return;
    const json& l = field(f, "limits");
    if (!l.is_object()) bad(origin, "limits", "is not an object");
    for (const char* k : {"hf_alert_db", "hf_developed_db", "lf_alert_db"})
        checked_number(l, k, origin, std::string("limits.") + k, 0.0, 100.0);
    for (const char* k : {"source", "reason"})
        if (l.contains(k) && (!field(l, k).is_string() || field(l, k).get_ref<const std::string&>().size() > 4096))
            bad(origin, std::string("limits.") + k, "is not text of at most 4096 bytes");
}

// The actions a report prints: each an object with a priority cavitas writes, a
// whole number of days and a step in words.
void check_actions(const json& f, const std::string& origin) {
    static const std::set<std::string> priorities{"urgent", "soon", "planned", "watch"};
    if (!f.contains("actions")) return;
    const json& a = field(f, "actions");
    if (!a.is_array() || a.size() > kMaxSentences)
        bad(origin, "actions", "is not a list of at most " + std::to_string(kMaxSentences) + " actions");
    for (const auto& x : a) {
        if (!x.is_object()) bad(origin, "actions", "holds an entry that is not an object");
        if (!field(x, "priority").is_string() || !priorities.count(field(x, "priority").get<std::string>()))
            bad(origin, "actions[].priority", "is not urgent, soon, planned or watch");
        checked_number(x, "recheck_days", origin, "actions[].recheck_days", 0.0, 3650.0);
        if (!field(x, "step").is_string()) bad(origin, "actions[].step", "is missing or not text");
        if (x.contains("basis") && !field(x, "basis").is_string()) bad(origin, "actions[].basis", "is not text");
    }
}

// An edited finding's provenance may not make the report lay out megabytes of text.
void check_provenance(const json& f, const std::string& origin) {
    const json& p = field(f, "provenance");
    if (p.is_null()) return;
    if (!p.is_object() || p.size() > 64) bad(origin, "provenance", "is not an object of at most 64 members");
    for (const auto& [key, value] : p.items())
        if (value.is_string() && value.get_ref<const std::string&>().size() > 4096)
            bad(origin, "provenance." + key, "is longer than 4096 bytes");
}

const json& checked_finding(const json& f, const std::string& origin) {
    static const std::set<std::string> verdicts{"normal", "incipient", "developed", "indeterminate"};
    if (!f.is_object()) bad(origin, "schema", "belongs to a document that is not an object");
    if (!field(f, "verdict").is_string() || !verdicts.count(field(f, "verdict").get<std::string>()))
        bad(origin, "verdict", "is missing or not one of normal, incipient, developed, indeterminate");
    for (const char* k : {"evidence", "other_findings", "cautions"}) check_sentences(f, k, origin);
    check_actions(f, origin);
    check_limits(f, origin);
    if (f.contains("operator_note") && !field(f, "operator_note").is_string()) bad(origin, "operator_note", "is not text");
    if (!field(field(f, "input"), "path").is_string()) bad(origin, "input.path", "is missing or not text");
    if (!field(f, "quality").is_object()) bad(origin, "quality", "is missing or not an object");
    for (const char* k : {"reasons", "warnings"}) check_sentences(field(f, "quality"), k, origin, "quality", false);
    check_sentences(field(f, "operating_point"), "reading_notes", origin, "operating_point", false);
    check_table(f, "baseline_warnings", origin);
    check_provenance(f, origin);
    const json& ind = field(f, "indicators");
    if (ind.is_object() && ind.size() > kMaxTableRows)
        bad(origin, "indicators", "has " + std::to_string(ind.size()) + " entries (at most " +
                                      std::to_string(kMaxTableRows) + ")");
    const json& plots = field(f, "plots");
    if (plots.is_null()) return f;
    if (!plots.is_object()) bad(origin, "plots", "is not an object");
    PointBudget budget;
    const json& sp = field(plots, "spectrum");
    if (sp.is_object() && sp.contains("center_hz")) {
        check_band_plot(sp, "plots.spectrum", {"level_db"},
                        {"p10_db", "p90_db", "baseline_median_db", "baseline_p10_db", "baseline_p90_db"}, origin, budget);
    }
    const json& es = field(plots, "envelope_spectrum");
    if (es.is_object()) {
        const std::size_t n = number_array(es, "amplitude", origin, "plots.envelope_spectrum", budget);
        const double bin = num(es, "bin_hz", -1.0);
        if (n > 0 && !(bin > 0.0 && bin <= kMaxHz))
            bad(origin, "plots.envelope_spectrum.bin_hz", "is not a positive number");
        const double top = static_cast<double>(n) * bin;
        for (const char* k : {"shaft_hz", "bpf_hz"}) {
            const std::string name = std::string("plots.envelope_spectrum.") + k;
            const double hz = checked_number(es, k, origin, name, 0.0, kMaxHz);
            if (hz > 0.0 && top / hz > static_cast<double>(kMaxEnvelopeOrders))
                bad(origin, name, "would mark more than " + std::to_string(kMaxEnvelopeOrders) +
                                      " orders on an envelope spectrum up to " + fixed(top, 0) + " Hz");
        }
    }
    const json& as = field(plots, "amplitude_spectrum");
    if (as.is_object() && as.contains("rms")) {
        const std::size_t n = number_array(as, "rms", origin, "plots.amplitude_spectrum", budget);
        number_array(as, "velocity_rms_mm_s", origin, "plots.amplitude_spectrum", budget, Values::any, false);
        if (n > 0) checked_number(as, "bin_hz", origin, "plots.amplitude_spectrum.bin_hz", 1e-9, kMaxHz);
        if (as.contains("velocity_bin_hz"))
            checked_number(as, "velocity_bin_hz", origin, "plots.amplitude_spectrum.velocity_bin_hz", 1e-9, kMaxHz);
    }
    const json& kg = field(plots, "kurtogram");
    const json& rows = field(kg, "rows");
    if (!rows.is_null()) {
        if (!rows.is_array() || rows.size() > kMaxKurtogramRows)
            bad(origin, "plots.kurtogram.rows", "is not an array of at most " + std::to_string(kMaxKurtogramRows) + " rows");
        for (const auto& row : rows) {
            if (!row.is_object()) bad(origin, "plots.kurtogram.rows", "holds a row that is not an object");
            number_array(row, "mean", origin, "plots.kurtogram.rows[]", budget, Values::any, true, kMaxKurtogramCells);
            if (!(num(row, "bandwidth_hz", -1.0) > 0.0 && num(row, "bandwidth_hz") <= kMaxHz))
                bad(origin, "plots.kurtogram.rows[].bandwidth_hz", "is not above 0 Hz");
            checked_number(row, "level", origin, "plots.kurtogram.rows[].level", 0.0, 64.0);
        }
    }
    for (const char* k : {"hf_low_hz", "hf_high_hz"}) checked_number(kg, k, origin, std::string("plots.kurtogram.") + k, 0.0, kMaxHz);
    for (const char* k : {"center_hz", "bandwidth_hz"})
        checked_number(field(kg, "chosen"), k, origin, std::string("plots.kurtogram.chosen.") + k, 0.0, kMaxHz);
    checked_number(field(kg, "chosen"), "level", origin, "plots.kurtogram.chosen.level", -1.0, 64.0);
    check_waveform(plots, origin, budget);
    return f;
}

const json& checked_comparison(const json& c, const std::string& origin) {
    static const std::set<std::string> changes{"improved", "unchanged", "worse"};
    if (!c.is_object()) bad(origin, "schema", "belongs to a document that is not an object");
    if (!field(c, "change").is_string() || !changes.count(field(c, "change").get<std::string>()))
        bad(origin, "change", "is missing or not one of improved, unchanged, worse");
    if (!field(c, "indicators").is_array() || field(c, "indicators").empty())
        bad(origin, "indicators", "is missing or empty");
    check_table(c, "indicators", origin);
    for (const char* side : {"before", "after"}) check_table(c, side, origin);
    check_sentences(c, "evidence", origin);
    check_sentences(c, "warnings", origin, "", false);
    const json& plots = field(c, "plots");
    if (plots.is_object() && plots.contains("center_hz")) {
        PointBudget budget;
        check_band_plot(plots, "plots", {},
                        {"before_db", "after_db", "baseline_median_db", "baseline_p10_db", "baseline_p90_db"}, origin,
                        budget);
        const json& seg = field(plots, "hf_segments_db");
        if (seg.is_object()) {
            number_array(seg, "before", origin, "plots.hf_segments_db", budget);
            number_array(seg, "after", origin, "plots.hf_segments_db", budget);
        }
    }
    return c;
}

}  // namespace

Document document_from_text(const std::string& text, const std::string& origin, const ReportOptions& o) {
    if (text.size() > kMaxDocumentBytes)
        throw InputError(origin + ": " + std::to_string(text.size()) + " bytes is too large for a report input (at most " +
                         std::to_string(kMaxDocumentBytes) + ")");
    const json j = json::parse(text, nullptr, false);
    if (j.is_discarded()) throw InputError(origin + ": not valid JSON");
    const std::string schema = str(j, "schema");
    if (schema.rfind("cavitas.finding/", 0) == 0) return finding_document(checked_finding(j, origin), o);
    if (schema.rfind("cavitas.compare/", 0) == 0) return compare_document(checked_comparison(j, origin), o);
    if (schema.rfind("cavitas.inception/", 0) == 0) return inception_document(j, origin, o);
    throw InputError(origin + ": not a finding (analyze --json), a comparison (compare --json), a sweep's result "
                     "(inception --json) or a route output folder");
}

namespace {

// The HTML and the PDF of a document, both or neither.
void write_report(const Document& d, const ReportOptions& o, std::ostream& out) {
    // Both files or neither: a PDF that cannot be written leaves no new HTML behind.
    StagedFiles files;
    if (o.html) files.add(*o.html, doc::to_html(d));
    int pages = 0;
    if (o.pdf) files.add(*o.pdf, doc::to_pdf(d, o.paper == "letter" ? doc::Paper::letter : doc::Paper::a4, &pages));
    if (o.input_output) files.add(*o.input_output, o.input_text);
    files.commit();
    if (o.html) out << "report written to " << *o.html << "\n";
    if (o.pdf)
        out << "report written to " << *o.pdf << " (" << pages << " page" << (pages == 1 ? "" : "s") << ", "
            << (o.paper == "letter" ? "Letter" : "A4") << ")\n";
}

}  // namespace

// Longest header field (--work-order, --site, ...), bytes: a line of the header.
constexpr std::size_t kHeaderFieldMaxBytes = 200;

void render_report(const ReportOptions& given, std::ostream& out) {
    if (!given.html && !given.pdf) throw UsageError("report: give --html OUT.html, --pdf OUT.pdf or both");
    if (given.paper != "a4" && given.paper != "letter") throw UsageError("--paper '" + given.paper + "': use a4 or letter");
    // The header's fields are a line each: a length checked before any layout
    // (a 100 000-character work order took 44 s to lay out), UTF-8 made valid.
    ReportOptions o = given;
    const std::pair<const char*, std::string*> header[] = {{"--work-order", &o.work_order}, {"--site", &o.site},
                                                           {"--analyst", &o.analyst},       {"--machine", &o.machine},
                                                           {"--point", &o.point},           {"--date", &o.date}};
    for (const auto& [flag, text] : header) {
        if (text->size() > kHeaderFieldMaxBytes)
            throw UsageError(std::string(flag) + ": " + std::to_string(text->size()) + " characters; a report header "
                             "field takes at most " + std::to_string(kHeaderFieldMaxBytes));
        *text = valid_utf8(*text);
    }
    if (!o.input_text.empty()) {  // a document made in this run (inception --html): its command guarded the files
        write_report(document_from_text(o.input_text, o.input, o), o, out);
        return;
    }
    {
        OutputGuard guard;
        std::error_code ec;
        guard.input(o.input, "report input");
        guard.input(reviews_path_for(o.input), "reviews of the report input");
        if (fs::is_directory(o.input, ec))  // a route folder: every file it holds is read or may be
            for (auto it = fs::recursive_directory_iterator(o.input, ec); !ec && it != fs::recursive_directory_iterator();
                 it.increment(ec))
                if (it->is_regular_file(ec)) guard.input(it->path().string(), "file of the route folder");
        for (const auto* p : {&o.html, &o.pdf})
            if (*p) guard.output(**p);
    }
    Document d;
    std::error_code ec;
    if (fs::is_directory(o.input, ec)) {
        d = route_document(o.input, o);
    } else {
        std::string sha;
        d = document_from_text(read_text_file(o.input, "report input", kMaxDocumentBytes, &sha), o.input, o);
        add_finding_reviews(d, o.input, sha);
    }
    write_report(d, o, out);
}

}  // namespace cavitas::app
