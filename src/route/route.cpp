#include "src/route/route.hpp"
#include "src/io/severity_zones.hpp"

#include <unistd.h>

#include <algorithm>
#include <atomic>
#include <chrono>
#include <cmath>
#include <condition_variable>
#include <cstdio>
#include <filesystem>
#include <map>
#include <mutex>
#include <ostream>
#include <set>
#include <sstream>
#include <thread>

#include "src/analysis/analysis.hpp"
#include "src/io/atomic_file.hpp"
#include "src/io/csv.hpp"
#include "src/io/datetime.hpp"
#include "src/io/errors.hpp"
#include "src/io/output_guard.hpp"
#include "src/io/text_file.hpp"
#include "src/output/finding.hpp"
#include "src/output/format.hpp"
#include "src/output/plain_text.hpp"
#include "src/route/attention.hpp"
#include "src/route/carry_reviews.hpp"

namespace cavitas::app {

namespace fs = std::filesystem;
using nlohmann::json;
using nlohmann::ordered_json;

namespace {

std::string opt_cell(const std::optional<double>& v, int decimals) { return v ? fixed(*v, decimals) : std::string(); }

void put_opt(ordered_json& j, const char* key, const std::optional<double>& v) { j[key] = v ? json(*v) : json(nullptr); }

std::optional<double> get_opt(const json& j, const char* key) {
    if (!j.contains(key) || j[key].is_null()) return std::nullopt;
    if (!j[key].is_number()) throw std::invalid_argument(std::string("'") + key + "' is not a number");
    return j[key].get<double>();
}

std::string get_str(const json& j, const char* key) {
    if (!j.contains(key) || j[key].is_null()) return "";
    if (!j[key].is_string()) throw std::invalid_argument(std::string("'") + key + "' is not a string");
    return j[key].get<std::string>();
}

constexpr int kMaxRecheckDays = 3650;  // ten years: anything longer is not a re-check

json actions_to_json(const std::vector<RowAction>& actions) {
    json out = json::array();
    for (const auto& a : actions) {
        ordered_json j;
        j["topic"] = a.topic;
        if (!a.concern.empty()) j["concern"] = a.concern;
        j["priority"] = a.priority;
        j["priority_rank"] = a.priority_rank;
        j["recheck_days"] = a.recheck_days;
        j["step"] = a.step;
        j["basis"] = a.basis;
        out.push_back(json(j));
    }
    return out;
}

RowAction action_from_json(const json& j) {
    static const std::map<std::string, int> ranks{{"urgent", 1}, {"soon", 2}, {"planned", 3}, {"watch", 4}};
    if (!j.is_object()) throw std::invalid_argument("'actions' holds an entry that is not an object");
    RowAction a;
    a.topic = get_str(j, "topic");
    a.concern = get_str(j, "concern");
    a.priority = get_str(j, "priority");
    const auto rank = ranks.find(a.priority);
    if (rank == ranks.end()) throw std::invalid_argument("an action's 'priority' is not urgent, soon, planned or watch");
    a.priority_rank = rank->second;
    const double days = get_opt(j, "recheck_days").value_or(-1.0);
    if (!(days >= 0 && days <= kMaxRecheckDays && days == std::floor(days)))
        throw std::invalid_argument("an action's 'recheck_days' is not a whole number of days 0 .. 3650");
    a.recheck_days = static_cast<int>(days);
    a.step = get_str(j, "step");
    if (a.step.empty()) throw std::invalid_argument("an action's 'step' is empty");
    a.basis = get_str(j, "basis");
    return a;
}

RowAction row_action(const models::Action& a) {
    RowAction r;
    r.topic = models::to_string(a.topic);
    if (a.concern) r.concern = models::to_string(*a.concern);
    r.priority = models::to_string(a.priority);
    r.priority_rank = models::rank(a.priority);
    r.recheck_days = a.recheck_days;
    r.step = a.step;
    r.basis = a.basis;
    return r;
}

// "soon, re-check within 14 d: Check the bearings ..." - one action in a CSV cell or a line.
std::string action_words(const RowAction& a) {
    return a.priority + ", re-check within " + std::to_string(a.recheck_days) + " d: " + a.step;
}

}  // namespace

json SummaryRow::to_json() const {
    ordered_json j;
    j["schema"] = kSummarySchema;
    j["line"] = line;
    j["file"] = file;
    j["machine"] = machine;
    j["point"] = point;
    j["channel"] = channel;
    j["datetime"] = datetime;
    j["days"] = days;
    j["verdict"] = verdict;
    j["reason"] = reason;
    j["confidence"] = confidence;
    if (!confidence_grade.empty()) j["confidence_grade"] = confidence_grade;
    put_opt(j, "hf_rise_db", hf_rise_db);
    put_opt(j, "hf_kurtosis", hf_kurtosis);
    put_opt(j, "impulse_rate_per_s", impulse_rate_per_s);
    put_opt(j, "lf_rise_db", lf_rise_db);
    put_opt(j, "bpf_modulation", bpf_modulation);
    put_opt(j, "npsha_m", npsha_m);
    put_opt(j, "margin_ratio", margin_ratio);
    j["agreement"] = agreement;
    j["other_findings"] = other_findings;
    j["note"] = note;
    j["actions"] = actions_to_json(actions);
    put_opt(j, "duration_s", duration_s);
    j["sha256"] = sha256;
    j["baseline"] = baseline;
    j["finding"] = finding;
    j["previous_datetime"] = previous_datetime;
    j["previous_verdict"] = previous_verdict;
    put_opt(j, "hf_rise_change_db", hf_rise_change_db);
    j["event_since_previous"] = event_since_previous;
    ordered_json x = ordered_json::object();
    for (const auto& [k, v] : extra) x[k] = v;
    j["extra"] = x;
    return json(j);
}

bool is_finding_path(const std::string& path) {
    const std::string prefix = "findings/", suffix = ".json";
    if (path.size() <= prefix.size() + suffix.size() || path.compare(0, prefix.size(), prefix) != 0 ||
        path.compare(path.size() - suffix.size(), suffix.size(), suffix) != 0)
        return false;
    const std::string name = path.substr(prefix.size());
    if (name.size() > 255 || name.front() == '.') return false;
    for (unsigned char c : name)
        if (c == '/' || c == '\\' || c < 0x20 || c == 0x7f) return false;
    return true;
}

SummaryRow SummaryRow::from_json(const json& j, const std::string& where) {
    try {
        if (!j.is_object() || get_str(j, "schema") != kSummarySchema)
            throw std::invalid_argument(std::string("not a cavitas route row (schema '") + kSummarySchema + "' expected)");
        SummaryRow r;
        const auto line = get_opt(j, "line");
        if (!line || *line < 1 || *line > 1e9) throw std::invalid_argument("'line' is missing or out of range");
        r.line = static_cast<std::size_t>(*line);
        r.file = get_str(j, "file");
        r.machine = get_str(j, "machine");
        r.point = get_str(j, "point");
        const double channel = get_opt(j, "channel").value_or(0.0);
        if (!(channel >= 0 && channel <= 1023 && channel == std::floor(channel)))
            throw std::invalid_argument("'channel' is not a whole number from 0 to 1023");
        r.channel = static_cast<int>(channel);
        r.datetime = get_str(j, "datetime");
        r.days = get_opt(j, "days").value_or(0.0);
        r.verdict = get_str(j, "verdict");
        static const std::set<std::string> verdicts{"normal", "incipient", "developed", "indeterminate", "error"};
        if (!verdicts.count(r.verdict)) throw std::invalid_argument("'verdict' is not one cavitas writes");
        r.reason = get_str(j, "reason");
        r.confidence = get_opt(j, "confidence").value_or(0.0);
        if (j.contains("confidence_grade")) {
            r.confidence_grade = get_str(j, "confidence_grade");
            if (r.confidence_grade != "high" && r.confidence_grade != "moderate" && r.confidence_grade != "low")
                throw std::invalid_argument("'confidence_grade' is not high, moderate or low");
        }
        r.hf_rise_db = get_opt(j, "hf_rise_db");
        r.hf_kurtosis = get_opt(j, "hf_kurtosis");
        r.impulse_rate_per_s = get_opt(j, "impulse_rate_per_s");
        r.lf_rise_db = get_opt(j, "lf_rise_db");
        r.bpf_modulation = get_opt(j, "bpf_modulation");
        r.npsha_m = get_opt(j, "npsha_m");
        r.margin_ratio = get_opt(j, "margin_ratio");
        r.agreement = get_str(j, "agreement");
        r.other_findings = get_str(j, "other_findings");
        r.note = get_str(j, "note");
        if (j.contains("actions")) r.actions = actions_from_json(j["actions"], where);
        r.duration_s = get_opt(j, "duration_s");
        r.sha256 = get_str(j, "sha256");
        r.baseline = get_str(j, "baseline");
        r.finding = get_str(j, "finding");
        if (!r.finding.empty() && !is_finding_path(r.finding))
            throw std::invalid_argument("'finding' is not findings/NAME.json inside the route folder");
        r.previous_datetime = get_str(j, "previous_datetime");
        r.previous_verdict = get_str(j, "previous_verdict");
        r.hf_rise_change_db = get_opt(j, "hf_rise_change_db");
        r.event_since_previous = get_str(j, "event_since_previous");
        if (j.contains("extra")) {
            if (!j["extra"].is_object()) throw std::invalid_argument("'extra' is not an object");
            for (const auto& [k, v] : j["extra"].items()) {
                if (!v.is_string()) throw std::invalid_argument("'extra' holds a value that is not a string");
                r.extra.emplace_back(k, v.get<std::string>());
            }
        }
        return r;
    } catch (const std::invalid_argument& e) {
        throw InputError(where + ": " + e.what());
    } catch (const json::exception& e) {
        throw InputError(where + ": " + e.what());
    }
}

namespace {

int soonest_recheck_days(const SummaryRow& r) {
    int days = kMaxRecheckDays;
    for (const auto& a : r.actions) days = std::min(days, a.recheck_days);
    return days;
}

std::string joined_actions(const SummaryRow& r) {
    std::string s;
    for (const auto& a : r.actions) s += (s.empty() ? "" : " | ") + action_words(a);
    return s;
}

}  // namespace

std::vector<RowAction> actions_from_json(const json& actions, const std::string& where) {
    std::vector<RowAction> out;
    try {
        if (!actions.is_array()) throw std::invalid_argument("'actions' is not an array");
        for (const auto& a : actions) out.push_back(action_from_json(a));
    } catch (const std::invalid_argument& e) {
        throw InputError(where + ": " + e.what());
    }
    std::stable_sort(out.begin(), out.end(),
                     [](const RowAction& a, const RowAction& b) { return a.priority_rank < b.priority_rank; });
    return out;
}

RouteSummary read_route_summary(const std::string& dir, std::size_t max_rows, const std::string& why_max) {
    const std::string path = (fs::path(dir) / "summary.jsonl").string();
    std::istringstream in(read_text_file(path, "route summary", kMaxSummaryBytes));
    RouteSummary s;
    std::string line;
    for (std::size_t n = 1; std::getline(in, line); ++n) {
        if (line.empty()) continue;
        const std::string where = path + ":" + std::to_string(n);
        if (line.size() > kMaxSummaryLineBytes)
            throw InputError(where + ": a line of " + std::to_string(line.size()) + " bytes (a summary row is at most " +
                             std::to_string(kMaxSummaryLineBytes) + ")");
        if (max_rows > 0 && s.rows.size() == max_rows)
            throw InputError(path + ": more than " + std::to_string(max_rows) + " rows (" + why_max + ")");
        const json j = json::parse(line, nullptr, false);
        if (j.is_discarded()) throw InputError(where + ": not valid JSON");
        s.rows.push_back(SummaryRow::from_json(j, where));
        s.lines.push_back(line);
        s.wheres.push_back(where);
    }
    return s;
}

std::vector<std::string> summary_columns(const std::vector<std::string>& extra_columns) {
    std::vector<std::string> c = {"line",        "file",         "machine",       "point",
                                  "channel",     "datetime",     "verdict",       "confidence",
                                  "hf_rise_db",  "hf_kurtosis",  "impulse_rate_per_s", "lf_rise_db",
                                  "bpf_modulation", "npsha_m",   "margin_ratio",  "agreement",
                                  "previous_datetime", "previous_verdict", "hf_rise_change_db", "event_since_previous",
                                  "other_findings",
                                  "reason",      "sha256",       "finding",       "note",
                                  "priority",    "recheck_days", "actions"};
    c.insert(c.end(), extra_columns.begin(), extra_columns.end());
    return c;
}

std::vector<std::string> summary_cells(const SummaryRow& r) {
    std::vector<std::string> c = {std::to_string(r.line),
                                  r.file,
                                  r.machine,
                                  r.point,
                                  std::to_string(r.channel),
                                  r.datetime,
                                  r.verdict,
                                  r.failed() ? std::string() : fixed(r.confidence, 2),
                                  opt_cell(r.hf_rise_db, 2),
                                  opt_cell(r.hf_kurtosis, 2),
                                  opt_cell(r.impulse_rate_per_s, 1),
                                  opt_cell(r.lf_rise_db, 2),
                                  opt_cell(r.bpf_modulation, 3),
                                  opt_cell(r.npsha_m, 2),
                                  opt_cell(r.margin_ratio, 2),
                                  r.agreement,
                                  r.previous_datetime,
                                  r.previous_verdict,
                                  opt_cell(r.hf_rise_change_db, 2),
                                  r.event_since_previous,
                                  r.other_findings,
                                  r.reason,
                                  r.sha256,
                                  r.finding,
                                  r.note,
                                  r.actions.empty() ? std::string() : r.actions.front().priority,
                                  r.actions.empty() ? std::string() : std::to_string(soonest_recheck_days(r)),
                                  joined_actions(r)};
    for (const auto& [k, v] : r.extra) c.push_back(v);
    return c;
}

std::pair<std::size_t, std::size_t> parse_shard(const std::string& text) {
    const auto slash = text.find('/');
    auto whole = [](const std::string& s) -> std::optional<std::size_t> {
        if (s.empty() || s.size() > 6 || s.find_first_not_of("0123456789") != std::string::npos) return std::nullopt;
        return static_cast<std::size_t>(std::stoul(s));
    };
    if (slash != std::string::npos) {
        const auto k = whole(text.substr(0, slash)), n = whole(text.substr(slash + 1));
        if (k && n && *k >= 1 && *k <= *n && *n <= 100000) return {*k, *n};
    }
    throw UsageError("--shard '" + text + "': expected K/N with 1 <= K <= N, e.g. 3/8 for the third of eight shares");
}

namespace {

std::optional<double> comparison(const models::Finding& f, const std::string& key, bool change) {
    for (const auto& c : f.comparisons)
        if (c.key == key) return change ? c.change : c.value;
    return std::nullopt;
}

std::string join(const std::vector<std::string>& v, const char* sep) {
    std::string s;
    for (const auto& x : v) s += (s.empty() ? "" : sep) + x;
    return s;
}

std::string finding_name(const ManifestRow& r) {
    char b[32];
    std::snprintf(b, sizeof b, "L%06zu_", r.line);
    const std::string channel = r.one_of_several ? "_ch" + std::to_string(r.channel) : std::string();
    return std::string(b) + r.machine + "_" + r.point + channel + ".json";
}

// One row per channel of a manifest row whose channel cell names several (a
// list, or all: every channel of its file, which is opened to count them).
std::vector<ManifestRow> rows_per_channel(const ManifestRow& m) {
    if (!m.error.empty() || (!m.channels.all && m.channels.channels.size() <= 1)) return {m};
    std::vector<int> list = m.channels.channels;
    if (m.channels.all) {
        try {
            list = channels_of(m.channels, open_recording(m.path, read_request_of(m), Calibration{})->info().channels,
                               m.path);
        } catch (const std::exception& e) {
            ManifestRow bad = m;
            bad.error = e.what();
            return {bad};
        }
    }
    // A sensitivity per channel: "100.2mV/g;98.7mV/g;101.5mV/g", in the order of the channels.
    std::vector<std::string> sensitivities;
    if (m.calibration.sensitivity && m.calibration.sensitivity->find(';') != std::string::npos) {
        std::string rest = *m.calibration.sensitivity;
        for (std::size_t at; (at = rest.find(';')) != std::string::npos; rest.erase(0, at + 1))
            sensitivities.push_back(rest.substr(0, at));
        sensitivities.push_back(rest);
        if (sensitivities.size() != list.size()) {
            ManifestRow bad = m;
            bad.error = "sensitivity names " + std::to_string(sensitivities.size()) + " channels' sensitivities for " +
                        std::to_string(list.size()) + " channels; give one for all or one per channel, in order";
            return {bad};
        }
    }
    std::vector<ManifestRow> out;
    for (std::size_t k = 0; k < list.size(); ++k) {
        ManifestRow one = m;
        one.channel = list[k];
        one.one_of_several = list.size() > 1;
        if (!sensitivities.empty()) one.calibration.sensitivity = sensitivities[k];
        out.push_back(std::move(one));
    }
    return out;
}

SummaryRow start_row(const ManifestRow& m) {
    SummaryRow r;
    r.line = m.line;
    r.file = m.file;
    r.machine = m.machine;
    r.point = m.point;
    r.channel = m.channel;
    r.datetime = m.when.text.empty() ? m.datetime : m.when.text;
    r.days = m.when.days;
    r.extra = m.extra;
    return r;
}

// One manifest row, start to finish. A failure of the row's inputs becomes its
// reason; only a finding that cannot be written throws.
SummaryRow analyse_row(const ManifestRow& m, const Manifest& manifest, const std::string& baselines,
                       const std::string& out_dir,
                       const std::optional<std::string>& zones, const Analyst& who) {
    SummaryRow row = start_row(m);
    auto fail = [&row](const std::string& why) {
        row.verdict = "error";
        row.reason = why;
        return row;
    };
    if (!m.error.empty()) return fail(manifest.path + ":" + std::to_string(m.line) + ": " + m.error);
    const bool sister = !m.reference_path.empty();
    const fs::path base = sister ? fs::path(m.reference_path) : fs::path(baselines) / m.machine / (m.point + ".json");
    row.baseline = base.string();
    std::string finding_text;
    try {
        std::error_code ec;
        if (sister && !fs::exists(base, ec))
            return fail(manifest.path + ":" + std::to_string(m.line) + ": reference '" + m.reference +
                        "': no such file");
        if (!fs::exists(base, ec))
            return fail(base.string() + ": no baseline for machine " + m.machine + ", point " + m.point +
                        " (learn one with 'cavitas baseline --machine " + m.machine + " ... -o " + base.string() + "')");
        AnalysisRequest ao;
        ao.baseline = base.string();
        ao.sister_reference = sister;
        ao.recording = m.path;
        ao.machine = m.machine;
        ao.read = read_request_of(m);
        ao.rpm = m.rpm;
        ao.vanes = m.vanes;
        ao.calibration = m.calibration;
        ao.mount = m.mount;
        ao.sensor_max_hz = m.sensor_max_hz;
        for (const auto& [k, v] : m.operating) ao.operating.values[k] = v;
        TextOrigin origin;
        origin.file = manifest.path + ":" + std::to_string(m.line);
        origin.base_dir = manifest.dir;
        ao.operating.origin = origin;
        ao.zones = zones;
        ao.analyst = who;
        const AnalyzeResult r = analyze(ao);
        const auto& f = r.finding;
        row.verdict = models::to_string(f.verdict);
        row.confidence = f.confidence;
        if (f.verdict != models::Verdict::indeterminate) row.confidence_grade = models::to_string(f.grade);
        if (f.verdict == models::Verdict::indeterminate) row.reason = join(f.reasons, "; ");
        row.hf_rise_db = comparison(f, "hf_band_level_db", true);
        row.hf_kurtosis = comparison(f, "hf_kurtosis_ratio", false);
        row.impulse_rate_per_s = comparison(f, "impulse_rate_per_s", false);
        row.lf_rise_db = comparison(f, "lf_band_level_db", true);
        row.bpf_modulation = comparison(f, "modulation_bpf_ratio", false);
        for (const auto& o : f.other_findings) row.other_findings += (row.other_findings.empty() ? "" : "; ") + o.text;
        row.note = r.operator_note;
        for (const auto& a : r.actions) row.actions.push_back(row_action(a));
        row.duration_s = r.recording.analysis.duration_s;
        row.sha256 = r.recording.sha256;
        if (r.operating) {
            const auto& h = r.operating->resolved.hydraulics;
            if (h.npsh) row.npsha_m = h.npsh->npsha_m;
            if (h.margin) row.margin_ratio = h.margin->ratio;
            row.agreement = models::to_string(r.operating->reading.agreement);
        }
        finding_text = json_text(finding_to_json(r, base.string()), 2) + "\n";
    } catch (const std::exception& e) {
        return fail(e.what());
    }
    // An output that cannot be written (a full disk) fails the run, not the row.
    const std::string name = finding_name(m);
    write_file_atomically((fs::path(out_dir) / "findings" / name).string(), finding_text);
    row.finding = "findings/" + name;
    return row;
}

// Worst first: developed, incipient, failed, indeterminate, normal at risk or
// with other findings, normal.
std::size_t channels_of_point(const std::vector<PointState>& latest, const SummaryRow& r) {
    return static_cast<std::size_t>(std::count_if(latest.begin(), latest.end(), [&](const PointState& p) {
        return p.latest->machine == r.machine && p.latest->point == r.point;
    }));
}

std::string state_words(const SummaryRow& r) {
    if (r.failed()) return "FAILED: " + r.reason;
    std::string s = r.verdict == "developed" ? "DEVELOPED cavitation" : r.verdict == "incipient" ? "INCIPIENT cavitation"
                                                                      : r.verdict;
    if (!r.confidence_grade.empty()) s += " (" + r.confidence_grade + " confidence)";
    if (r.hf_rise_db) s += ", HF " + (*r.hf_rise_db >= 0 ? std::string("+") : std::string()) + fixed(*r.hf_rise_db, 1) + " dB";
    if (r.margin_ratio) s += ", NPSHa/NPSH3 " + fixed(*r.margin_ratio, 2);
    if (!r.agreement.empty() && r.agreement != "consistent" && r.agreement != "margin_unknown")
        s += " (" + models::agreement_words(r.agreement) + ")";
    if (!r.previous_datetime.empty()) {
        s += "; since " + r.previous_datetime.substr(0, 10) + ": was " + r.previous_verdict;
        if (r.hf_rise_change_db)
            s += ", HF " + (*r.hf_rise_change_db >= 0 ? std::string("+") : std::string()) + fixed(*r.hf_rise_change_db, 1) +
                 " dB";
        if (!r.event_since_previous.empty()) s += "; then " + r.event_since_previous;
    }
    if (r.verdict == "indeterminate" && !r.reason.empty()) s += "; " + r.reason;
    if (!r.other_findings.empty()) s += "; also: " + r.other_findings;
    return s;
}

// Each machine's worst channel, then the latest row of each machine point
// (and channel), worst first, with earlier rows of the route.
void print_attention(std::ostream& out, const std::vector<SummaryRow>& rows) {
    const std::vector<PointState> latest = latest_per_point(rows);
    const std::vector<MachineState> machines = machine_states(latest);
    out << "each machine at its latest visit, worst first:\n";
    for (const auto& m : machines)
        out << "  " << m.machine << ": " << m.worst->verdict << " (" << m.points << " point(s), " << m.channels
            << " channel(s), " << m.cavitating << " cavitating; worst " << m.worst->point << " channel "
            << m.worst->channel << ")\n";
    out << "latest state of each machine point, worst first:\n";
    int n = 0;
    for (const auto& [r, earlier] : latest) {
        out << "  " << ++n << ". " << r->machine << "  " << r->point
            << (r->channel != 0 || channels_of_point(latest, *r) > 1 ? "  ch " + std::to_string(r->channel) : std::string())
            << "  " << r->datetime.substr(0, 16) << "  " << state_words(*r) << "\n";
        if (!r->note.empty()) out << "       operator's note: " << r->note << "\n";
        for (const auto& a : r->actions) out << "       > " << action_words(a) << "\n";
        for (auto it = earlier.rbegin(); it != earlier.rend(); ++it)
            if (!(*it)->failed())
                out << "       earlier in this route: " << (*it)->datetime.substr(0, 16) << " " << (*it)->verdict
                    << (!(*it)->agreement.empty() && (*it)->agreement != "consistent"
                            ? " (" + models::agreement_words((*it)->agreement) + ")"
                            : "")
                    << "\n";
    }
    std::vector<const SummaryRow*> failed;
    for (const auto& r : rows)
        if (r.failed()) failed.push_back(&r);
    if (!failed.empty()) {
        out << "failed rows (not analysed):\n";
        for (const auto* r : failed) out << "  line " << r->line << " (" << r->file << "): " << r->reason << "\n";
    }
}

std::string rate_text(std::size_t done, double audio_s, double elapsed_s, int jobs) {
    char b[200];
    std::snprintf(b, sizeof b, "%.1f s on %d job%s: %.2f recordings/s, %.0f s of audio per s", elapsed_s, jobs,
                  jobs == 1 ? "" : "s", elapsed_s > 0 ? static_cast<double>(done) / elapsed_s : 0.0,
                  elapsed_s > 0 ? audio_s / elapsed_s : 0.0);
    return b;
}

// Who ran the route (or the merge), for route.json.
json run_provenance(const Analyst& who) {
    return {{"analyst", who.name}, {"analyst_source", who.source}, {"host", who.host}};
}

// Each machine's state at its latest visit, worst first, for route.json.
json machines_json(const std::vector<SummaryRow>& rows) {
    json list = json::array();
    for (const auto& m : machine_states(latest_per_point(rows)))
        list.push_back({{"machine", m.machine},
                        {"verdict", m.worst->verdict},
                        {"points", m.points},
                        {"channels", m.channels},
                        {"cavitating_channels", m.cavitating},
                        {"worst_point", m.worst->point},
                        {"worst_channel", m.worst->channel},
                        {"worst_line", m.worst->line}});
    return list;
}

void write_summary_files(const std::string& out_dir, const std::vector<SummaryRow>& rows,
                         const std::vector<std::string>& extra_columns, ordered_json run) {
    run["machines"] = machines_json(rows);
    std::string csv = csv_line(summary_columns(extra_columns));
    std::string jsonl;
    for (const auto& r : rows) {
        csv += csv_line(summary_cells(r));
        jsonl += json_text(r.to_json()) + "\n";
    }
    write_file_atomically((fs::path(out_dir) / "summary.csv").string(), csv);
    write_file_atomically((fs::path(out_dir) / "summary.jsonl").string(), jsonl);
    write_file_atomically((fs::path(out_dir) / "route.json").string(), json_text(run, 2) + "\n");
}

std::size_t import_rows(HistoryStore& store, const std::vector<SummaryRow>& rows, const std::string& out_dir,
                        std::size_t& updated, const std::vector<Event>& events, std::size_t& events_added) {
    std::size_t added = 0;
    updated = 0;
    events_added = 0;
    store.begin();
    for (const auto& e : events) events_added += store.add_event(e);
    for (const auto& r : rows) {
        if (r.failed() || r.sha256.empty()) continue;
        std::string finding;
        try {
            finding = read_text_file((fs::path(out_dir) / r.finding).string(), "finding file");
        } catch (const InputError&) {
            finding = "{}";
        }
        if (store.upsert(to_measurement(r, finding))) ++added;
        else ++updated;
    }
    store.commit();
    return added;
}

// A member of a shard's route.json as merge reads it: absent or null gives the
// fallback, another JSON type than route writes is refused naming the file and
// the field (json::value would throw a type_error that names neither).
template <class T>
T run_field(const json& run, const char* key, T fallback, const std::string& run_path) {
    const auto it = run.find(key);
    if (it == run.end() || it->is_null()) return fallback;
    try {
        return it->get<T>();
    } catch (const json::exception&) {
        throw InputError(run_path + ": field '" + key + "' is not of the type a route run writes");
    }
}

void prepare_out_dir(const std::string& out_dir) {
    std::error_code ec;
    fs::create_directories(fs::path(out_dir) / "findings", ec);
    if (ec || !fs::is_directory(fs::path(out_dir) / "findings"))
        throw InputError(out_dir + ": cannot create the output folder" + (ec ? ": " + ec.message() : std::string()));
}

// Every file a route reads, against its output folder (whose contents are
// replaced): the manifest, the baseline library, the store, each recording,
// its sidecar and any NPSH3 curve a row names.
void guard_route_inputs(const Manifest& manifest, const std::string& baselines, const std::string& store,
                        const std::string& out_dir) {
    OutputGuard guard;
    guard.input(manifest.path, "route manifest");
    guard.input(baselines, "baseline library");
    if (!store.empty()) guard.input_store(store);
    for (const auto& r : manifest.rows) {
        if (r.path.empty()) continue;
        guard.input(r.path, "recording of manifest line " + std::to_string(r.line));
        guard.input(sidecar_path_for(r.path), "sidecar of manifest line " + std::to_string(r.line));
        if (!r.reference_path.empty()) guard.input(r.reference_path, "reference of manifest line " + std::to_string(r.line));
        for (const auto& [key, value] : r.operating)
            if (key == "npsh3_curve" && !value.empty())
                guard.input((fs::path(value).is_absolute() ? fs::path(value) : fs::path(manifest.dir) / value).string(),
                            "NPSH3 curve of manifest line " + std::to_string(r.line));
    }
    guard.output_folder(out_dir);
}

}  // namespace

Measurement to_measurement(const SummaryRow& r, const std::string& finding_json) {
    Measurement m;
    m.sha256 = r.sha256;
    m.channel = r.channel;
    m.machine = r.machine;
    m.point = r.point;
    m.measured_at = r.datetime;
    m.days = r.days;
    m.file = r.file;
    m.baseline = r.baseline;
    m.verdict = r.verdict;
    m.confidence = r.confidence;
    m.hf_rise_db = r.hf_rise_db;
    m.hf_kurtosis = r.hf_kurtosis;
    m.impulse_rate_per_s = r.impulse_rate_per_s;
    m.lf_rise_db = r.lf_rise_db;
    m.npsha_m = r.npsha_m;
    m.margin_ratio = r.margin_ratio;
    m.agreement = r.agreement;
    m.finding_json = finding_json;
    return m;
}

void link_previous_visits(std::vector<SummaryRow>& rows, const HistoryStore* store, const std::vector<Event>& events) {
    struct Visit {
        double days;
        std::string datetime, verdict, sha256;
        int channel;
        std::optional<double> hf;
    };
    std::map<std::pair<std::string, std::string>, std::vector<Visit>> visits;
    std::map<std::string, std::vector<Event>> events_of;  // by machine: the route's and the store's
    for (const auto& r : rows)
        if (!r.failed()) visits[{r.machine, r.point}].push_back({r.days, r.datetime, r.verdict, r.sha256, r.channel, r.hf_rise_db});
    for (const auto& e : events) events_of[e.machine].push_back(e);
    if (store) {
        for (auto& [key, list] : visits) {
            for (const auto& m : store->history(key.first, key.second))
                list.push_back({m.days, m.measured_at, m.verdict, m.sha256, m.channel, m.hf_rise_db});
        }
        std::set<std::string> machines;
        for (const auto& [key, list] : visits) machines.insert(key.first);
        for (const auto& machine : machines)
            for (auto& e : store->events(machine)) events_of[machine].push_back(std::move(e));
    }
    for (auto& r : rows) {
        r.previous_datetime.clear();
        r.previous_verdict.clear();
        r.hf_rise_change_db.reset();
        r.event_since_previous.clear();
        if (r.failed()) continue;
        const Visit* best = nullptr;
        for (const auto& v : visits[{r.machine, r.point}]) {
            if (v.channel != r.channel) continue;                            // another axis of the point
            if (v.sha256 == r.sha256) continue;                              // the same recording
            if (!(v.days < r.days)) continue;
            if (!best || v.days > best->days || (v.days == best->days && v.sha256 > best->sha256)) best = &v;
        }
        if (!best) continue;
        r.previous_datetime = best->datetime;
        r.previous_verdict = best->verdict;
        // A visit at an event's time counts as after it (as trend judges).
        const Event* cut = last_event(events_of[r.machine], r.point, r.days);
        if (cut && cut->days > best->days) r.event_since_previous = cut->label();
        else if (best->hf && r.hf_rise_db) r.hf_rise_change_db = *r.hf_rise_db - *best->hf;
    }
}

std::vector<Event> manifest_events(const Manifest& manifest) {
    std::vector<Event> out;
    for (const auto& m : manifest.events)
        out.push_back({0, m.machine, m.point, m.when.text, m.when.days, m.what,
                       "manifest " + manifest.path + ":" + std::to_string(m.line)});
    return out;
}

json events_to_json(const std::vector<Event>& events) {
    json list = json::array();
    for (const auto& e : events) {
        ordered_json j;
        j["machine"] = e.machine;
        j["point"] = e.point;
        j["datetime"] = e.happened_at;
        j["days"] = e.days;
        j["what"] = e.what;
        j["source"] = e.source;
        list.push_back(json(j));
    }
    return list;
}

std::vector<Event> events_from_json(const json& list, const std::string& where) {
    std::vector<Event> out;
    if (list.is_null()) return out;
    try {
        if (!list.is_array()) throw std::invalid_argument("'events' is not a list");
        for (const auto& j : list) {
            Event e;
            e.machine = get_str(j, "machine");
            e.point = get_str(j, "point");
            e.happened_at = get_str(j, "datetime");
            const auto days = get_opt(j, "days");
            if (!days || !std::isfinite(*days)) throw std::invalid_argument("an event's 'days' is missing");
            e.days = *days;
            e.what = get_str(j, "what");
            e.source = get_str(j, "source");
            if (e.machine.empty() || e.happened_at.empty() || e.what.empty())
                throw std::invalid_argument("an event lacks its machine, datetime or what");
            out.push_back(std::move(e));
        }
    } catch (const std::exception& e) {
        throw InputError(where + ": field 'events': " + e.what());
    }
    return out;
}

namespace {

// The route's maintenance events, a line each, and how many were new to the store.
void print_events(std::ostream& out, const std::vector<Event>& events, std::optional<std::size_t> added) {
    if (events.empty()) return;
    out << "events: " << events.size() << " in the manifest"
        << (added ? " (" + std::to_string(*added) + " new in the store)" : std::string()) << "\n";
    for (const auto& e : events)
        out << "  " << e.machine << (e.point.empty() ? " (every point)" : " " + e.point) << "  " << e.label() << "\n";
}

// The severity zone file of a route: --zones, else BASELINES/severity_zones.toml
// when there is one; read once here so that a bad file stops the route before
// any analysis (each row reads it again, a few hundred bytes).
std::optional<std::string> route_zones_file(const RouteOptions& o) {
    std::optional<std::string> path = o.zones;
    if (!path) {
        std::error_code ec;
        const fs::path beside = fs::path(o.baselines) / kSeverityZonesFileName;
        if (fs::exists(beside, ec)) path = beside.string();
    }
    if (path) (void)read_severity_zones(*path);
    return path;
}

}  // namespace

int run_route(const RouteOptions& o, std::ostream& out, std::ostream& err) {
    using clock = std::chrono::steady_clock;
    const auto started = clock::now();
    const std::string started_utc = utc_now();
    const Analyst who = identify_analyst(o.analyst);
    std::optional<std::pair<std::size_t, std::size_t>> shard;
    if (o.shard) shard = parse_shard(*o.shard);
    if (o.jobs < 0 || o.jobs > 1024) throw UsageError("--jobs " + std::to_string(o.jobs) + ": use 1 .. 1024 (0 = one per core)");
    std::error_code ec;
    if (!fs::is_directory(o.baselines, ec))
        throw InputError(o.baselines + ": the baseline library folder does not exist (expected BASELINES/MACHINE/POINT.json)");
    const Manifest manifest = read_manifest(o.manifest);
    const bool use_store = !o.no_store && !shard;
    const std::string store_path = o.store ? *o.store : (fs::path(o.baselines) / "history.sqlite").string();
    guard_route_inputs(manifest, o.baselines, use_store ? store_path : std::string(), o.out_dir);
    // Fail before the analysis, not after it: a store that is locked, read-only or not ours.
    std::unique_ptr<HistoryStore> store;
    if (use_store) {
        store = std::make_unique<HistoryStore>(store_path);
        store->check_writable();
    }
    const std::optional<std::string> zones = route_zones_file(o);
    StagedFolder staged(o.out_dir);
    prepare_out_dir(staged.path());

    std::vector<ManifestRow> expanded;
    for (const auto& r : manifest.rows)
        if (!shard || r.index % shard->second == shard->first - 1)
            for (auto& one : rows_per_channel(r)) expanded.push_back(std::move(one));
    std::vector<const ManifestRow*> todo;
    for (const auto& r : expanded) todo.push_back(&r);

    unsigned cores = std::thread::hardware_concurrency();
    if (cores == 0) cores = 1;
    const int jobs = static_cast<int>(std::max<std::size_t>(
        1, std::min<std::size_t>(o.jobs > 0 ? static_cast<std::size_t>(o.jobs) : cores, std::max<std::size_t>(1, todo.size()))));
    std::vector<SummaryRow> rows(todo.size());
    std::atomic<std::size_t> next{0}, done{0}, failed{0};
    // The workers wake the main thread when a recording is done, so the route
    // ends as soon as the last one does; the progress line is redrawn at most
    // every 200 ms.
    std::mutex done_mutex;
    std::condition_variable done_cv;
    std::exception_ptr write_error;  // the first output that could not be written ends the run
    auto worker = [&] {
        for (;;) {
            const std::size_t i = next.fetch_add(1);
            if (i >= todo.size()) return;
            try {
                rows[i] = analyse_row(*todo[i], manifest, o.baselines, staged.path(), zones, who);
            } catch (...) {
                std::lock_guard<std::mutex> lock(done_mutex);
                if (!write_error) write_error = std::current_exception();
                next.store(todo.size());
            }
            if (rows[i].failed()) failed.fetch_add(1);
            {
                std::lock_guard<std::mutex> lock(done_mutex);
                done.fetch_add(1);
            }
            done_cv.notify_one();
        }
    };
    std::vector<std::thread> pool;
    for (int t = 0; t < jobs; ++t) pool.emplace_back(worker);
    const bool tty = isatty(STDERR_FILENO) != 0;
    for (;;) {
        {
            std::unique_lock<std::mutex> lock(done_mutex);
            done_cv.wait_for(lock, std::chrono::milliseconds(200),
                             [&] { return done.load() >= todo.size() || write_error; });
            if (write_error) break;
        }
        if (done.load() >= todo.size()) break;
        if (!tty) continue;
        const double el = std::chrono::duration<double>(clock::now() - started).count();
        const std::size_t d = done.load();
        const double rate = el > 0 ? static_cast<double>(d) / el : 0.0;
        err << "\rroute: " << d << "/" << todo.size() << " recordings, " << failed.load() << " failed, " << fixed(rate, 1)
            << " /s" << (rate > 0 && d < todo.size() ? ", about " + fixed(static_cast<double>(todo.size() - d) / rate, 0) + " s left" : std::string())
            << "   " << std::flush;
    }
    for (auto& t : pool) t.join();
    if (tty) err << "\r" << std::string(78, ' ') << "\r" << std::flush;
    if (write_error) std::rethrow_exception(write_error);
    const double elapsed = std::chrono::duration<double>(clock::now() - started).count();

    const std::vector<Event> events = manifest_events(manifest);  // every shard lists them all
    link_previous_visits(rows, store.get(), events);
    double audio_s = 0.0;
    std::size_t analysed = 0;
    for (const auto& r : rows)
        if (!r.failed()) {
            ++analysed;
            audio_s += r.duration_s.value_or(0.0);
        }
    ordered_json run;
    run["schema"] = "cavitas.route/1";
    run["cavitas_version"] = kVersion;
    run["manifest"] = manifest.path;
    run["manifest_sha256"] = manifest.sha256;
    run["manifest_rows"] = manifest.rows.size();
    run["extra_columns"] = manifest.extra_columns;
    run["shard"] = shard ? json(std::to_string(shard->first) + "/" + std::to_string(shard->second)) : json(nullptr);
    run["baselines"] = o.baselines;
    run["store"] = use_store ? json(store_path) : json(nullptr);
    run["rows"] = rows.size();
    run["analysed"] = analysed;
    run["failed"] = rows.size() - analysed;
    run["jobs"] = jobs;
    run["started_utc"] = started_utc;
    run["finished_utc"] = utc_now();
    run["elapsed_s"] = elapsed;
    run["audio_s"] = audio_s;
    run["provenance"] = run_provenance(who);
    run["events"] = events_to_json(events);
    // One unit: the reviews carried over, the summaries beside the findings, the store in
    // one transaction, then the folder swapped in. A failure on the way leaves the old outputs whole.
    const ReviewCarry carry = carry_reviews(o.out_dir, staged.path(), o.discard_reviews);
    write_summary_files(staged.path(), rows, manifest.extra_columns, run);
    std::size_t added = 0, updated = 0, events_added = 0;
    if (store) added = import_rows(*store, rows, staged.path(), updated, events, events_added);
    staged.commit();

    out << "route " << manifest.path << (shard ? " (shard " + *o.shard + ")" : std::string()) << ": " << rows.size()
        << " recording(s), " << analysed << " analysed, " << rows.size() - analysed << " failed ("
        << rate_text(rows.size(), audio_s, elapsed, jobs) << ")\n";
    print_attention(out, rows);
    out << "summary: " << (fs::path(o.out_dir) / "summary.csv").string() << ", "
        << (fs::path(o.out_dir) / "summary.jsonl").string() << "; findings in " << (fs::path(o.out_dir) / "findings").string()
        << "/\n";
    print_review_carry(out, carry, o.out_dir);
    if (store) out << "history: " << store_path << " (" << added << " new, " << updated << " already there and updated)\n";
    else if (shard) out << "history: not written by a shard; 'cavitas merge' writes it once all shards are done\n";
    print_events(out, events, store ? std::optional<std::size_t>(events_added) : std::nullopt);
    return analysed == rows.size() ? 0 : 1;
}

int run_merge(const MergeOptions& o, std::ostream& out, std::ostream& /*err*/) {
    if (o.shard_dirs.empty()) throw UsageError("merge: name the output folders of the shards");
    const Analyst who = identify_analyst(o.analyst);
    std::string manifest_sha, manifest_path;
    std::size_t manifest_rows = 0, shard_count = 0;
    std::vector<std::string> extra_columns;
    std::set<std::size_t> shards_seen;
    std::vector<std::pair<SummaryRow, std::string>> rows;  // row, its shard folder
    std::string baselines;
    std::vector<Event> events;  // each shard lists all of the manifest's
    double audio_s = 0.0;
    for (const auto& dir : o.shard_dirs) {
        const std::string run_path = (fs::path(dir) / "route.json").string();
        const json run = json::parse(read_text_file(run_path, "route run file"), nullptr, false);
        if (run.is_discarded() || !run.is_object() || !run.contains("schema") || run["schema"] != "cavitas.route/1")
            throw InputError(run_path + ": not the route.json of a cavitas route run");
        if (!run.contains("shard") || !run["shard"].is_string())
            throw InputError(run_path + ": this run was not a shard (route --shard K/N)");
        std::pair<std::size_t, std::size_t> kn;
        try {
            kn = parse_shard(run["shard"].get<std::string>());
        } catch (const UsageError&) {  // the file's fault, not the command line's
            throw InputError(run_path + ": field 'shard' is '" + run["shard"].get<std::string>() +
                             "', not K/N with 1 <= K <= N <= 100000");
        }
        const auto [k, n] = kn;
        const std::string sha = run_field(run, "manifest_sha256", std::string(), run_path);
        if (manifest_sha.empty()) {
            manifest_sha = sha;
            manifest_path = run_field(run, "manifest", std::string(), run_path);
            manifest_rows = run_field(run, "manifest_rows", std::size_t{0}, run_path);
            shard_count = n;
            extra_columns = run_field(run, "extra_columns", std::vector<std::string>{}, run_path);
            baselines = run_field(run, "baselines", std::string(), run_path);
            events = events_from_json(run.contains("events") ? run["events"] : json(), run_path);
        } else if (sha != manifest_sha) {
            throw InputError(run_path + ": this shard analysed another manifest (or another version of it) than " +
                             o.shard_dirs.front());
        } else if (n != shard_count) {
            throw InputError(run_path + ": shard " + std::to_string(k) + "/" + std::to_string(n) +
                             " belongs to a split into " + std::to_string(n) + ", the others into " +
                             std::to_string(shard_count));
        }
        if (!shards_seen.insert(k).second) throw InputError(run_path + ": shard " + std::to_string(k) + " is given twice");
        const std::string jsonl_path = (fs::path(dir) / "summary.jsonl").string();
        std::istringstream in(read_text_file(jsonl_path, "route summary"));
        std::string line;
        std::size_t n_line = 0;
        while (std::getline(in, line)) {
            ++n_line;
            if (line.empty()) continue;
            const json j = json::parse(line, nullptr, false);
            if (j.is_discarded()) throw InputError(jsonl_path + ":" + std::to_string(n_line) + ": not valid JSON");
            SummaryRow r = SummaryRow::from_json(j, jsonl_path + ":" + std::to_string(n_line));
            // JSON objects carry no order: the passed-through columns go back into the manifest's.
            std::vector<std::pair<std::string, std::string>> ordered;
            for (const auto& c : extra_columns) {
                std::string v;
                for (const auto& [name, x] : r.extra)
                    if (name == c) v = x;
                ordered.emplace_back(c, v);
            }
            r.extra = std::move(ordered);
            audio_s += r.duration_s.value_or(0.0);
            rows.emplace_back(std::move(r), dir);
        }
    }
    if (shards_seen.size() != shard_count) {
        std::string missing;
        for (std::size_t k = 1; k <= shard_count; ++k)
            if (!shards_seen.count(k)) missing += (missing.empty() ? "" : ", ") + std::to_string(k);
        throw InputError(o.shard_dirs.front() + ": shard(s) " + missing + " of " + std::to_string(shard_count) +
                         " are missing; merge needs every shard");
    }
    std::sort(rows.begin(), rows.end(), [](const auto& a, const auto& b) { return a.first.line < b.first.line; });
    for (std::size_t i = 1; i < rows.size(); ++i)
        if (rows[i].first.line == rows[i - 1].first.line)
            throw InputError(rows[i].second + ": manifest line " + std::to_string(rows[i].first.line) +
                             " is in two shards");
    if (rows.size() != manifest_rows)
        throw InputError(o.shard_dirs.front() + ": the shards hold " + std::to_string(rows.size()) + " rows, the manifest " +
                         std::to_string(manifest_rows));

    {
        OutputGuard guard;
        for (const auto& dir : o.shard_dirs) guard.input(dir, "shard folder");
        if (!o.no_store && o.store) guard.input_store(*o.store);
        guard.output_folder(o.out_dir);
    }
    std::unique_ptr<HistoryStore> store;
    if (!o.no_store && o.store) {
        store = std::make_unique<HistoryStore>(*o.store);
        store->check_writable();
    }
    StagedFolder staged(o.out_dir);
    prepare_out_dir(staged.path());
    std::vector<SummaryRow> merged;
    for (auto& [r, dir] : rows) {
        // from_json let through only findings/NAME.json: the copy stays inside both folders.
        if (!r.finding.empty())
            write_file_atomically((fs::path(staged.path()) / r.finding).string(),
                                  read_text_file((fs::path(dir) / r.finding).string(), "finding file"));
        merged.push_back(std::move(r));
    }
    link_previous_visits(merged, store.get(), events);
    std::size_t analysed = 0;
    for (const auto& r : merged) analysed += !r.failed();
    ordered_json run;
    run["schema"] = "cavitas.route/1";
    run["cavitas_version"] = kVersion;
    run["manifest"] = manifest_path;
    run["manifest_sha256"] = manifest_sha;
    run["manifest_rows"] = manifest_rows;
    run["extra_columns"] = extra_columns;
    run["shard"] = nullptr;
    run["merged_from"] = o.shard_dirs;
    run["baselines"] = baselines;
    run["store"] = store ? json(*o.store) : json(nullptr);
    run["rows"] = merged.size();
    run["analysed"] = analysed;
    run["failed"] = merged.size() - analysed;
    run["finished_utc"] = utc_now();
    run["audio_s"] = audio_s;
    run["provenance"] = run_provenance(who);
    run["events"] = events_to_json(events);
    const ReviewCarry carry = carry_reviews(o.out_dir, staged.path(), o.discard_reviews);
    write_summary_files(staged.path(), merged, extra_columns, run);
    std::size_t added = 0, updated = 0, events_added = 0;
    if (store) added = import_rows(*store, merged, staged.path(), updated, events, events_added);
    staged.commit();
    out << "merged " << shard_count << " shard(s) of " << manifest_path << ": " << merged.size() << " recording(s), "
        << analysed << " analysed, " << merged.size() - analysed << " failed\n";
    print_attention(out, merged);
    print_review_carry(out, carry, o.out_dir);
    if (store) out << "history: " << *o.store << " (" << added << " new, " << updated << " already there and updated)\n";
    print_events(out, events, store ? std::optional<std::size_t>(events_added) : std::nullopt);
    return analysed == merged.size() ? 0 : 1;
}

}  // namespace cavitas::app
