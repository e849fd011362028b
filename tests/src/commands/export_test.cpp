// cavitas export: work requests from a route folder, through the real binary
// on the demo route (samples/route.csv) and on a route with a hostile note and
// a row that fails. Expected values come from the route's own summary rows
// (counted here, independently of the export), coreutils (sha256sum, GNU
// date), RFC 4180 and the OWASP CSV injection guidance.
#include <catch2/catch.hpp>

#include <unistd.h>

#include <algorithm>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <map>
#include <set>
#include <sstream>
#include <string>
#include <tuple>
#include <vector>

#include <nlohmann/json.hpp>

#include "tests/support/cli.hpp"

#include "src/io/csv.hpp"

namespace fs = std::filesystem;
using cavitas::test::q;
using cavitas::test::Run;
using cavitas::test::slurp;
using nlohmann::json;

namespace {

fs::path workdir() {
    static const fs::path d = cavitas::test::scratch_dir("export-test");
    return d;
}

Run run(const std::string& args) { return cavitas::test::run_binary(CAVITAS_BIN, args, workdir()); }

// The first line a shell command prints (coreutils: an implementation independent of cavitas).
std::string shell_line(const std::string& command) { return cavitas::test::shell_first_line(command, workdir()); }

// The note an operator might type: quotes, a comma, a line break and a leading "=" (a formula to a spreadsheet).
const std::string kHostileNote = "=1+2 \"quoted\", then\nsecond line";

struct Routes {
    fs::path demo;     ///< samples/route.csv as it is
    fs::path hostile;  ///< OW-P103 with kHostileNote, and a row that fails on a point of its own
};

void make_baselines(const fs::path& site, const fs::path& lib) {
    const struct {
        const char* machine;
        const char* rpm;
        const char* vanes;
    } machines[] = {{"OW-P101", "1485", "7"}, {"OW-P102", "2960", "5"}, {"OW-P103", "985", "6"}};
    for (const auto& m : machines) {
        fs::create_directories(lib / m.machine);
        const std::string files = q(site / (std::string(m.machine) + "_baseline_1.wav")) + " " +
                                  q(site / (std::string(m.machine) + "_baseline_2.wav"));
        REQUIRE(run(std::string("baseline --machine ") + m.machine + " --rpm " + m.rpm + " --vanes " + m.vanes +
                    " --full-scale 50g -o " + q(lib / m.machine / "DE-H.json") + " " + files)
                    .status == 0);
    }
    // OW-P101's triaxial point NDE-T (samples/baselines.csv: UFF 58b in volts, 100 mV/g).
    REQUIRE(run("baseline --machine OW-P101 --channel all --rpm 1485 --vanes 7 --sensitivity 100mV/g -o " +
                q(lib / "OW-P101" / "NDE-T.json") + " " + q(site / "OW-P101_NDE-T_baseline_1.uff") + " " +
                q(site / "OW-P101_NDE-T_baseline_2.uff"))
                .status == 0);
}

const Routes& routes() {
    static const Routes r = [] {
        const fs::path site = workdir() / "site", lib = workdir() / "baselines";
        fs::create_directories(site);
        for (const auto& e : fs::directory_iterator(CAVITAS_SAMPLES))
            fs::copy_file(e.path(), site / e.path().filename(), fs::copy_options::overwrite_existing);
        make_baselines(site, lib);
        Routes out{workdir() / "route-demo", workdir() / "route-hostile"};
        REQUIRE(run("route " + q(site / "route.csv") + " --baselines " + q(lib) + " --no-store --out " + q(out.demo))
                    .status == 0);
        std::string note = kHostileNote;  // RFC 4180: a quote inside a quoted field is doubled
        for (std::size_t at = 0; (at = note.find('"', at)) != std::string::npos; at += 2) note.insert(at, "\"");
        std::ofstream(site / "hostile.csv")
            << "file,machine,point,channel,datetime,rpm,vanes,full_scale,note\n"
            << "OW-P103_2026-09-07.wav,OW-P103,DE-H,0,2026-09-07T10:20:00,985,6,50g,\"" << note << "\"\n"
            << "OW-P104_lost.wav,OW-P104,DE-H,0,2026-11-16T08:00:00,985,6,50g,\n";
        REQUIRE(run("route " + q(site / "hostile.csv") + " --baselines " + q(lib) + " --no-store --out " +
                    q(out.hostile))
                    .status == 1);  // the lost recording's row fails
        return out;
    }();
    return r;
}

std::vector<json> summary_rows(const fs::path& route) {
    std::vector<json> v;
    std::istringstream in(slurp(route / "summary.jsonl"));
    for (std::string line; std::getline(in, line);)
        if (!line.empty()) v.push_back(json::parse(line));
    return v;
}

// What export must give, from the summary rows by the definition: each (machine,
// point, channel)'s latest visit (an analysed row over a failed one, then the
// latest datetime), one request per action, or one for a failed row.
std::multiset<std::pair<std::string, std::string>> expected_requests(const fs::path& route) {
    std::map<std::tuple<std::string, std::string, int>, json> latest;
    for (const auto& r : summary_rows(route)) {
        const auto key = std::make_tuple(r["machine"].get<std::string>(), r["point"].get<std::string>(), r["channel"].get<int>());
        const auto it = latest.find(key);
        const auto rank = [](const json& x) { return std::make_pair(x["verdict"] != "error", x["datetime"].get<std::string>()); };
        if (it == latest.end() || rank(r) > rank(it->second)) latest[key] = r;
    }
    std::multiset<std::pair<std::string, std::string>> want;  // (finding, step) or (file, "failed")
    for (const auto& [key, r] : latest) {
        if (r["verdict"] == "error") want.insert({r["file"].get<std::string>(), "failed"});
        for (const auto& a : r["actions"]) want.insert({r["finding"].get<std::string>(), a["step"].get<std::string>()});
    }
    return want;
}

struct Csv {
    std::string text;
    std::vector<std::string> header;
    std::vector<std::map<std::string, std::string>> rows;
};

Csv read_csv(const fs::path& p) {
    Csv c;
    c.text = slurp(p);
    const auto records = cavitas::app::parse_csv(c.text, p.string());
    REQUIRE(!records.empty());
    c.header = records.front().fields;
    for (std::size_t i = 1; i < records.size(); ++i) {
        REQUIRE(records[i].fields.size() == c.header.size());
        std::map<std::string, std::string> row;
        for (std::size_t k = 0; k < c.header.size(); ++k) row[c.header[k]] = records[i].fields[k];
        c.rows.push_back(row);
    }
    return c;
}

// Export ROUTE to NAME (in the work folder); the run must succeed.
fs::path exported(const fs::path& route, const std::string& name) {
    const fs::path out = workdir() / name;
    const Run r = run("export " + q(route) + " --work-requests " + q(out));
    INFO(r.out << r.err);
    REQUIRE(r.status == 0);
    return out;
}

}  // namespace

