#include "src/commands/review.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <limits>
#include <ostream>

#include <nlohmann/json.hpp>

#include "models/compare.hpp"
#include "models/indicators.hpp"
#include "models/trend.hpp"
#include "src/io/atomic_file.hpp"
#include "src/io/csv.hpp"
#include "src/io/datetime.hpp"
#include "src/io/errors.hpp"
#include "src/io/output_guard.hpp"
#include "src/output/format.hpp"
#include "src/output/plain_text.hpp"
#include "src/route/store.hpp"

namespace cavitas::app {

namespace fs = std::filesystem;
using nlohmann::json;
using nlohmann::ordered_json;

namespace {

std::string pad(std::string s, std::size_t n) {
    if (s.size() < n) s.append(n - s.size(), ' ');
    return s;
}

std::string lpad(std::string s, std::size_t n) {
    if (s.size() < n) s.insert(0, n - s.size(), ' ');
    return s;
}

json opt(const std::optional<double>& v) { return v ? json(*v) : json(nullptr); }

// The confidence grade a stored finding carries ("-" for findings of older cavitas or no verdict).
std::string grade_of(const Measurement& m) {
    const auto f = json::parse(m.finding_json, nullptr, false);
    if (f.is_discarded() || !f.is_object() || !f.contains("confidence_grade") || !f["confidence_grade"].is_string())
        return "-";
    return f["confidence_grade"].get<std::string>();
}

// A maintenance event as trend and compare write it.
ordered_json event_json(const Event& e) {
    ordered_json j;
    j["id"] = e.id;
    j["datetime"] = e.happened_at;
    j["what"] = e.what;
    j["point"] = e.point;  // empty: every point of the machine
    j["source"] = e.source;
    return j;
}

std::string event_line(const Event& e) {
    std::string when = e.happened_at.substr(0, 16);
    if (when.size() == 16 && when.compare(10, 6, "T00:00") == 0) when.resize(10);
    return pad(when, 17) + "--- event #" + std::to_string(e.id) + ": " + e.what +
           (e.point.empty() ? " (every point of the machine)" : "") + " ---";
}

// The usable visits at or after the event and those before it (all of them after, without an event).
std::pair<std::size_t, std::size_t> usable_visits(const std::vector<models::TrendPoint>& tp, const Event* since) {
    std::size_t after = 0, before = 0;
    for (const auto& x : tp)
        if (x.usable) (!since || x.days >= since->days ? after : before) += 1;
    return {after, before};
}

// "judged on the 2 visits since 2026-11-04 'impeller replaced' (the 3 before it left out): " (empty without an event).
std::string since_words(const std::vector<models::TrendPoint>& tp, const Event* since) {
    if (!since) return "";
    const auto [after, before] = usable_visits(tp, since);
    return "judged on the " + std::to_string(after) + " visit" + (after == 1 ? "" : "s") + " since " + since->label() +
           (before ? " (the " + std::to_string(before) + " before it left out)" : std::string()) + ": ";
}

}  // namespace

std::string store_path_of(const std::optional<std::string>& store, const std::optional<std::string>& baselines,
                          const char* command) {
    if (store) return *store;
    if (baselines) return (fs::path(*baselines) / "history.sqlite").string();
    throw UsageError(std::string(command) + ": give --store FILE or --baselines DIR (whose history.sqlite 'route' writes)");
}

void run_trend(const TrendOptions& o, std::ostream& out) {
    const std::string path = store_path_of(o.store, o.baselines, "trend");
    {
        OutputGuard guard;
        guard.input_store(path);
        if (o.json_output) guard.output(*o.json_output);
        if (o.csv_output) guard.output(*o.csv_output);
    }
    std::error_code ec;
    if (!fs::exists(path, ec))
        throw InputError(path + ": no results store here yet (it is created by 'cavitas route')");
    HistoryStore store(path);
    std::vector<std::string> points = o.point.empty() ? store.points(o.machine) : std::vector<std::string>{o.point};
    if (store.history(o.machine, o.point).empty())
        throw InputError(path + ": no measurements of machine '" + o.machine + "'" +
                         (o.point.empty() ? std::string() : ", point '" + o.point + "'") + " in the results store");
    models::TrendConfig cfg;
    cfg.window = o.window;
    ordered_json doc;
    // 2: each point's trend is judged from its last maintenance event on
    // (trend.points counts those visits only); + events, trend.since_event.
    doc["schema"] = "cavitas.trend/2";
    doc["store"] = path;
    doc["machine"] = o.machine;
    doc["points"] = json::array();
    std::string csv = csv_line({"machine", "point", "datetime", "verdict", "confidence", "hf_rise_db", "hf_kurtosis",
                                "impulse_rate_per_s", "npsha_m", "margin_ratio", "agreement", "file", "sha256"});
    for (const auto& point : points) {
        const auto ms = store.history(o.machine, point);
        if (ms.empty()) continue;
        out << o.machine << "  " << point << "  (" << ms.size() << " measurement" << (ms.size() == 1 ? "" : "s") << ", "
            << ms.front().measured_at.substr(0, 10) << " .. " << ms.back().measured_at.substr(0, 10) << ")\n";
        out << "  " << pad("when", 17) << pad("verdict", 14) << pad("confidence", 11) << lpad("HF over baseline", 18)
            << lpad("HF kurtosis", 13) << lpad("impulses", 11) << lpad("NPSHa/NPSH3", 13) << "\n";
        std::vector<models::TrendPoint> tp;
        ordered_json list = json::array();
        const std::vector<Event> events = store.events(o.machine, point);
        std::size_t next_event = 0;
        auto print_events_until = [&](double days) {
            for (; next_event < events.size() && events[next_event].days <= days; ++next_event)
                out << "  " << event_line(events[next_event]) << "\n";
        };
        for (const auto& m : ms) {
            print_events_until(m.days);
            const std::string hf = m.hf_rise_db ? signed_fixed(*m.hf_rise_db, 1) + " dB" : "-";
            // A bar of the HF rise, one mark a dB, for reading the run of visits at a glance.
            const int marks = m.hf_rise_db ? static_cast<int>(std::clamp(std::lround(*m.hf_rise_db), 0L, 30L)) : 0;
            out << "  " << pad(m.measured_at.substr(0, 16), 17) << pad(m.verdict, 14) << pad(grade_of(m), 11)
                << lpad(hf, 18) << lpad(m.hf_kurtosis ? fixed(*m.hf_kurtosis, 1) : "-", 13)
                << lpad(m.impulse_rate_per_s ? fixed(*m.impulse_rate_per_s, 0) + " /s" : "-", 11)
                << lpad(m.margin_ratio ? fixed(*m.margin_ratio, 2) : "-", 13) << "  " << std::string(marks, '|') << "\n";
            if (m.hf_rise_db) tp.push_back({m.days, *m.hf_rise_db, m.verdict != "indeterminate"});
            ordered_json e;
            e["datetime"] = m.measured_at;
            e["verdict"] = m.verdict;
            e["confidence"] = m.confidence;
            e["hf_rise_db"] = opt(m.hf_rise_db);
            e["hf_kurtosis"] = opt(m.hf_kurtosis);
            e["impulse_rate_per_s"] = opt(m.impulse_rate_per_s);
            e["npsha_m"] = opt(m.npsha_m);
            e["margin_ratio"] = opt(m.margin_ratio);
            e["agreement"] = m.agreement;
            e["file"] = m.file;
            e["sha256"] = m.sha256;
            list.push_back(e);
            csv += csv_line({o.machine, point, m.measured_at, m.verdict, fixed(m.confidence, 2),
                             m.hf_rise_db ? fixed(*m.hf_rise_db, 2) : "", m.hf_kurtosis ? fixed(*m.hf_kurtosis, 2) : "",
                             m.impulse_rate_per_s ? fixed(*m.impulse_rate_per_s, 1) : "",
                             m.npsha_m ? fixed(*m.npsha_m, 2) : "", m.margin_ratio ? fixed(*m.margin_ratio, 2) : "",
                             m.agreement, m.file, m.sha256});
        }
        print_events_until(std::numeric_limits<double>::infinity());
        const Event* since = last_event(events, point);
        models::TrendConfig point_cfg = cfg;
        if (since) point_cfg.since_days = since->days;
        const models::TrendJudgement j = models::judge_hf_trend(tp, point_cfg);
        const std::string trend_text = since_words(tp, since) + j.text;
        out << "  trend: " << trend_text << "\n\n";
        ordered_json t;
        t["since_event"] = since ? event_json(*since) : ordered_json(nullptr);
        t["visits_before_event"] = usable_visits(tp, since).second;
        t["rising"] = j.rising;
        t["points"] = j.points;
        t["slope_db_per_30d"] = opt(j.slope_db_per_30d);
        t["p_rising"] = opt(j.p_rising);
        t["latest_fit_db"] = opt(j.latest_fit_db);
        t["days_to_alert"] = opt(j.days_to_alert);
        t["alert_db"] = cfg.alert_db;
        t["method"] = "Theil-Sen slope, one-sided Mann-Kendall test over the last " + std::to_string(cfg.window) +
                      " usable visits at or after the point's last maintenance event, alpha " + fixed(cfg.alpha, 2);
        t["text"] = trend_text;
        ordered_json p;
        p["point"] = point;
        p["events"] = json::array();
        for (const auto& e : events) p["events"].push_back(event_json(e));
        p["measurements"] = list;
        p["trend"] = t;
        doc["points"].push_back(p);
    }
    StagedFiles files;
    if (o.json_output) files.add(*o.json_output, json_text(doc, 2) + "\n");
    if (o.csv_output) files.add(*o.csv_output, csv);
    files.commit();
}

namespace {

// The recordings compare --around-event picked from the store, and why.
struct PickedSides {
    Event event;
    std::string store;
    std::string point;
    std::vector<Measurement> before, after;  ///< in the order of CompareOptions::before / after
};

bool all_digits(const std::string& s) {
    return !s.empty() && s.size() <= 18 && s.find_first_not_of("0123456789") == std::string::npos;
}

std::string event_list_text(const std::vector<Event>& events) {
    std::string t;
    for (const auto& e : events) t += (t.empty() ? "" : ", ") + ("#" + std::to_string(e.id) + " " + e.label());
    return t.empty() ? "none" : t;
}

// --around-event ID|DATE: the event it names in the store (DATE: of --machine, on that day or at that time).
Event resolve_event(const HistoryStore& store, const CompareOptions& o, const std::string& path) {
    const std::string& text = *o.around_event;
    if (all_digits(text)) {
        const auto e = store.event(std::stoll(text));
        if (!e)
            throw InputError(path + ": no event #" + text + " in the results store (list them with 'cavitas event " +
                             (o.machine.empty() ? std::string("MACHINE") : o.machine) + " --list')");
        if (!o.machine.empty() && e->machine != o.machine)
            throw UsageError("--around-event " + text + " is an event of " + e->machine + ", not of --machine " + o.machine);
        return *e;
    }
    const auto when = parse_iso8601(text);
    if (!when) throw UsageError("--around-event '" + text + "': neither an event number nor an ISO 8601 date or date-time");
    if (o.machine.empty()) throw UsageError("--around-event " + text + ": a date needs --machine (or give the event's number)");
    const bool day_only = text.size() <= 10;
    std::vector<Event> found;
    const auto events = store.events(o.machine, o.point);
    for (const auto& e : events)
        if (day_only ? e.happened_at.compare(0, 10, when->text, 0, 10) == 0 : e.happened_at == when->text) found.push_back(e);
    if (found.empty())
        throw InputError(path + ": no event of " + o.machine + (o.point.empty() ? "" : " " + o.point) + " at " + text +
                         " (its events: " + event_list_text(events) + ")");
    if (found.size() > 1)
        throw UsageError("--around-event " + text + ": " + std::to_string(found.size()) + " events then (" +
                         event_list_text(found) + "); name one by its number");
    return found.front();
}

// The point a comparison around `e` is made at: --point, else the event's, else the machine's only one.
std::string point_around(const HistoryStore& store, const CompareOptions& o, const Event& e) {
    if (!o.point.empty()) {
        if (!e.applies_to(o.point))
            throw UsageError("--around-event: event #" + std::to_string(e.id) + " concerns point " + e.point +
                             ", not --point " + o.point);
        return o.point;
    }
    if (!e.point.empty()) return e.point;
    const auto points = store.points(e.machine);
    if (points.size() == 1) return points.front();
    std::string list;
    for (const auto& p : points) list += (list.empty() ? "" : ", ") + p;
    throw UsageError("--around-event: event #" + std::to_string(e.id) + " concerns every point of " + e.machine +
                     "; name one with --point (" + (list.empty() ? std::string("it has none stored") : list) + ")");
}

// Where the route read a stored visit's recording (the finding's input path, else the manifest's cell).
std::string recording_of(const Measurement& m) {
    const auto f = json::parse(m.finding_json, nullptr, false);
    if (!f.is_discarded() && f.is_object() && f.contains("input") && f["input"].is_object() &&
        f["input"].contains("path") && f["input"]["path"].is_string())
        return f["input"]["path"].get<std::string>();
    return m.file;
}

// The options with their sides (and baseline) taken from the store around the event.
CompareOptions sides_around_event(CompareOptions o, PickedSides& picked) {
    if (!o.before.empty() || !o.after.empty())
        throw UsageError("compare: --around-event picks the recordings from the results store; give no --before or --after");
    if (o.visits < 1) throw UsageError("--visits " + std::to_string(o.visits) + ": take at least 1 visit a side");
    picked.store = store_path_of(o.store, o.baselines, "compare --around-event");
    std::error_code ec;
    if (!fs::is_regular_file(picked.store, ec))
        throw InputError(picked.store + ": no results store here yet (it is created by 'cavitas route')");
    const HistoryStore store(picked.store);
    picked.event = resolve_event(store, o, picked.store);
    const Event& e = picked.event;
    picked.point = point_around(store, o, e);
    for (const auto& m : store.history(e.machine, picked.point)) {
        if (m.channel != o.channel) continue;
        (m.days < e.days ? picked.before : picked.after).push_back(m);
    }
    if (picked.before.size() > o.visits) picked.before.erase(picked.before.begin(), picked.before.end() - static_cast<std::ptrdiff_t>(o.visits));
    if (picked.after.size() > o.visits) picked.after.resize(o.visits);
    for (const auto* side : {&picked.before, &picked.after})
        if (side->empty())
            throw InputError(picked.store + ": no visit of " + e.machine + " " + picked.point + " channel " +
                             std::to_string(o.channel) + (side == &picked.before ? " before" : " at or after") +
                             " event #" + std::to_string(e.id) + " " + e.label());
    std::string baseline;
    for (const auto* side : {&picked.before, &picked.after})
        for (const auto& m : *side) {
            (side == &picked.before ? o.before : o.after).push_back(recording_of(m));
            if (baseline.empty()) baseline = m.baseline;
            else if (o.baseline.empty() && m.baseline != baseline)
                throw UsageError("compare --around-event: the visits were judged against different baselines (" +
                                 baseline + ", " + m.baseline + "); name one with --baseline");
        }
    if (o.baseline.empty()) o.baseline = baseline;
    if (o.machine.empty()) o.machine = e.machine;
    return o;
}

// The recordings must be those the route judged: a file changed since is refused.
void check_picked(const std::vector<AnalyzeResult>& results, const std::vector<Measurement>& stored,
                  const std::string& store) {
    for (std::size_t i = 0; i < results.size() && i < stored.size(); ++i)
        if (results[i].recording.sha256 != stored[i].sha256)
            throw InputError(results[i].recording.info.path + ": not the recording the results store " + store +
                             " holds for the visit of " + stored[i].measured_at + " (its SHA-256 differs)");
}

}  // namespace

void run_compare(const CompareOptions& given, std::ostream& out, std::ostream& /*err*/) {
    std::optional<PickedSides> picked;
    if (given.around_event) picked.emplace();
    const CompareOptions o = picked ? sides_around_event(given, *picked) : given;
    if (o.before.empty() || o.after.empty())
        throw UsageError("compare: give at least one --before and one --after recording, or --around-event with the store");
    if (o.baseline.empty()) throw UsageError("compare: give --baseline FILE (the machine point's baseline)");
    if (o.json_output) {
        OutputGuard guard;
        guard.input(o.baseline, "baseline");
        if (picked) guard.input_store(picked->store);
        for (const auto* side : {&o.before, &o.after})
            for (const auto& f : *side) {
                guard.input(f, "recording");
                guard_operating_inputs(guard, OperatingPointFlags{}, f);
            }
        guard.output(*o.json_output);
    }
    struct Side {
        std::vector<AnalyzeResult> results;
        models::OperatingPointSummary duty;
        std::vector<double> npsha;
    };
    auto analyse_side = [&](const std::vector<std::string>& files) {
        Side s;
        std::vector<std::pair<models::OperatingPoint, models::Hydraulics>> duties;
        std::vector<double> rpms;
        for (const auto& f : files) {
            AnalysisRequest ao;
            ao.baseline = o.baseline;
            ao.recording = f;
            ao.machine = o.machine;
            ao.rpm = o.rpm;
            ao.vanes = o.vanes;
            ao.read.channel = o.channel;
            AnalyzeResult r = analyze(ao);
            if (r.operating) {
                duties.emplace_back(r.operating->resolved.op, r.operating->resolved.hydraulics);
                if (r.operating->resolved.hydraulics.npsh) s.npsha.push_back(r.operating->resolved.hydraulics.npsh->npsha_m);
            }
            if (r.recording.analysis.rpm > 0.0) rpms.push_back(r.recording.analysis.rpm);
            s.results.push_back(std::move(r));
        }
        s.duty = models::summarize(duties);
        if (!rpms.empty()) s.duty.rpm = models::median(rpms);
        return s;
    };
    Side before = analyse_side(o.before), after = analyse_side(o.after);
    if (picked) {
        check_picked(before.results, picked->before, picked->store);
        check_picked(after.results, picked->after, picked->store);
    }
    for (const auto& r : before.results)
        for (const auto& a : after.results)
            if (r.recording.sha256 == a.recording.sha256)
                throw UsageError("compare: " + a.recording.info.path + " is the same recording as " +
                                 r.recording.info.path + "; compare recordings made before and after the change");
    std::vector<models::RecordingSide> b, a;
    for (const auto& r : before.results) b.push_back({&r.recording.analysis, &r.finding});
    for (const auto& r : after.results) a.push_back({&r.recording.analysis, &r.finding});
    const std::string unit = models::unit_key(before.results.front().recording.info.calibration.unit);
    models::BeforeAfter ba;
    try {
        models::CompareConfig cc;
        cc.repeatability_db = models::repeatability_floor_db(before.results.front().baseline.mount);
        ba = models::compare_before_after(b, a, unit, cc);
    } catch (const std::invalid_argument& e) {
        std::string reasons;
        for (const auto* side : {&before, &after})
            for (const auto& r : side->results)
                if (r.finding.verdict == models::Verdict::indeterminate && !r.finding.reasons.empty())
                    reasons += "; " + r.recording.info.path + ": " + r.finding.reasons.front();
        throw InputError(std::string("compare: ") + e.what() + reasons);
    }
    ba.warnings = models::compare_duties(before.duty, after.duty);

    const char* words = ba.change == models::Change::improved ? "IMPROVED"
                        : ba.change == models::Change::worse  ? "WORSE"
                                                              : "UNCHANGED (no significant change)";
    if (picked)
        out << "compare around event #" << picked->event.id << " of " << picked->event.machine << ": "
            << picked->event.label() << " (" << picked->store << "): the last " << picked->before.size() << " visit"
            << (picked->before.size() == 1 ? "" : "s") << " of " << picked->point << " before it and the first "
            << picked->after.size() << " after it\n";
    out << "compare against " << o.baseline << "\n";
    auto visit_of = [&](bool is_before, std::size_t i) {
        if (!picked) return std::string();
        const auto& list = is_before ? picked->before : picked->after;
        return i < list.size() ? "  visit of " + list[i].measured_at.substr(0, 16) : std::string();
    };
    for (const auto* side : {&before, &after})
        for (std::size_t i = 0; i < side->results.size(); ++i) {
            const auto& r = side->results[i];
            out << "  " << (side == &before ? "before" : "after ") << visit_of(side == &before, i) << "  "
                << r.recording.info.path << "  " << models::to_string(r.finding.verdict)
                << (r.finding.verdict == models::Verdict::indeterminate
                        ? std::string()
                        : std::string(" (") + models::to_string(r.finding.grade) + " confidence)")
                << "\n";
        }
    out << "  change   " << words << "\n  evidence:\n";
    for (const auto& e : ba.evidence) out << "    - " << e << "\n";
    out << "  indicators (after - before: Hodges-Lehmann shift [95 % interval], Mann-Whitney p, Cliff's delta):\n";
    for (const auto& ic : ba.indicators)
        out << "    " << pad(models::indicator_heading(ic.key), 38) << lpad(signed_fixed(ic.shift, 3), 10) << "  [" << signed_fixed(ic.ci_low, 3)
            << ", " << signed_fixed(ic.ci_high, 3) << "]  p = " << lpad(fixed(ic.p_value, 4), 6) << "  delta "
            << signed_fixed(ic.cliffs_delta, 2) << (ic.significant ? "  *" : "") << "\n";
    auto med = [](std::vector<double> v) { return v.empty() ? std::optional<double>() : models::median(v); };
    const auto nb = med(before.npsha), na = med(after.npsha);
    if (nb || na || before.duty.flow_m3_s || after.duty.flow_m3_s) {
        out << "  operating point:";
        if (nb && na) out << " NPSHa " << fixed(*nb, 2) << " m -> " << fixed(*na, 2) << " m;";
        if (before.duty.flow_m3_s && after.duty.flow_m3_s)
            out << " flow " << fixed(*before.duty.flow_m3_s * 3600.0, 0) << " -> " << fixed(*after.duty.flow_m3_s * 3600.0, 0)
                << " m3/h;";
        if (before.duty.rpm && after.duty.rpm)
            out << " speed " << fixed(*before.duty.rpm, 0) << " -> " << fixed(*after.duty.rpm, 0) << " rpm";
        out << "\n";
    }
    if (!ba.warnings.empty()) {
        out << "  warnings:\n";
        for (const auto& w : ba.warnings) out << "    ! " << w << "\n";
    }
    if (ba.after_severity >= 1) {
        out << "  caution:\n";
        for (const auto& c : models::cavitation_cautions()) out << "    ! " << c << "\n";
    }

    if (o.json_output) {
        ordered_json j;
        j["schema"] = "cavitas.compare/1";
        j["cavitas_version"] = kVersion;
        j["created_utc"] = utc_now();
        j["change"] = models::to_string(ba.change);
        if (picked) {
            ordered_json e = event_json(picked->event);
            e["machine"] = picked->event.machine;
            e["compared_point"] = picked->point;
            e["store"] = picked->store;
            e["visits_per_side"] = o.visits;
            j["event"] = e;
        } else {
            j["event"] = nullptr;
        }
        j["evidence"] = ba.evidence;
        j["warnings"] = ba.warnings;
        j["cautions"] = ba.after_severity >= 1 ? json(models::cavitation_cautions()) : json::array();
        j["method"] = {{"test", "Mann-Whitney U, two-sided, on per-segment values pooled over each side's recordings"},
                       {"shift", "Hodges-Lehmann, with the Moses distribution-free 95 % interval"},
                       {"effect_size", "Cliff's delta, P(after > before) - P(after < before)"},
                       {"alpha", models::CompareConfig{}.alpha},
                       {"material_hf_db", models::CompareConfig{}.material_db}};
        ordered_json inds = json::array();
        for (const auto& ic : ba.indicators) {
            ordered_json e;
            e["key"] = ic.key;
            e["before_median"] = ic.before_median;
            e["after_median"] = ic.after_median;
            e["shift"] = ic.shift;
            e["ci_low"] = ic.ci_low;
            e["ci_high"] = ic.ci_high;
            e["p_value"] = ic.p_value;
            e["exact"] = ic.exact;
            e["cliffs_delta"] = ic.cliffs_delta;
            e["significant"] = ic.significant;
            e["units"] = ic.units;
            e["widened_db"] = ic.widened_db;
            e["before_segments"] = ic.before_segments;
            e["after_segments"] = ic.after_segments;
            inds.push_back(e);
        }
        j["indicators"] = inds;
        for (const auto* side : {&before, &after}) {
            ordered_json list = json::array();
            for (std::size_t i = 0; i < side->results.size(); ++i) {
                const auto& r = side->results[i];
                ordered_json e;
                e["path"] = r.recording.info.path;
                if (picked) {
                    const auto& visits = side == &before ? picked->before : picked->after;
                    if (i < visits.size()) e["datetime"] = visits[i].measured_at;
                }
                e["sha256"] = r.recording.sha256;
                e["verdict"] = models::to_string(r.finding.verdict);
                e["confidence"] = r.finding.confidence;
                e["rpm"] = r.recording.analysis.rpm;
                if (r.operating && r.operating->resolved.hydraulics.npsh)
                    e["npsha_m"] = r.operating->resolved.hydraulics.npsh->npsha_m;
                list.push_back(e);
            }
            j[side == &before ? "before" : "after"] = list;
        }
        j["baseline"] = {{"path", o.baseline}, {"machine", before.results.front().baseline.machine},
                         {"created_utc", before.results.front().baseline.created_utc}};
        // What a report draws: each side's mean spectrum profile against the baseline's,
        // and the HF level of every segment.
        {
            const auto& b0 = before.results.front();
            const auto& centers = b0.recording.analysis.spectrum.center_hz;
            auto side_db = [&centers](const Side& sd) {
                std::vector<double> sum(centers.size(), 0.0);
                std::size_t n = 0;
                for (const auto& r : sd.results) {
                    const auto& sp = r.recording.analysis.spectrum;
                    if (sp.center_hz != centers) continue;
                    for (std::size_t s2 = 0; s2 < sp.segments(); ++s2, ++n)
                        for (std::size_t k = 0; k < centers.size(); ++k)
                            sum[k] += std::pow(10.0, 0.1 * sp.segment_db[s2 * centers.size() + k]);
                }
                for (auto& v : sum) v = n ? 10.0 * std::log10(std::max(v / static_cast<double>(n), 1e-300)) : 0.0;
                return sum;
            };
            auto hf_segments = [](const Side& sd) {
                std::vector<double> v;
                for (const auto& r : sd.results) {
                    const auto& x = r.recording.analysis.series[models::SegmentIndicator::hf_band_level];
                    v.insert(v.end(), x.begin(), x.end());
                }
                return v;
            };
            ordered_json plots;
            plots["center_hz"] = centers;
            plots["before_db"] = side_db(before);
            plots["after_db"] = side_db(after);
            const auto& bs = b0.baseline.spectrum;
            if (bs.center_hz == centers) {
                plots["baseline_median_db"] = bs.median_db;
                plots["baseline_p10_db"] = bs.p10_db;
                plots["baseline_p90_db"] = bs.p90_db;
            }
            plots["hf_low_hz"] = b0.recording.analysis.setup.hf.low_hz;
            plots["hf_high_hz"] = b0.recording.analysis.setup.hf.high_hz;
            plots["hf_segments_db"] = {{"before", hf_segments(before)}, {"after", hf_segments(after)}};
            j["plots"] = plots;
        }
        write_file_atomically(*o.json_output, json_text(j, 2) + "\n");
    }
}

}  // namespace cavitas::app
