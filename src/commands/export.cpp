// cavitas export: a route folder's latest visits as work requests. The
// summary says which rows are each point's latest (src/route/attention, the
// order the terminal and the report use); each request's action, verdict and
// note come from the finding file, whose bytes are hashed as read.
#include "src/commands/export.hpp"

#include <algorithm>
#include <cctype>
#include <filesystem>
#include <map>
#include <ostream>
#include <sstream>

#include <nlohmann/json.hpp>

#include "src/analysis/analysis.hpp"
#include "src/io/atomic_file.hpp"
#include "src/io/csv.hpp"
#include "src/io/datetime.hpp"
#include "src/io/errors.hpp"
#include "src/io/output_guard.hpp"
#include "src/io/recording.hpp"
#include "src/io/text_file.hpp"
#include "src/output/plain_text.hpp"
#include "src/route/attention.hpp"
#include "src/route/route.hpp"

namespace cavitas::app {

namespace fs = std::filesystem;
using nlohmann::json;
using nlohmann::ordered_json;

namespace {

// Size caps as the report reads the same files (src/report/reports.cpp).
constexpr std::size_t kMaxRouteRunBytes = 8u << 20;   // route.json
constexpr std::size_t kMaxFindingBytes = 8u << 20;    // one finding
constexpr std::size_t kIdHexDigits = 16;              // 64 bits of the SHA-256: no clash in any real route

// A row that failed: put it right within a week, as a record that cannot be
// judged (models/actions.cpp: kWeekDays, our choice).
constexpr int kFailedRowRecheckDays = 7;
constexpr const char* kFailedRowBasis = "our choice (cavitas default; set your site's own)";

enum class Format { csv, json };

struct WorkRequest {
    std::string request_id, asset, point;
    int channel = 0;
    std::string recorded, priority;
    int priority_rank = 4;
    std::string recheck_by;
    int recheck_days = 0;
    std::string description, topic, concern, verdict, confidence_grade, operator_note, finding, finding_sha256, basis;
};

// The summary's rows, and for each its line's text and where it is (for errors and a failed row's id).
Format format_of(const std::string& path) {
    std::string ext = fs::path(path).extension().string();
    std::transform(ext.begin(), ext.end(), ext.begin(), [](unsigned char c) { return static_cast<char>(std::tolower(c)); });
    if (ext == ".csv") return Format::csv;
    if (ext == ".json") return Format::json;
    throw UsageError("--work-requests '" + path + "': the format is told by the extension; name a .csv or a .json file");
}

void require_route(const std::string& dir) {
    std::error_code ec;
    if (!fs::is_directory(dir, ec))
        throw InputError(dir + ": not a folder; give a route's output folder (cavitas route --out DIR)");
    for (const char* name : {"route.json", "summary.jsonl"})
        if (!fs::exists(fs::path(dir) / name, ec))
            throw InputError(dir + ": not a route folder: it has no " + name + " (cavitas route --out DIR writes one)");
}

// Every file of the route folder is an input: OUT may be written beside them, never over one.
void guard_files(const ExportOptions& o) {
    OutputGuard guard;
    const fs::path dir(o.route_dir);
    guard.input((dir / "route.json").string(), "route run file");
    guard.input((dir / "summary.jsonl").string(), "route summary");
    guard.input((dir / "summary.csv").string(), "route summary (CSV)");
    std::error_code ec;
    for (fs::directory_iterator it(dir / "findings", ec), end; !ec && it != end; it.increment(ec))
        guard.input(it->path().string(), "route finding or its reviews");
    guard.output(o.work_requests);
}

void check_route_run(const std::string& dir) {
    const std::string path = (fs::path(dir) / "route.json").string();
    const json run = json::parse(read_text_file(path, "route run file", kMaxRouteRunBytes), nullptr, false);
    const auto schema = run.is_object() ? run.find("schema") : run.end();
    if (run.is_discarded() || schema == run.end() || !schema->is_string() || *schema != "cavitas.route/1")
        throw InputError(path + ": field 'schema' is not cavitas.route/1: not a cavitas route run");
}

// One line, whole: every run of control characters (C0, DEL, C1, U+2028 and
// U+2029: what a reader may take for a line break) becomes one space.
std::string single_line(const std::string& text) {
    const std::string s = valid_utf8(text);
    std::string o;
    bool gap = false;
    for (std::size_t i = 0; i < s.size();) {
        const auto c = static_cast<unsigned char>(s[i]);
        const auto next = [&](std::size_t k) { return i + k < s.size() ? static_cast<unsigned char>(s[i + k]) : 0u; };
        std::size_t control = 0;  // bytes of a control character at i
        if (c < 0x20 || c == 0x7f) control = 1;
        else if (c == 0xc2 && next(1) >= 0x80 && next(1) <= 0x9f) control = 2;
        else if (c == 0xe2 && next(1) == 0x80 && (next(2) == 0xa8 || next(2) == 0xa9)) control = 3;
        if (control == 0) {
            o += s[i++];
            gap = false;
            continue;
        }
        if (!gap) o += ' ';
        gap = true;
        i += control;
    }
    return o;
}

std::string request_id(const std::string& sha256, std::size_t index) {
    return "WR-" + sha256.substr(0, kIdHexDigits) + "-" + std::to_string(index + 1);
}

// The fields every request of a row shares.
WorkRequest row_request(const SummaryRow& r) {
    WorkRequest w;
    w.asset = r.machine;
    w.point = r.point;
    w.channel = r.channel;
    w.recorded = r.datetime;
    w.verdict = r.verdict;
    w.confidence_grade = r.confidence_grade;
    w.operator_note = single_line(r.note);
    return w;
}

void set_action(WorkRequest& w, const RowAction& a) {
    w.priority = a.priority;
    w.priority_rank = a.priority_rank;
    w.recheck_days = a.recheck_days;
    w.recheck_by = date_after_days(w.recorded, a.recheck_days).value_or("");
    w.description = single_line(a.step);
    w.topic = a.topic;
    w.concern = a.concern;
    w.basis = single_line(a.basis);
}

// A row that could not be analysed: one request to put it right; its id from its summary line's bytes.
WorkRequest failed_request(const SummaryRow& r, const std::string& line) {
    WorkRequest w = row_request(r);
    RowAction a;
    a.topic = "analysis_failed";
    a.priority = "soon";
    a.priority_rank = 2;
    a.recheck_days = kFailedRowRecheckDays;
    a.step = "Put this recording right and analyse it again (cavitas route): " +
             (r.reason.empty() ? std::string("it could not be analysed") : r.reason) + " (" + r.file + ")";
    a.basis = kFailedRowBasis;
    set_action(w, a);
    w.request_id = request_id(sha256_bytes(line), 0);
    return w;
}

std::string string_field(const json& j, const char* key, const std::string& path) {
    const auto it = j.find(key);
    if (it == j.end() || !it->is_string()) throw InputError(path + ": field '" + key + "' is missing or not text");
    return it->get<std::string>();
}

// One request per action of an analysed row's finding, soonest first.
std::vector<WorkRequest> finding_requests(const std::string& dir, const SummaryRow& r, const std::string& where) {
    if (r.finding.empty()) throw InputError(where + ": field 'finding' is empty on a row with verdict " + r.verdict);
    const std::string path = (fs::path(dir) / r.finding).string();
    std::error_code ec;
    if (!fs::exists(path, ec))
        throw InputError(where + ": field 'finding' names " + r.finding + ", which is missing from " + dir);
    std::string sha;
    const json f = json::parse(read_text_file(path, "finding", kMaxFindingBytes, &sha), nullptr, false);
    if (f.is_discarded() || !f.is_object()) throw InputError(path + ": not valid JSON (a finding)");
    const std::string verdict = string_field(f, "verdict", path);
    if (verdict != r.verdict)
        throw InputError(path + ": field 'verdict' is '" + verdict + "' where " + where + " says '" + r.verdict +
                         "': the folder was changed after the route wrote it");
    if (!f.contains("actions"))
        throw InputError(path + ": field 'actions' is missing (a finding of an older cavitas: run the route again)");
    const std::vector<RowAction> actions = actions_from_json(f["actions"], path + ": field 'actions'");
    WorkRequest base = row_request(r);
    base.operator_note = single_line(f.contains("operator_note") ? string_field(f, "operator_note", path) : r.note);
    base.finding = r.finding;
    base.finding_sha256 = sha;
    std::vector<WorkRequest> out;
    for (std::size_t i = 0; i < actions.size(); ++i) {
        WorkRequest w = base;
        set_action(w, actions[i]);
        w.request_id = request_id(sha, i);
        out.push_back(std::move(w));
    }
    return out;
}

// Two findings of the same bytes would give the same ids: refused, naming both.
void check_unique(const std::vector<WorkRequest>& requests) {
    std::map<std::string, const WorkRequest*> seen;
    for (const auto& w : requests) {
        const auto [it, fresh] = seen.emplace(w.request_id, &w);
        if (!fresh)
            throw InputError(w.finding + ": has the same bytes (SHA-256 " + w.finding_sha256 + ") as " +
                             it->second->finding + "; one finding was copied over another");
    }
}

std::vector<WorkRequest> requests_of(const std::string& dir, const RouteSummary& s, std::size_t& points) {
    std::vector<WorkRequest> out;
    const std::vector<PointState> states = latest_per_point(s.rows);
    points = states.size();
    for (const auto& st : states) {
        const auto i = static_cast<std::size_t>(st.latest - s.rows.data());
        if (st.latest->failed()) out.push_back(failed_request(*st.latest, s.lines[i]));
        else
            for (auto& w : finding_requests(dir, *st.latest, s.wheres[i])) out.push_back(std::move(w));
    }
    check_unique(out);
    return out;
}

std::vector<std::string> cells(const WorkRequest& w) {
    return {w.request_id,   w.asset,         w.point,
            std::to_string(w.channel),       w.recorded,
            w.priority,     std::to_string(w.priority_rank),
            w.recheck_by,   std::to_string(w.recheck_days),
            w.description,  w.topic,         w.concern,
            w.verdict,      w.confidence_grade,
            w.operator_note, w.finding,      w.finding_sha256,
            w.basis};
}

std::string csv_text(const std::vector<WorkRequest>& requests) {
    std::string text = csv_line(work_request_columns());
    for (const auto& w : requests) text += csv_line(cells(w));
    return text;
}

ordered_json request_json(const WorkRequest& w) {
    const std::vector<std::string> values = cells(w);
    const std::vector<std::string>& keys = work_request_columns();
    ordered_json j;
    for (std::size_t k = 0; k < keys.size(); ++k) j[keys[k]] = values[k];
    j["channel"] = w.channel;
    j["priority_rank"] = w.priority_rank;
    j["recheck_days"] = w.recheck_days;
    return j;
}

std::string json_document(const std::string& route_dir, const std::vector<WorkRequest>& requests) {
    ordered_json doc;
    doc["schema"] = kWorkRequestsSchema;
    doc["route"] = route_dir;
    doc["exported_utc"] = utc_now();
    doc["cavitas_version"] = kVersion;
    doc["requests"] = ordered_json::array();
    for (const auto& w : requests) doc["requests"].push_back(request_json(w));
    return json_text(doc, 2) + "\n";
}

}  // namespace

const std::vector<std::string>& work_request_columns() {
    static const std::vector<std::string> columns{
        "request_id", "asset",    "point",          "channel",     "recorded",         "priority",
        "priority_rank", "recheck_by", "recheck_days", "description", "topic",        "concern",
        "verdict",    "confidence_grade", "operator_note", "finding", "finding_sha256", "basis"};
    return columns;
}

void run_export(const ExportOptions& o, std::ostream& out) {
    const Format format = format_of(o.work_requests);
    require_route(o.route_dir);
    guard_files(o);
    check_route_run(o.route_dir);
    const RouteSummary summary = read_route_summary(o.route_dir);
    std::size_t points = 0;
    const std::vector<WorkRequest> requests = requests_of(o.route_dir, summary, points);
    write_file_atomically(o.work_requests,
                          format == Format::csv ? csv_text(requests) : json_document(o.route_dir, requests));
    std::size_t asking = 0;  // points whose latest visit gave a request
    for (std::size_t i = 0; i < requests.size(); ++i)
        asking += i == 0 || requests[i].asset != requests[i - 1].asset || requests[i].point != requests[i - 1].point ||
                  requests[i].channel != requests[i - 1].channel;
    out << requests.size() << " work request(s) from the latest visits of " << points
        << " machine point(s) and channel(s) (" << points - asking << " ask for nothing) written to "
        << o.work_requests << " (" << (format == Format::csv ? "CSV" : kWorkRequestsSchema) << ")\n";
}

}  // namespace cavitas::app