TEST_CASE("export: every action of every point's latest visit appears once, in CSV and in JSON", "[export]") {
    const fs::path route = routes().demo;
    const auto want = expected_requests(route);
    REQUIRE(!want.empty());
    const Csv csv = read_csv(exported(route, "demo.csv"));
    std::multiset<std::pair<std::string, std::string>> got_csv;
    for (const auto& r : csv.rows) got_csv.insert({r.at("finding"), r.at("description")});
    CHECK(got_csv == want);
    const json doc = json::parse(slurp(exported(route, "demo.json")));
    CHECK(doc["schema"] == "cavitas.work-requests/1");
    std::multiset<std::pair<std::string, std::string>> got_json;
    for (const auto& r : doc["requests"]) got_json.insert({r["finding"].get<std::string>(), r["description"].get<std::string>()});
    CHECK(got_json == want);
    // The same requests in the same order in both forms.
    REQUIRE(doc["requests"].size() == csv.rows.size());
    for (std::size_t i = 0; i < csv.rows.size(); ++i) CHECK(doc["requests"][i]["request_id"] == csv.rows[i].at("request_id"));
    // Columns as documented (export --help, README.md), in order.
    CHECK(csv.header == std::vector<std::string>{"request_id", "asset", "point", "channel", "recorded", "priority",
                                                 "priority_rank", "recheck_by", "recheck_days", "description", "topic",
                                                 "concern", "verdict", "confidence_grade", "operator_note", "finding",
                                                 "finding_sha256", "basis"});
}

TEST_CASE("export: worst point first, each point's actions together and soonest first", "[export]") {
    const Csv csv = read_csv(exported(routes().demo, "order.csv"));
    REQUIRE(csv.rows.size() >= 2);
    // src/route/attention.hpp: a developed verdict comes before every other; the demo's one
    // developed latest visit is OW-P102's (samples/route.csv, label column).
    CHECK(csv.rows.front().at("asset") == "OW-P102");
    CHECK(csv.rows.front().at("verdict") == "developed");
    std::set<std::string> finished;  // points whose requests have ended
    for (std::size_t i = 0; i < csv.rows.size(); ++i) {
        const auto& r = csv.rows[i];
        const std::string point = r.at("asset") + "/" + r.at("point") + "/" + r.at("channel");
        CHECK(finished.count(point) == 0);  // a point's requests are not split
        if (i + 1 < csv.rows.size() && csv.rows[i + 1].at("finding") == r.at("finding"))
            CHECK(std::stoi(r.at("priority_rank")) <= std::stoi(csv.rows[i + 1].at("priority_rank")));
        else
            finished.insert(point);
    }
}

TEST_CASE("export: request ids are stable across exports, unique, and made of the finding's SHA-256", "[export]") {
    const Csv a = read_csv(exported(routes().demo, "ids-a.csv"));
    const Csv b = read_csv(exported(routes().demo, "ids-b.csv"));
    REQUIRE(a.rows.size() == b.rows.size());
    std::set<std::string> ids;
    std::map<std::string, int> per_finding;
    for (std::size_t i = 0; i < a.rows.size(); ++i) {
        const auto& r = a.rows[i];
        CHECK(r.at("request_id") == b.rows[i].at("request_id"));
        ids.insert(r.at("request_id"));
        // sha256sum (coreutils) of the finding's bytes.
        const std::string sha = shell_line("sha256sum " + q(routes().demo / r.at("finding"))).substr(0, 64);
        CHECK(r.at("finding_sha256") == sha);
        const int number = ++per_finding[r.at("finding")];
        CHECK(r.at("request_id") == "WR-" + sha.substr(0, 16) + "-" + std::to_string(number));
    }
    CHECK(ids.size() == a.rows.size());
}

TEST_CASE("export: recheck_by is the recorded date plus recheck_days", "[export]") {
    const Csv csv = read_csv(exported(routes().demo, "dates.csv"));
    REQUIRE(!csv.rows.empty());
    for (const auto& r : csv.rows) {
        // GNU date (coreutils) does the calendar arithmetic.
        const std::string want = shell_line("date -u -d " + q(r.at("recorded").substr(0, 10) + " + " +
                                                              r.at("recheck_days") + " days") + " +%F");
        INFO(r.at("recorded") << " + " << r.at("recheck_days") << " days");
        CHECK(r.at("recheck_by") == want);
    }
}

TEST_CASE("export: a hostile note stays one line, guarded in CSV and whole in JSON", "[export]") {
    const fs::path route = routes().hostile;
    const auto rows = summary_rows(route);
    REQUIRE(rows.size() == 2);
    REQUIRE(rows[0]["note"] == kHostileNote);  // the route kept the operator's words as typed
    const std::string one_line = "=1+2 \"quoted\", then second line";  // the line break becomes a space
    const Csv csv = read_csv(exported(route, "hostile.csv"));
    // RFC 4180: records end in line breaks; a note on one line leaves header + one line per request.
    CHECK(std::count(csv.text.begin(), csv.text.end(), '\n') == static_cast<long>(csv.rows.size()) + 1);
    bool seen = false;
    for (const auto& r : csv.rows)
        if (r.at("asset") == "OW-P103") {
            seen = true;
            // OWASP CSV injection guidance: a cell starting with = + - @ is prefixed with an apostrophe.
            CHECK(r.at("operator_note") == "'" + one_line);
        }
    CHECK(seen);
    const json doc = json::parse(slurp(exported(route, "hostile.json")));
    for (const auto& r : doc["requests"])
        if (r["asset"] == "OW-P103") CHECK(r["operator_note"] == one_line);  // JSON is no spreadsheet: no guard
}

TEST_CASE("export: a failed row alone at its point asks to be put right, soon", "[export]") {
    const json doc = json::parse(slurp(exported(routes().hostile, "failed.json")));
    std::vector<json> failed;
    for (const auto& r : doc["requests"])
        if (r["asset"] == "OW-P104") failed.push_back(r);
    REQUIRE(failed.size() == 1);  // one request per failed row (export --help)
    CHECK(failed[0]["verdict"] == "error");
    CHECK(failed[0]["priority"] == "soon");
    CHECK(failed[0]["priority_rank"] == 2);
    CHECK(failed[0]["topic"] == "analysis_failed");
    CHECK(failed[0]["finding"] == "");
    CHECK(failed[0]["description"].get<std::string>().find("OW-P104_lost.wav") != std::string::npos);
    CHECK(failed[0]["recheck_by"] == shell_line("date -u -d '2026-11-16 + 7 days' +%F"));  // GNU date
}

TEST_CASE("export: refusals name the folder, file or option, and write nothing", "[export]") {
    const fs::path route = routes().demo;
    const fs::path out = workdir() / "refused.csv";
    fs::remove(out);
    const auto one_line = [](const Run& r) { return std::count(r.err.begin(), r.err.end(), '\n') == 1; };

    const Run not_route = run("export " + q(workdir() / "baselines") + " --work-requests " + q(out));
    CHECK(not_route.status == 1);
    CHECK(one_line(not_route));
    CHECK(not_route.err.find("baselines: not a route folder: it has no route.json") != std::string::npos);

    const Run bad_ext = run("export " + q(route) + " --work-requests " + q(workdir() / "refused.xlsx"));
    CHECK(bad_ext.status == 2);
    CHECK(one_line(bad_ext));
    CHECK(bad_ext.err.find("--work-requests") != std::string::npos);

    const std::string summary = slurp(route / "summary.csv");
    const Run over_input = run("export " + q(route) + " --work-requests " + q(route / "summary.csv"));
    CHECK(over_input.status == 1);
    CHECK(over_input.err.find("summary.csv: is the route summary (CSV) this command reads") != std::string::npos);
    CHECK(slurp(route / "summary.csv") == summary);
    CHECK_FALSE(fs::exists(out));
    CHECK_FALSE(fs::exists(workdir() / "refused.xlsx"));
}

TEST_CASE("export: a missing finding or unreadable actions are refused, naming the file and field", "[export]") {
    const fs::path copy = workdir() / "route-damaged";
    fs::remove_all(copy);
    fs::copy(routes().demo, copy, fs::copy_options::recursive);
    // OW-P103's latest visit has an action (its bearing finding; see the demo test above).
    const fs::path finding = copy / "findings" / "L000008_OW-P103_DE-H.json";
    const std::string text = slurp(finding);
    json f = json::parse(text);
    f["actions"] = json::array({{{"topic", "cavitation"}, {"priority", "someday"}, {"recheck_days", 7}, {"step", "x"}}});
    std::ofstream(finding) << f.dump();
    const fs::path out = workdir() / "damaged.csv";
    const Run bad = run("export " + q(copy) + " --work-requests " + q(out));
    CHECK(bad.status == 1);
    CHECK(bad.err.find("L000008_OW-P103_DE-H.json: field 'actions'") != std::string::npos);
    CHECK(bad.err.find("'priority' is not urgent, soon, planned or watch") != std::string::npos);
    fs::remove(finding);
    const Run missing = run("export " + q(copy) + " --work-requests " + q(out));
    CHECK(missing.status == 1);
    CHECK(missing.err.find("summary.jsonl:7: field 'finding' names findings/L000008_OW-P103_DE-H.json, which is missing") !=
          std::string::npos);
    CHECK_FALSE(fs::exists(out));
}
