// Routes, history and before/after comparisons, run through the real cavitas
// binary on the demo recordings (samples/) and on damaged inputs made here.
#include <catch2/catch.hpp>

#include <sys/wait.h>
#include <unistd.h>

#include <csignal>

#include <sqlite3.h>

#include <algorithm>
#include <filesystem>
#include <fstream>
#include <set>
#include <sstream>
#include <string>

#include <nlohmann/json.hpp>

#include "tests/support/axes.hpp"
#include "tests/support/cli.hpp"

#include "src/io/datetime.hpp"
#include "src/io/errors.hpp"
#include "src/route/route.hpp"
#include "src/route/store.hpp"

namespace fs = std::filesystem;
using cavitas::test::q;
using cavitas::test::Run;
using cavitas::test::slurp;
using nlohmann::json;

namespace {

fs::path workdir() {
    static const fs::path d = [] {
        fs::path p = fs::temp_directory_path() / ("cavitas-route-test-" + std::to_string(::getpid()));
        fs::create_directories(p);
        return p;
    }();
    return d;
}

Run run(const std::string& args) { return cavitas::test::run_binary(CAVITAS_BIN, args, workdir()); }

// The demo's recordings and sidecars, copied once, with a baseline library built from them.
struct Site {
    fs::path dir, lib;
};

const Site& site() {
    static const Site s = [] {
        Site st;
        st.dir = workdir() / "site";
        st.lib = st.dir / "baselines";
        fs::create_directories(st.lib);
        for (const auto& e : fs::directory_iterator(CAVITAS_SAMPLES))
            fs::copy_file(e.path(), st.dir / e.path().filename(), fs::copy_options::overwrite_existing);
        const struct {
            const char* machine;
            const char* rpm;
            const char* vanes;
        } machines[] = {{"OW-P101", "1485", "7"}, {"OW-P102", "2960", "5"}, {"OW-P103", "985", "6"}};
        for (const auto& m : machines) {
            fs::create_directories(st.lib / m.machine);
            const std::string files = q(st.dir / (std::string(m.machine) + "_baseline_1.wav")) + " " +
                                      q(st.dir / (std::string(m.machine) + "_baseline_2.wav"));
            const Run r = run(std::string("baseline --machine ") + m.machine + " --rpm " + m.rpm + " --vanes " + m.vanes +
                              " --full-scale 50g -o " + q(st.lib / m.machine / "DE-H.json") + " " + files);
            REQUIRE(r.status == 0);
        }
        // The route's DE-H rows (one channel each, a baseline above); the triaxial
        // NDE-T rows, whose channel cell lists three channels, are left out.
        std::istringstream in(slurp(st.dir / "route.csv"));
        std::string line, text;
        while (std::getline(in, line))
            if (line.find(",NDE-T,") == std::string::npos) text += line + "\n";
        std::ofstream(st.dir / "route-deh.csv") << text;
        return st;
    }();
    return s;
}

// The demo route (its DE-H rows and its event row, lines 2 .. 9) plus rows that must fail
// on their own: a bad date, a missing recording, a text file named .wav, a machine without a baseline.
fs::path mixed_manifest() {
    const Site& s = site();
    std::ofstream(s.dir / "notes.wav") << "this is not a recording\n";
    std::string text = slurp(s.dir / "route-deh.csv");
    text += "OW-P101_2026-09-07.wav,OW-P101,DE-H,0,2026-09-31T08:00,1485,7,50g,test,normal,healthy,25600,8,1,,,,,\n";
    text += "OW-P101_lost.wav,OW-P101,DE-H,0,2026-11-16T08:00,1485,7,50g,test,normal,healthy,25600,8,2,,,,,\n";
    text += "notes.wav,OW-P102,DE-H,0,2026-11-16T09:00,2960,5,50g,test,normal,healthy,51200,8,3,,,,,\n";
    text += "OW-P103_2026-09-07.wav,OW-P104,DE-H,0,2026-11-16T10:00,985,6,50g,test,normal,healthy,12800,8,4,,,,,\n";
    const fs::path m = s.dir / "mixed.csv";
    std::ofstream(m) << text;
    return m;
}

std::vector<json> jsonl(const fs::path& p) {
    std::vector<json> v;
    std::istringstream in(slurp(p));
    std::string line;
    while (std::getline(in, line))
        if (!line.empty()) v.push_back(json::parse(line));
    return v;
}

// A finding without its time of creation, for comparing runs.
std::string without_time(const fs::path& p) {
    json j = json::parse(slurp(p));
    j.erase("created_utc");
    return j.dump();
}

}  // namespace

TEST_CASE("route: every row accounted for, failures isolated, the same results on 1 and 2 jobs", "[route]") {
    const Site& s = site();
    const fs::path manifest = mixed_manifest();
    const fs::path store = workdir() / "jobs.sqlite";
    const fs::path out1 = workdir() / "out-jobs1", out2 = workdir() / "out-jobs2";
    const Run r1 = run("route " + q(manifest) + " --baselines " + q(s.lib) + " --store " + q(store) + " --jobs 1 --out " +
                       q(out1));
    INFO(r1.out << r1.err);
    CHECK(r1.status == 1);  // some rows failed
    const auto rows = jsonl(out1 / "summary.jsonl");
    REQUIRE(rows.size() == 11);  // 7 demo rows + 4 bad ones: every manifest row
    std::map<std::string, std::string> verdict_of;
    int failed = 0;
    for (const auto& r : rows) {
        const std::string file = r["file"];
        const int line = r["line"];
        if (r["verdict"] == "error") {
            ++failed;
            CHECK_FALSE(r["reason"].get<std::string>().empty());
            continue;
        }
        verdict_of[file + "@" + std::to_string(line)] = r["verdict"];
        CHECK(fs::exists(out1 / r["finding"].get<std::string>()));
        CHECK(r["sha256"].get<std::string>().size() == 64);
    }
    CHECK(failed == 4);
    // The demo labels (samples/route.csv, column label) of the rows that were analysed.
    CHECK(verdict_of["OW-P101_2026-10-05.wav@3"] == "incipient");
    CHECK(verdict_of["OW-P101_2026-11-02.wav@4"] == "developed");
    CHECK(verdict_of["OW-P101_2026-11-09.wav@5"] == "normal");
    CHECK(verdict_of["OW-P102_2026-10-05.wav@7"] == "developed");
    CHECK(verdict_of["OW-P103_2026-09-07.wav@8"] == "normal");
    // Each failure names its problem.
    CHECK(rows[7]["reason"].get<std::string>().find(":10: datetime '2026-09-31T08:00'") != std::string::npos);
    CHECK(rows[8]["reason"].get<std::string>().find("OW-P101_lost.wav: no such file") != std::string::npos);
    CHECK(rows[9]["reason"].get<std::string>().find("notes.wav") != std::string::npos);
    CHECK(rows[10]["line"] == 13);
    const std::string summary_csv = slurp(out1 / "summary.csv");
    CHECK(std::count(summary_csv.begin(), summary_csv.end(), '\n') == 12);  // header + 11
    CHECK(summary_csv.find("no baseline for machine OW-P104") != std::string::npos);
    // Passed-through columns survive.
    CHECK(rows[0]["extra"]["label"] == "normal");
    CHECK(summary_csv.substr(0, summary_csv.find('\n')).find(",role,label,kind,fs_hz,duration_s,seed") != std::string::npos);
    // The change since the previous visit of the same point.
    CHECK(rows[2]["previous_datetime"] == "2026-10-05T08:55:00");
    CHECK(rows[2]["previous_verdict"] == "incipient");
    CHECK(rows[2]["hf_rise_change_db"].get<double>() > 9.0);
    CHECK(rows[3]["previous_verdict"] == "developed");
    // Worst first on the screen: the developed OW-P102 before the repaired OW-P101.
    CHECK(r1.out.find("1. OW-P102") != std::string::npos);
    CHECK(r1.out.find("line 10") != std::string::npos);

    const Run r2 = run("route " + q(manifest) + " --baselines " + q(s.lib) + " --no-store --jobs 2 --out " + q(out2));
    CHECK(r2.status == 1);
    CHECK(slurp(out1 / "summary.csv") == slurp(out2 / "summary.csv"));
    CHECK(slurp(out1 / "summary.jsonl") == slurp(out2 / "summary.jsonl"));
    for (const auto& r : rows)
        if (r["verdict"] != "error")
            CHECK(without_time(out1 / r["finding"].get<std::string>()) ==
                  without_time(out2 / r["finding"].get<std::string>()));
}

TEST_CASE("route: shards merge into the same summary as one run", "[route]") {
    const Site& s = site();
    const fs::path manifest = mixed_manifest();
    const fs::path whole = workdir() / "out-whole", a = workdir() / "out-shard1", b = workdir() / "out-shard2",
                   merged = workdir() / "out-merged";
    CHECK(run("route " + q(manifest) + " --baselines " + q(s.lib) + " --no-store --out " + q(whole)).status == 1);
    CHECK(run("route " + q(manifest) + " --baselines " + q(s.lib) + " --shard 1/2 --out " + q(a)).status == 1);
    CHECK(run("route " + q(manifest) + " --baselines " + q(s.lib) + " --shard 2/2 --out " + q(b)).status == 1);
    CHECK(jsonl(a / "summary.jsonl").size() == 6);  // rows 1, 3, 5, ... of 11
    CHECK(jsonl(b / "summary.jsonl").size() == 5);
    const Run m = run("merge --out " + q(merged) + " " + q(b) + " " + q(a));
    INFO(m.out << m.err);
    CHECK(m.status == 1);
    CHECK(slurp(merged / "summary.csv") == slurp(whole / "summary.csv"));
    CHECK(slurp(merged / "summary.jsonl") == slurp(whole / "summary.jsonl"));
    // The manifest's event row (samples/route.csv's last) is listed once, whichever shard read it.
    CHECK(json::parse(slurp(merged / "route.json"))["events"].size() == 1);
    // A shard missing, or one given twice, is refused.
    const Run missing = run("merge --out " + q(workdir() / "out-m2") + " " + q(a));
    CHECK(missing.status == 1);
    CHECK(missing.err.find("shard(s) 2 of 2 are missing") != std::string::npos);
    CHECK(run("merge --out " + q(workdir() / "out-m3") + " " + q(a) + " " + q(a)).status == 1);
    CHECK(run("route " + q(manifest) + " --baselines " + q(s.lib) + " --shard 3/2 --out " + q(a)).status == 2);
}

TEST_CASE("route: a summary line with a channel no recording can have is refused, not cast", "[route]") {
    // Found by fuzz_manifest: a channel of 1.5e12 was converted to int (undefined behaviour).
    const Site& s = site();
    const fs::path out = workdir() / "out-channel";
    CHECK(run("route " + q(mixed_manifest()) + " --baselines " + q(s.lib) + " --shard 1/2 --out " + q(out)).status ==
          1);
    const auto rows = jsonl(out / "summary.jsonl");
    REQUIRE(!rows.empty());
    CHECK_NOTHROW(cavitas::app::SummaryRow::from_json(rows.front(), "summary.jsonl:1"));
    for (const double bad : {1.54129e12, -1.0, 2.5, 1024.0}) {
        json r = rows.front();
        r["channel"] = bad;
        INFO("channel " << bad);
        CHECK_THROWS_AS(cavitas::app::SummaryRow::from_json(r, "summary.jsonl:1"), cavitas::app::InputError);
    }
}

TEST_CASE("history: importing a route twice adds no rows, and trend reads it", "[route]") {
    const Site& s = site();
    const fs::path store = workdir() / "twice.sqlite";
    const std::string args = "route " + q(s.dir / "route-deh.csv") + " --baselines " + q(s.lib) + " --store " + q(store);
    const Run first = run(args + " --out " + q(workdir() / "out-t1"));
    CHECK(first.status == 0);
    CHECK(first.out.find("(7 new, 0 already there") != std::string::npos);
    const Run second = run(args + " --out " + q(workdir() / "out-t2"));
    CHECK(second.out.find("(0 new, 7 already there") != std::string::npos);
    {
        cavitas::app::HistoryStore h(store.string());
        CHECK(h.count() == 7);
    }
    const fs::path tj = workdir() / "trend.json";
    const Run t = run("trend OW-P101 DE-H --store " + q(store) + " --json " + q(tj));
    INFO(t.err);
    REQUIRE(t.status == 0);
    const json doc = json::parse(slurp(tj));
    REQUIRE(doc["points"].size() == 1);
    CHECK(doc["points"][0]["measurements"].size() == 4);
    CHECK(doc["points"][0]["measurements"][2]["verdict"] == "developed");
    CHECK(t.out.find("trend:") != std::string::npos);
    CHECK(run("trend OW-P999 --store " + q(store)).status == 1);
    CHECK(run("trend OW-P101").status == 2);  // no store named

    // A baseline learned from the store's normal visits of the point (OW-P101 DE-H: 2 of its 4
    // visits are normal), with the calibration and vanes of the baseline the route used.
    const fs::path learned = workdir() / "from-store.json";
    const Run b = run("baseline --from-store " + q(store) + " --machine OW-P101 --point DE-H -o " + q(learned));
    INFO(b.err);
    REQUIRE(b.status == 0);
    CHECK(b.out.find("learning from 2 normal visit(s)") != std::string::npos);
    const json base = json::parse(slurp(learned));
    CHECK(base["sources"].size() == 2);
    CHECK(base["context"]["unit"] == "g");
    CHECK(base["context"]["vanes"] == 7);
    CHECK(run("baseline --from-store " + q(store) + " --machine OW-P999 --point DE-H -o " + q(learned)).status == 1);
    CHECK(run("baseline --from-store " + q(store) + " --machine OW-P101 -o " + q(learned)).status == 2);
}

TEST_CASE("trend: a slowly worsening point is flagged before it crosses into incipient", "[route]") {
    // A synthetic history written straight into a store: visits every 28 days, HF over
    // baseline creeping up 0.4 dB a visit, every verdict still normal (under +3 dB).
    const fs::path store = workdir() / "creep.sqlite";
    fs::remove(store);
    {
        cavitas::app::HistoryStore h(store.string());
        const double rise[] = {0.1, 0.4, 0.9, 1.2, 1.7, 2.1};
        for (int i = 0; i < 6; ++i) {
            cavitas::app::Measurement m;
            m.sha256 = std::string(63, '0') + std::to_string(i);
            m.machine = "OW-P201";
            m.point = "DE-H";
            m.days = 20700.0 + 28.0 * i;
            m.measured_at = "2026-0" + std::to_string(3 + i) + "-01T09:00:00";
            m.file = "creep.wav";
            m.baseline = "b.json";
            m.verdict = "normal";
            m.confidence = 0.9;
            m.hf_rise_db = rise[i];
            m.finding_json = "{}";
            h.upsert(m);
        }
    }
    const fs::path tj = workdir() / "creep.json";
    const Run t = run("trend OW-P201 --store " + q(store) + " --json " + q(tj));
    REQUIRE(t.status == 0);
    const json tr = json::parse(slurp(tj))["points"][0]["trend"];
    CHECK(tr["rising"] == true);
    CHECK(tr["days_to_alert"].get<double>() > 0.0);
    CHECK(tr["slope_db_per_30d"].get<double>() > 0.3);
    CHECK(t.out.find("rising") != std::string::npos);
}

TEST_CASE("compare: a repair that removed cavitation is improved, a no-change pair is not", "[route]") {
    const Site& s = site();
    const fs::path base = s.lib / "OW-P101" / "DE-H.json";
    const fs::path j = workdir() / "compare.json";
    Run r = run("compare --baseline " + q(base) + " --before " + q(s.dir / "OW-P101_2026-11-02.wav") + " --after " +
                q(s.dir / "OW-P101_2026-11-09.wav") + " --json " + q(j));
    INFO(r.err);
    REQUIRE(r.status == 0);
    json c = json::parse(slurp(j));
    CHECK(c["change"] == "improved");
    CHECK(c["before"][0]["verdict"] == "developed");
    CHECK(c["after"][0]["verdict"] == "normal");
    CHECK(c["indicators"][0]["key"] == "hf_band_level_db");
    CHECK(c["indicators"][0]["shift"].get<double>() < -10.0);
    CHECK(c["indicators"][0]["p_value"].get<double>() < 0.01);
    CHECK(c["warnings"].empty());
    CHECK(r.out.find("IMPROVED") != std::string::npos);

    // Two healthy visits: no significant change.
    r = run("compare --baseline " + q(base) + " --before " + q(s.dir / "OW-P101_2026-09-07.wav") + " --after " +
            q(s.dir / "OW-P101_2026-11-09.wav") + " --json " + q(j));
    REQUIRE(r.status == 0);
    c = json::parse(slurp(j));
    CHECK(c["change"] == "unchanged");
    CHECK(r.out.find("no significant change") != std::string::npos);
    const std::set<std::string> allowed{"improved", "unchanged", "worse"};
    CHECK(allowed.count(c["change"].get<std::string>()) == 1);

    // The other way round the repair reads as worse; with the after-visit at another flow the
    // duty is named as a possible explanation.
    fs::copy_file(s.dir / "OW-P101_2026-11-09.wav", workdir() / "OW-P101_throttled.wav", fs::copy_options::overwrite_existing);
    std::ofstream(workdir() / "OW-P101_throttled.op.toml") << "flow = \"250 m3/h\"\nspeed = \"1485 rpm\"\n";
    r = run("compare --baseline " + q(base) + " --before " + q(workdir() / "OW-P101_throttled.wav") + " --after " +
            q(s.dir / "OW-P101_2026-11-02.wav") + " --json " + q(j));
    REQUIRE(r.status == 0);
    c = json::parse(slurp(j));
    CHECK(c["change"] == "worse");
    REQUIRE(c["warnings"].size() == 1);
    CHECK(c["warnings"][0].get<std::string>().find("flow before 250 m3/h") != std::string::npos);
    CHECK_FALSE(c["cautions"].empty());  // cavitating after: the cautions come with it

    // The same file on both sides is a usage error.
    CHECK(run("compare --baseline " + q(base) + " --before " + q(s.dir / "OW-P101_2026-09-07.wav") + " --after " +
              q(s.dir / "OW-P101_2026-09-07.wav"))
              .status == 2);
}

// --- faults: a route's outputs are one unit --------------------------------------------
namespace {

std::set<std::string> finding_files(const fs::path& out) {
    std::set<std::string> names;
    std::error_code ec;
    for (const auto& e : fs::directory_iterator(out / "findings", ec)) names.insert(e.path().filename().string());
    return names;
}

// Every finding a summary names is in the folder, and nothing else is.
void check_consistent(const fs::path& out) {
    std::set<std::string> named;
    for (const auto& r : jsonl(out / "summary.jsonl"))
        if (!r["finding"].get<std::string>().empty()) named.insert(fs::path(r["finding"].get<std::string>()).filename().string());
    CHECK(named == finding_files(out));
}

// The demo route's first `rows` data rows, as a manifest of its own.
fs::path first_rows(const std::string& name, std::size_t rows) {
    const Site& s = site();
    std::istringstream in(slurp(s.dir / "route-deh.csv"));
    std::string line, text;
    for (std::size_t k = 0; k <= rows && std::getline(in, line); ++k) text += line + "\n";
    const fs::path p = s.dir / name;
    std::ofstream(p) << text;
    return p;
}

}  // namespace

TEST_CASE("route: killed midway, the earlier route's outputs stay whole, and a rerun is consistent", "[route][faults]") {
    const Site& s = site();
    const fs::path out = workdir() / "out-killed";
    const fs::path a = first_rows("route-a.csv", 2);
    // Every demo row, and each one twice, so the kill lands while findings are being written.
    std::string b_text = slurp(s.dir / "route-deh.csv");
    {
        std::istringstream in(b_text);
        std::string line, rows;
        std::getline(in, line);
        while (std::getline(in, line)) rows += line + "\n";
        b_text += rows + rows;
    }
    const fs::path b = s.dir / "route-b.csv";
    std::ofstream(b) << b_text;
    REQUIRE(run("route " + q(a) + " --baselines " + q(s.lib) + " --no-store --jobs 1 --out " + q(out)).status == 0);
    std::ofstream(out / "notes.txt") << "the analyst's own file in the route folder\n";
    const std::string a_summary = slurp(out / "summary.jsonl");
    const auto a_findings = finding_files(out);
    REQUIRE(a_findings.size() == 2);

    // Route B into the same folder, killed once its first finding is written.
    const pid_t pid = ::fork();
    REQUIRE(pid >= 0);
    if (pid == 0) {
        const std::string cmd = "exec '" + std::string(CAVITAS_BIN) + "' route " + q(b) + " --baselines " + q(s.lib) +
                                " --no-store --jobs 1 --out " + q(out) + " >/dev/null 2>&1";
        ::execl("/bin/sh", "sh", "-c", cmd.c_str(), static_cast<char*>(nullptr));
        ::_exit(127);
    }
    bool saw_staging = false;
    for (int k = 0; k < 3000 && !saw_staging; ++k) {
        for (const auto& e : fs::directory_iterator(workdir()))
            if (e.path().filename().string().rfind(".out-killed.cavitas-", 0) == 0 && !finding_files(e.path()).empty())
                saw_staging = true;
        if (!saw_staging) ::usleep(5000);
    }
    ::kill(pid, SIGKILL);
    int status = 0;
    ::waitpid(pid, &status, 0);
    REQUIRE(saw_staging);
    REQUIRE(WIFSIGNALED(status));
    // The folder is route A's, whole: its summary, its findings, the analyst's file.
    CHECK(slurp(out / "summary.jsonl") == a_summary);
    CHECK(finding_files(out) == a_findings);
    CHECK(fs::exists(out / "notes.txt"));
    check_consistent(out);

    // Run again to the end: B's outputs, consistent, the analyst's file kept, A's other findings gone.
    const Run r = run("route " + q(b) + " --baselines " + q(s.lib) + " --no-store --jobs 2 --out " + q(out));
    INFO(r.err);
    CHECK(r.status == 0);
    CHECK(jsonl(out / "summary.jsonl").size() == 21);
    check_consistent(out);
    CHECK(slurp(out / "notes.txt") == "the analyst's own file in the route folder\n");
}

TEST_CASE("route: a full disk leaves the earlier outputs whole and names what failed", "[route][faults]") {
    if (::geteuid() != 0) {
        WARN("skipped: mounting a small tmpfs to fill needs root");
        return;
    }
    const Site& s = site();
    const fs::path disk = workdir() / "small-disk";
    fs::create_directories(disk);
    if (std::system(("mount -t tmpfs -o size=4m tmpfs " + q(disk) + " 2>/dev/null").c_str()) != 0) {
        WARN("skipped: this machine does not let root mount a tmpfs (a container without CAP_SYS_ADMIN)");
        return;
    }
    struct Unmount {
        fs::path at;
        ~Unmount() { std::system(("umount " + q(at)).c_str()); }
    } unmount{disk};
    const fs::path out = disk / "out";
    const fs::path a = first_rows("route-disk.csv", 2);
    REQUIRE(run("route " + q(a) + " --baselines " + q(s.lib) + " --no-store --out " + q(out)).status == 0);
    const fs::path finding = out / "findings" / *finding_files(out).begin();
    const Run old_report = run("report " + q(finding) + " --html " + q(disk / "old.html"));
    INFO(old_report.err);
    REQUIRE(old_report.status == 0);
    const std::string a_summary = slurp(out / "summary.jsonl"), a_csv = slurp(out / "summary.csv"),
                      a_route = slurp(out / "route.json"), old_html = slurp(disk / "old.html");
    // Fill the disk, leaving a few kilobytes: enough to start, not to finish.
    std::system(("dd if=/dev/zero of=" + q(disk / "filler") + " bs=4k 2>/dev/null; rm -f " + q(disk / "filler") +
                 "; dd if=/dev/zero of=" + q(disk / "filler") + " bs=1k count=$(( $(df --output=avail -k " + q(disk) +
                 " | tail -1) - 12 )) 2>/dev/null")
                    .c_str());

    const Run r = run("route " + q(first_rows("route-disk-b.csv", 4)) + " --baselines " + q(s.lib) +
                      " --no-store --out " + q(out));
    INFO(r.out << r.err);
    CHECK(r.status == 1);
    CHECK(r.err.find("No space left on device") != std::string::npos);
    CHECK(slurp(out / "summary.jsonl") == a_summary);
    CHECK(slurp(out / "summary.csv") == a_csv);
    CHECK(slurp(out / "route.json") == a_route);
    check_consistent(out);
    for (const auto& e : fs::directory_iterator(disk)) CHECK(e.path().filename().string().find(".cavitas-") == std::string::npos);

    // A report of an HTML and a PDF: neither is written when one cannot be.
    const Run rep = run("report " + q(finding) + " --html " + q(disk / "old.html") + " --pdf " + q(disk / "new.pdf"));
    CHECK(rep.status == 1);
    CHECK(rep.err.find("No space left on device") != std::string::npos);
    CHECK(slurp(disk / "old.html") == old_html);
    CHECK_FALSE(fs::exists(disk / "new.pdf"));
}

TEST_CASE("route: a locked or read-only store is found before the analysis, with the right words", "[route][faults]") {
    const Site& s = site();
    const fs::path store = workdir() / "locked.sqlite";
    const fs::path a = first_rows("route-lock.csv", 1);
    REQUIRE(run("route " + q(a) + " --baselines " + q(s.lib) + " --store " + q(store) + " --out " +
                q(workdir() / "out-lock")).status == 0);
    {
        cavitas::app::HistoryStore holder(store.string());
        holder.begin();  // a write lock held by "another program"
        const Run r = run("route " + q(a) + " --baselines " + q(s.lib) + " --store " + q(store) + " --out " +
                          q(workdir() / "out-lock2"));
        INFO(r.err);
        CHECK(r.status == 1);
        CHECK(r.err.find("locked by another program") != std::string::npos);
        CHECK(r.err.find("not a cavitas results store") == std::string::npos);
        CHECK_FALSE(fs::exists(workdir() / "out-lock2"));
        holder.commit();
    }
    // Read-only: root ignores permissions, so the run is made as an unprivileged user then.
    fs::permissions(store, fs::perms::owner_read | fs::perms::group_read | fs::perms::others_read);
    std::string as_user;
    if (::geteuid() == 0) {
        if (std::system("command -v setpriv >/dev/null 2>&1") != 0) {
            WARN("skipped the read-only store: running as root without setpriv to drop privileges");
            return;
        }
        fs::permissions(workdir(), fs::perms::all);
        as_user = "--reuid=65534 --regid=65534 --clear-groups ";
    }
    const std::string cmd = (as_user.empty() ? std::string() : "setpriv " + as_user) + "'" + CAVITAS_BIN + "' route " +
                            q(a) + " --baselines " + q(s.lib) + " --store " + q(store) + " --out " +
                            q(workdir() / "out-ro") + " >" + q(workdir() / "ro.out") + " 2>" + q(workdir() / "ro.err");
    const int rc = std::system(cmd.c_str());
    const std::string err = slurp(workdir() / "ro.err");
    INFO(err);
    CHECK(WIFEXITED(rc));
    CHECK(WEXITSTATUS(rc) == 1);
    CHECK(err.find("read-only") != std::string::npos);
    CHECK_FALSE(fs::exists(workdir() / "out-ro"));
}

TEST_CASE("route: a triaxial row gives a finding per channel and a machine of two points one verdict", "[route]") {
    // OW-P101 gets a second point, NDE-T, with a triaxial sensor: three axes
    // made from the demo's recordings (tests/support/axes.hpp), the visit's
    // developed cavitation strong on axis 0.
    const Site& s = site();
    using cavitas::test::read_mono;
    const auto b1 = read_mono(s.dir / "OW-P101_baseline_1.wav"), b2 = read_mono(s.dir / "OW-P101_baseline_2.wav");
    const auto ok = read_mono(s.dir / "OW-P101_2026-09-07.wav"), bad = read_mono(s.dir / "OW-P101_2026-11-02.wav");
    const fs::path dir = workdir() / "tri";
    fs::create_directories(dir / "lib" / "OW-P101");
    cavitas::test::write_axes(dir / "t_base1.wav", {{{{1.0f, &b1}}, {{0.7f, &b2}}, {{0.5f, &ok}}}});
    cavitas::test::write_axes(dir / "t_base2.wav", {{{{1.0f, &b2}}, {{0.7f, &ok}}, {{0.5f, &b1}}}});
    cavitas::test::write_axes(dir / "t_visit.wav", {{{{1.0f, &bad}}, {{0.7f, &b1}}, {{0.5f, &b2}}}});
    fs::copy_file(s.lib / "OW-P101" / "DE-H.json", dir / "lib" / "OW-P101" / "DE-H.json");
    fs::copy_file(s.dir / "OW-P101_2026-09-07.wav", dir / "OW-P101_2026-09-07.wav");
    Run r = run("baseline --machine OW-P101 --channel all --rpm 1485 --vanes 7 --full-scale 50g -o " +
                q(dir / "lib" / "OW-P101" / "NDE-T.json") + " " + q(dir / "t_base1.wav") + " " + q(dir / "t_base2.wav"));
    REQUIRE(r.status == 0);
    std::ofstream(dir / "m.csv") << "file,machine,point,channel,datetime,rpm,vanes,full_scale\n"
                                    "OW-P101_2026-09-07.wav,OW-P101,DE-H,0,2026-11-02T08:00,1485,7,50g\n"
                                    "t_visit.wav,OW-P101,NDE-T,\"0,1,2\",2026-11-02T08:10,1485,7,50g\n";
    r = run("route " + q(dir / "m.csv") + " --baselines " + q(dir / "lib") + " --no-store --out " + q(dir / "out"));
    INFO(r.out << r.err);
    REQUIRE(r.status == 0);
    const auto rows = jsonl(dir / "out" / "summary.jsonl");
    REQUIRE(rows.size() == 4);  // one for DE-H, three for the triaxial line
    std::set<std::string> names;
    for (const auto& row : rows) names.insert(row["finding"].get<std::string>());
    CHECK(names.count("findings/L000003_OW-P101_NDE-T_ch0.json") == 1);
    CHECK(names.count("findings/L000003_OW-P101_NDE-T_ch2.json") == 1);
    CHECK(rows[1]["verdict"] == "developed");
    CHECK(rows[1]["channel"] == 0);
    // The machine's verdict is its worst channel's, over both points.
    const json run_json = json::parse(slurp(dir / "out" / "route.json"));
    REQUIRE(run_json["machines"].size() == 1);
    const json& m = run_json["machines"][0];
    CHECK(m["machine"] == "OW-P101");
    CHECK(m["verdict"] == "developed");
    CHECK(m["points"] == 2);
    CHECK(m["channels"] == 4);
    CHECK(m["worst_point"] == "NDE-T");
    CHECK(m["worst_channel"] == 0);
    CHECK(r.out.find("OW-P101: developed (2 point(s), 4 channel(s)") != std::string::npos);

    // One sensitivity per axis: a full scale of 5 V over 100 mV/g is the baseline's 50 g per full scale
    // (5 V / 0.1 V/g, hand computation), so the verdicts stay; two sensitivities for three channels fail the row.
    std::ofstream(dir / "m2.csv") << "file,machine,point,channel,datetime,rpm,vanes,full_scale,sensitivity\n"
                                     "t_visit.wav,OW-P101,NDE-T,\"0,1,2\",2026-11-02T08:10,1485,7,5V,100mV/g;100mV/g;100mV/g\n"
                                     "t_visit.wav,OW-P101,NDE-T,\"0,1,2\",2026-11-03T08:10,1485,7,5V,100mV/g;100mV/g\n";
    r = run("route " + q(dir / "m2.csv") + " --baselines " + q(dir / "lib") + " --no-store --out " + q(dir / "out2"));
    CHECK(r.status == 1);  // the bad row fails on its own
    const auto rows2 = jsonl(dir / "out2" / "summary.jsonl");
    REQUIRE(rows2.size() == 4);
    CHECK(rows2[0]["verdict"] == "developed");
    CHECK(rows2[0]["channel"] == 0);
    CHECK(rows2[3]["verdict"] == "error");
    CHECK(rows2[3]["reason"].get<std::string>().find("2 channels' sensitivities for 3 channels") != std::string::npos);
}

TEST_CASE("route: the library's severity_zones.toml gives every finding its zone, --zones overrides it, a bad one stops the route",
          "[route][severity]") {
    const Site& s = site();
    // A library of its own, so that the other tests' findings stay without zones.
    const fs::path lib = workdir() / "zones-lib";
    fs::create_directories(lib / "OW-P101");
    fs::copy_file(s.lib / "OW-P101" / "DE-H.json", lib / "OW-P101" / "DE-H.json", fs::copy_options::overwrite_existing);
    const std::string route = slurp(s.dir / "route.csv");
    std::string text = route.substr(0, route.find('\n') + 1);
    text += "OW-P101_2026-11-02.wav,OW-P101,DE-H,0,2026-11-02T08:40,1485,7,50g,test,developed,cavitation,25600,8,1,,,,,\n";
    const fs::path manifest = s.dir / "zones-route.csv";
    std::ofstream(manifest) << text;
    // Made-up boundaries (this test only) that put the recording's ~3.9 mm/s in zone C, then in zone B.
    std::ofstream(lib / "severity_zones.toml") << "source = \"library class, made up\"\na_b_mm_s = 1\nb_c_mm_s = 2\nc_d_mm_s = 10\n";
    const fs::path other = workdir() / "zones-other.toml";
    std::ofstream(other) << "source = \"command-line class, made up\"\na_b_mm_s = 2\nb_c_mm_s = 8\nc_d_mm_s = 16\n";

    const fs::path out1 = workdir() / "zones-out1", out2 = workdir() / "zones-out2", out3 = workdir() / "zones-out3";
    Run r = run("route " + q(manifest) + " --baselines " + q(lib) + " --no-store --out " + q(out1));
    INFO(r.err);
    REQUIRE(r.status == 0);
    std::vector<fs::path> findings;
    for (const auto& e : fs::directory_iterator(out1 / "findings")) findings.push_back(e.path());
    REQUIRE(findings.size() == 1);
    const json f1 = json::parse(slurp(findings[0]));
    CHECK(f1["velocity"]["zone"]["source"] == "library class, made up");
    CHECK(f1["velocity"]["zone"]["name"] == "C");

    r = run("route " + q(manifest) + " --baselines " + q(lib) + " --zones " + q(other) + " --no-store --out " + q(out2));
    REQUIRE(r.status == 0);
    const json f2 = json::parse(slurp(out2 / "findings" / findings[0].filename()));
    CHECK(f2["velocity"]["zone"]["source"] == "command-line class, made up");
    CHECK(f2["velocity"]["zone"]["name"] == "B");
    CHECK(f2["verdict"] == f1["verdict"]);  // zones never move the verdict

    std::ofstream(lib / "severity_zones.toml") << "source = \"x\"\na_b_mm_s = 3\nb_c_mm_s = 2\nc_d_mm_s = 10\n";
    r = run("route " + q(manifest) + " --baselines " + q(lib) + " --no-store --out " + q(out3));
    CHECK(r.status == 1);
    CHECK(r.err.find("severity_zones.toml: b_c_mm_s = 2 must be above a_b_mm_s = 3") != std::string::npos);
}

TEST_CASE("route: --analyst is recorded in route.json and every finding, and reviews survive a re-run only when they still apply",
          "[route][review]") {
    const Site& s = site();
    // A library of its own: one of its baselines is learned again below.
    const fs::path lib = workdir() / "lib-reviews";
    fs::remove_all(lib);
    fs::copy(s.lib, lib, fs::copy_options::recursive);
    fs::remove(lib / "history.sqlite");
    const fs::path out = workdir() / "out-reviews";
    const std::string route = "route " + q(s.dir / "route-deh.csv") + " --baselines " + q(lib) + " --no-store --out " + q(out);
    REQUIRE(run(route + " --analyst 'R. Okafor'").status == 0);
    const json run_doc = json::parse(slurp(out / "route.json"));
    CHECK(run_doc["provenance"]["analyst"] == "R. Okafor");  // as given above
    CHECK(run_doc["provenance"]["analyst_source"] == "--analyst");
    std::string developed;  // a developed finding of OW-P102 (the demo's scenario, tools/synth)
    for (const auto& row : jsonl(out / "summary.jsonl")) {
        const json f = json::parse(slurp(out / row["finding"].get<std::string>()));
        CHECK(f["provenance"]["analyst"] == "R. Okafor");
        if (row["machine"] == "OW-P102" && row["verdict"] == "developed") developed = row["finding"];
    }
    REQUIRE_FALSE(developed.empty());
    const fs::path finding = out / developed;
    const fs::path reviews = out / (developed.substr(0, developed.size() - 5) + ".reviews.json");
    REQUIRE(run("review " + q(finding) + " --override incipient --reason 'valve test that hour' --analyst 'J. Ng'").status == 0);
    const json reviewed = json::parse(slurp(reviews));
    const std::string old_sha = reviewed["finding_sha256"];

    // Again into the same folder, nothing changed: the finding is made again (a new
    // created_utc, so new bytes) and its review follows it, rebound to the new bytes.
    Run r = run(route + " --analyst 'R. Okafor'");
    INFO(r.err);
    REQUIRE(r.status == 0);
    CHECK(r.out.find("reviews kept") != std::string::npos);
    REQUIRE(fs::exists(reviews));
    json carried = json::parse(slurp(reviews));
    CHECK(carried["reviews"] == reviewed["reviews"]);
    const fs::path sums = workdir() / "finding-sum.txt";
    REQUIRE(std::system(("sha256sum " + q(finding) + " > " + q(sums)).c_str()) == 0);  // coreutils, independent
    CHECK(carried["finding_sha256"] == slurp(sums).substr(0, 64));
    REQUIRE(carried["carried_over"].size() == 1);
    CHECK(carried["carried_over"][0]["from_finding_sha256"] == old_sha);

    // OW-P102's baseline learned again from one recording: the review no longer applies.
    // The run stops before the folder is replaced, naming the reviewed finding.
    r = run("baseline --machine OW-P102 --rpm 2960 --vanes 5 --full-scale 50g -o " + q(lib / "OW-P102" / "DE-H.json") +
            " " + q(s.dir / "OW-P102_baseline_1.wav"));
    REQUIRE(r.status == 0);
    const std::string summary_before = slurp(out / "summary.jsonl"), reviews_before = slurp(reviews);
    r = run(route);
    CHECK(r.status == 1);
    CHECK(r.err.find(developed) != std::string::npos);
    CHECK(r.err.find("baseline changed") != std::string::npos);
    CHECK(r.err.find("--discard-reviews") != std::string::npos);
    CHECK(slurp(out / "summary.jsonl") == summary_before);
    CHECK(slurp(reviews) == reviews_before);
    // Asked to, it replaces the folder and says which reviews it dropped.
    r = run(route + " --discard-reviews");
    CHECK(r.status == 0);
    CHECK(r.out.find("reviews dropped") != std::string::npos);
    CHECK(r.out.find(developed) != std::string::npos);
    CHECK_FALSE(fs::exists(reviews));
}

// The order of attention (src/route/attention.hpp): at the same verdict, a point whose
// suction head is near boiling comes before one with a large NPSH margin, whatever the
// manifest's order; the report's banner names the first row of its table. The same
// recording (OW-P101's developed visit) is read as two points, so that nothing but the
// margin differs: at -99.5 kPa gauge the absolute suction pressure (about 1.1 kPa) is
// below water's vapour pressure at 14 C (1.6 kPa, IAPWS-IF97), so NPSHa is the velocity
// and gauge heads alone, under a metre (computed from the definition of NPSHa).
TEST_CASE("route: a point near boiling is looked at before one with a large margin, and the banner is the table's first row",
          "[route]") {
    const Site& s = site();
    fs::create_directories(s.lib / "OW-P101");
    fs::copy_file(s.lib / "OW-P101" / "DE-H.json", s.lib / "OW-P101" / "DE-V.json", fs::copy_options::overwrite_existing);
    const fs::path manifest = s.dir / "margins.csv";
    std::ofstream(manifest) << "file,machine,point,channel,datetime,rpm,vanes,full_scale,suction_pressure\n"
                               "OW-P101_2026-11-02.wav,OW-P101,DE-V,0,2026-11-02T09:05,1485,7,50g,300kPa\n"
                               "OW-P101_2026-11-02.wav,OW-P101,DE-H,0,2026-11-02T09:05,1485,7,50g,-99.5kPa\n";
    const fs::path out = workdir() / "margins-out";
    const Run r = run("route " + q(manifest) + " --baselines " + q(s.lib) + " --no-store --jobs 1 --out " + q(out));
    REQUIRE(r.status == 0);
    const auto rows = jsonl(out / "summary.jsonl");
    REQUIRE(rows.size() == 2);
    for (const auto& row : rows) REQUIRE(row["verdict"] == "developed");
    const json& near_boiling = rows[0]["point"] == "DE-H" ? rows[0] : rows[1];
    const json& large = rows[0]["point"] == "DE-H" ? rows[1] : rows[0];
    CHECK(near_boiling["npsha_m"].get<double>() < 1.0);
    CHECK(large["margin_ratio"].get<double>() > 5.0);
    // The terminal lists DE-H first.
    const auto first = r.out.find("1. OW-P101  DE-H"), second = r.out.find("2. OW-P101  DE-V");
    CHECK(first != std::string::npos);
    CHECK(second != std::string::npos);
    CHECK(first < second);
    // The report's banner and the first row of the table beneath it name the same point.
    const fs::path html = workdir() / "margins.html";
    REQUIRE(run("report " + q(out) + " --html " + q(html)).status == 0);
    const std::string page = slurp(html);
    CHECK(page.find("Look at first: OW-P101 DE-H") != std::string::npos);
    CHECK(page.find("near boiling at the impeller eye") != std::string::npos);
    const auto table = page.find("Each point at its latest visit");
    REQUIRE(table != std::string::npos);
    const auto body = page.find("<tbody>", table);
    const auto row_end = page.find("</tr>", body);
    REQUIRE(body != std::string::npos);
    const std::string first_row = page.substr(body, row_end - body);
    CHECK(first_row.find("DE-H") != std::string::npos);
    CHECK(first_row.find("DE-V") == std::string::npos);
}

// --- maintenance events -------------------------------------------------------------------
namespace {

// A visit of a synthetic point written straight into a store (no recording behind it).
void add_visit(cavitas::app::HistoryStore& h, const std::string& machine, const std::string& date, double hf_db, int n) {
    const auto when = cavitas::app::parse_iso8601(date + "T09:00");
    REQUIRE(when);
    cavitas::app::Measurement m;
    m.sha256 = std::string(62, '0') + (n < 10 ? "0" : "") + std::to_string(n);
    m.machine = machine;
    m.point = "DE-H";
    m.days = when->days;
    m.measured_at = when->text;
    m.file = "visit.wav";
    m.baseline = "b.json";
    m.verdict = hf_db < 3.0 ? "normal" : "incipient";
    m.confidence = 0.9;
    m.hf_rise_db = hf_db;
    m.finding_json = "{}";
    h.upsert(m);
}

}  // namespace

TEST_CASE("event: recorded once, listed, and every mistake named by its option, file or value", "[route][event]") {
    const fs::path store = workdir() / "events.sqlite";
    fs::remove(store);
    {
        cavitas::app::HistoryStore h(store.string());
        add_visit(h, "OW-P101", "2026-11-02", 18.6, 1);
    }
    const std::string st = " --store " + q(store);
    Run r = run("event --help");
    CHECK(r.status == 0);
    CHECK(r.out.find("cavitas event OW-P101 --date 2026-11-04") != std::string::npos);  // an example
    r = run("event OW-P101 --date 2026-11-04 --what 'impeller replaced'" + st);
    INFO(r.out << r.err);
    REQUIRE(r.status == 0);
    CHECK(r.out.find("recorded event #1 of OW-P101 (every point): 2026-11-04 'impeller replaced'") != std::string::npos);
    r = run("event OW-P101 --date 2026-11-04T00:00 --what ' impeller replaced '" + st);  // the same event, spelt otherwise
    CHECK(r.status == 0);
    CHECK(r.out.find("already recorded as event #1") != std::string::npos);
    CHECK(run("event OW-P101 DE-H --date 2026-11-09T08:00 --what 'sensor re-mounted'" + st).status == 0);
    {
        cavitas::app::HistoryStore h(store.string());
        CHECK(h.events("OW-P101").size() == 2);  // two events, not three
    }
    r = run("event OW-P101 --list" + st);
    CHECK(r.status == 0);
    CHECK(r.out.find("#1  2026-11-04 'impeller replaced'  every point  (cavitas event)") != std::string::npos);
    CHECK(r.out.find("#2  2026-11-09 08:00 'sensor re-mounted'  point DE-H") != std::string::npos);
    // A machine the store has never seen is recorded with a note to check the tag.
    r = run("event OW-P10l --date 2026-11-04 --what 'impeller replaced'" + st);
    CHECK(r.status == 0);
    CHECK(r.err.find("holds no measurements of OW-P10l") != std::string::npos);

    // Usage errors (exit 2) name the option and the value.
    r = run("event OW-P101 --date 2026-11-31 --what x" + st);
    CHECK(r.status == 2);
    CHECK(r.err.find("--date '2026-11-31': not an ISO 8601 date") != std::string::npos);
    r = run("event OW-P101 --what x" + st);
    CHECK(r.status == 2);
    CHECK(r.err.find("give --date and --what") != std::string::npos);
    r = run("event OW-P101 --date 2026-11-04 --what '  '" + st);
    CHECK(r.status == 2);
    CHECK(r.err.find("--what is empty") != std::string::npos);
    r = run("event OW-P101 --date 2026-11-04 --what \"$(printf 'two\\nlines')\"" + st);
    CHECK(r.status == 2);
    CHECK(r.err.find("--what holds a control character") != std::string::npos);
    r = run("event OW-P101 --list --date 2026-11-04" + st);
    CHECK(r.status == 2);
    CHECK(r.err.find("--list takes no --date") != std::string::npos);
    r = run("event ../OW-P101 --list" + st);
    CHECK(r.status == 2);
    CHECK(r.err.find("MACHINE '../OW-P101' cannot hold '/'") != std::string::npos);
    r = run("event OW-P101 --date 2026-11-04 --what x");
    CHECK(r.status == 2);
    CHECK(r.err.find("give --store FILE or --baselines DIR") != std::string::npos);
    // Input errors (exit 1) name the file.
    const fs::path missing = workdir() / "no-such-store.sqlite";
    r = run("event OW-P101 --date 2026-11-04 --what x --store " + q(missing));
    CHECK(r.status == 1);
    CHECK(r.err.find(missing.string() + ": no results store here yet") != std::string::npos);
    CHECK_FALSE(fs::exists(missing));  // not created by a mistyped name
    const fs::path future = workdir() / "future-events.sqlite";
    fs::remove(future);
    {
        sqlite3* raw = nullptr;
        REQUIRE(sqlite3_open(future.string().c_str(), &raw) == SQLITE_OK);
        sqlite3_exec(raw, "CREATE TABLE measurements (x); PRAGMA user_version = 4;", nullptr, nullptr, nullptr);
        sqlite3_close(raw);
    }
    r = run("event OW-P101 --date 2026-11-04 --what x --store " + q(future));
    CHECK(r.status == 1);
    CHECK(r.err.find(future.string() + ": results store schema 4 is newer") != std::string::npos);
}

TEST_CASE("trend: a point worsening, repaired, then healthy is judged on the visits since the repair", "[route][event]") {
    // The test's own history: four visits creeping up 0.5 dB each (0.0 .. 1.5 dB over the
    // baseline), the impeller replaced on 2026-04-10, then five healthy visits at a steady
    // 1.9 .. 2.2 dB (the new impeller a little louder than the old baseline, still under
    // the +3 dB alert). --window 9 takes all nine visits, so the event is the only difference.
    const fs::path store = workdir() / "repaired.sqlite";
    fs::remove(store);
    {
        cavitas::app::HistoryStore h(store.string());
        const char* before[] = {"2026-01-05", "2026-02-02", "2026-03-02", "2026-03-30"};
        const double before_db[] = {0.0, 0.5, 1.0, 1.5};
        const char* after[] = {"2026-04-27", "2026-05-25", "2026-06-22", "2026-07-20", "2026-08-17"};
        const double after_db[] = {2.0, 2.2, 1.9, 2.1, 2.0};
        for (int i = 0; i < 4; ++i) add_visit(h, "OW-P301", before[i], before_db[i], i);
        for (int i = 0; i < 5; ++i) add_visit(h, "OW-P301", after[i], after_db[i], 10 + i);
    }
    const fs::path tj = workdir() / "repaired.json";
    const std::string args = "trend OW-P301 --window 9 --store " + q(store) + " --json " + q(tj);
    // Without the event the slope runs through the repair: the step reads as a rise
    // (Mann-Kendall S = 25 of 36 pairs, counted by hand from the values above).
    Run t = run(args);
    REQUIRE(t.status == 0);
    json tr = json::parse(slurp(tj))["points"][0]["trend"];
    CHECK(tr["rising"] == true);
    CHECK(tr["points"] == 9);
    CHECK(tr["since_event"].is_null());

    REQUIRE(run("event OW-P301 --date 2026-04-10 --what 'impeller replaced' --store " + q(store)).status == 0);
    t = run(args);
    INFO(t.out << t.err);
    REQUIRE(t.status == 0);
    const json doc = json::parse(slurp(tj));
    CHECK(doc["schema"] == "cavitas.trend/2");
    const json& p = doc["points"][0];
    tr = p["trend"];
    CHECK(tr["points"] == 5);                // the five visits written after the event
    CHECK(tr["visits_before_event"] == 4);   // the four written before it
    CHECK(tr["rising"] == false);            // S = -1 over the five (by hand): no rise
    CHECK(tr["since_event"]["what"] == "impeller replaced");
    CHECK(p["measurements"].size() == 9);    // the history is still listed whole
    REQUIRE(p["events"].size() == 1);
    CHECK(p["events"][0]["datetime"] == "2026-04-10T00:00:00");
    CHECK(t.out.find("trend: judged on the 5 visits since 2026-04-10 'impeller replaced' (the 4 before it left out): "
                     "no significant rise") != std::string::npos);
    CHECK(t.out.find("--- event #1: impeller replaced (every point of the machine) ---") != std::string::npos);
    // The event listed between the visits it falls between.
    CHECK(t.out.find("2026-03-30") < t.out.find("--- event #1"));
    CHECK(t.out.find("--- event #1") < t.out.find("2026-04-27"));
}

TEST_CASE("route: the manifest's event row is recorded, not analysed and not failed, and splits the change since the previous visit",
          "[route][event]") {
    const Site& s = site();
    // samples/route.csv ends with OW-P101's repair of 2026-11-04 (its event column, no file); route-deh.csv keeps it, at line 9.
    const fs::path store = workdir() / "event-route.sqlite", out = workdir() / "out-event";
    fs::remove(store);
    const Run r = run("route " + q(s.dir / "route-deh.csv") + " --baselines " + q(s.lib) + " --store " + q(store) +
                      " --out " + q(out));
    INFO(r.out << r.err);
    CHECK(r.status == 0);  // nothing failed
    const auto rows = jsonl(out / "summary.jsonl");
    REQUIRE(rows.size() == 7);  // the 7 recordings, no row for the event
    for (const auto& row : rows) CHECK(row["line"] != 9);
    CHECK(r.out.find("events: 1 in the manifest (1 new in the store)") != std::string::npos);
    const json run_json = json::parse(slurp(out / "route.json"));
    REQUIRE(run_json["events"].size() == 1);
    CHECK(run_json["events"][0]["machine"] == "OW-P101");
    CHECK(run_json["events"][0]["point"] == "");
    CHECK(run_json["events"][0]["datetime"] == "2026-11-04T00:00:00");
    CHECK(run_json["events"][0]["what"] == "strainer cleaned, sump level control reset");
    {
        cavitas::app::HistoryStore h(store.string());
        REQUIRE(h.events("OW-P101").size() == 1);
        CHECK(h.events("OW-P101")[0].source.find("route-deh.csv:9") != std::string::npos);
    }
    // The visit of 11-09 (line 5) comes after the repair: its previous visit is named, no HF change across it.
    CHECK(rows[3]["line"] == 5);
    CHECK(rows[3]["previous_verdict"] == "developed");
    CHECK(rows[3]["hf_rise_change_db"].is_null());
    CHECK(rows[3]["event_since_previous"] == "2026-11-04 'strainer cleaned, sump level control reset'");
    CHECK(rows[2]["hf_rise_change_db"].get<double>() > 9.0);  // 10-05 to 11-02: no event between
    CHECK(rows[2]["event_since_previous"] == "");
    // Run again: the event is not added twice.
    const Run again = run("route " + q(s.dir / "route-deh.csv") + " --baselines " + q(s.lib) + " --store " + q(store) +
                          " --out " + q(out));
    CHECK(again.out.find("events: 1 in the manifest (0 new in the store)") != std::string::npos);
}

TEST_CASE("compare --around-event picks the last visit before the event and the first after it", "[route][event]") {
    const Site& s = site();
    const fs::path store = workdir() / "around.sqlite", j = workdir() / "around.json";
    fs::remove(store);
    REQUIRE(run("route " + q(s.dir / "route-deh.csv") + " --baselines " + q(s.lib) + " --store " + q(store) + " --out " +
                q(workdir() / "out-around"))
                .status == 0);
    // samples/route.csv: OW-P101 DE-H was visited on 09-07, 10-05 and 11-02 before the repair of
    // 11-04, and on 11-09 after it. The store holds no other point of OW-P101, so none need be named.
    Run r = run("compare --around-event 2026-11-04 --machine OW-P101 --store " + q(store) + " --json " + q(j));
    INFO(r.out << r.err);
    REQUIRE(r.status == 0);
    json c = json::parse(slurp(j));
    REQUIRE(c["before"].size() == 1);
    REQUIRE(c["after"].size() == 1);
    CHECK(c["before"][0]["path"] == (s.dir / "OW-P101_2026-11-02.wav").string());
    CHECK(c["before"][0]["datetime"] == "2026-11-02T09:05:00");
    CHECK(c["after"][0]["path"] == (s.dir / "OW-P101_2026-11-09.wav").string());
    CHECK(c["event"]["what"] == "strainer cleaned, sump level control reset");
    CHECK(c["event"]["compared_point"] == "DE-H");
    CHECK(c["baseline"]["path"] == (s.lib / "OW-P101" / "DE-H.json").string());  // the one the route judged them against
    CHECK(c["change"] == "improved");  // developed before, normal after (the demo's labels)
    CHECK(r.out.find("compare around event #1 of OW-P101: 2026-11-04 'strainer cleaned, sump level control reset'") !=
          std::string::npos);
    CHECK(r.out.find("before  visit of 2026-11-02T09:05  " + (s.dir / "OW-P101_2026-11-02.wav").string()) !=
          std::string::npos);

    // Two visits a side: 10-05 and 11-02 before; after it there is only 11-09. By the event's number.
    r = run("compare --around-event 1 --visits 2 --point DE-H --store " + q(store) + " --json " + q(j));
    REQUIRE(r.status == 0);
    c = json::parse(slurp(j));
    REQUIRE(c["before"].size() == 2);
    CHECK(c["before"][0]["path"] == (s.dir / "OW-P101_2026-10-05.wav").string());
    CHECK(c["before"][1]["path"] == (s.dir / "OW-P101_2026-11-02.wav").string());
    REQUIRE(c["after"].size() == 1);
    CHECK(c["after"][0]["path"] == (s.dir / "OW-P101_2026-11-09.wav").string());

    // Mistakes: no event that day (its events named), a number that is none, sides given twice.
    r = run("compare --around-event 2026-11-05 --machine OW-P101 --store " + q(store));
    CHECK(r.status == 1);
    CHECK(r.err.find("no event of OW-P101 at 2026-11-05 (its events: #1 2026-11-04") != std::string::npos);
    r = run("compare --around-event 7 --store " + q(store));
    CHECK(r.status == 1);
    CHECK(r.err.find(store.string() + ": no event #7") != std::string::npos);
    r = run("compare --around-event 2026-11-04 --store " + q(store));
    CHECK(r.status == 2);
    CHECK(r.err.find("a date needs --machine") != std::string::npos);
    r = run("compare --around-event 1 --store " + q(store) + " --before " + q(s.dir / "OW-P101_2026-09-07.wav"));
    CHECK(r.status == 2);
    CHECK(r.err.find("give no --before or --after") != std::string::npos);
    CHECK(run("compare --around-event 1").status == 2);  // no store named
}

TEST_CASE("route: a manifest's reference column judges a new machine against a sister's baseline", "[route]") {
    // OW-P109 has no baseline of its own; its rows name OW-P101's (a sister of the same model and
    // duty, invented for the test) and are judged against it, with every difference stated.
    const Site& s = site();
    const fs::path sister = s.lib / "OW-P101" / "DE-H.json";
    std::string text = "file,machine,point,channel,datetime,rpm,vanes,full_scale,reference\n";
    text += "OW-P101_2026-09-07.wav,OW-P109,DE-H,0,2026-11-20T08:00,1485,7,50g," + sister.string() + "\n";
    text += "OW-P101_2026-11-02.wav,OW-P109,DE-H,0,2026-11-21T08:00,1485,7,50g," + sister.string() + "\n";
    text += "OW-P101_2026-11-09.wav,OW-P109,DE-H,0,2026-11-22T08:00,1485,7,50g,\n";  // no reference: no baseline
    text += "OW-P101_2026-11-09.wav,OW-P109,DE-H,0,2026-11-23T08:00,1485,7,50g,lost.json\n";
    const fs::path manifest = s.dir / "sister.csv";
    std::ofstream(manifest) << text;
    const fs::path out = workdir() / "route-sister";
    const Run r = run("route " + q(manifest) + " --baselines " + q(s.lib) + " --out " + q(out) + " --no-store");
    CHECK(r.status == 1);  // two rows fail, each with its reason
    const auto rows = jsonl(out / "summary.jsonl");
    REQUIRE(rows.size() == 4);
    CHECK(rows[0]["verdict"] == "normal");
    CHECK(rows[1]["verdict"] == "developed");  // samples/route.csv labels OW-P101_2026-11-02 developed
    CHECK(rows[2]["verdict"] == "error");
    CHECK(rows[2]["reason"].get<std::string>().find("no baseline for machine OW-P109") != std::string::npos);
    CHECK(rows[3]["verdict"] == "error");
    CHECK(rows[3]["reason"].get<std::string>().find("reference 'lost.json': no such file") != std::string::npos);
    for (int k = 0; k < 2; ++k) {
        const json f = json::parse(slurp(out / rows[k]["finding"].get<std::string>()));
        CHECK(f["reference"]["kind"] == "sister");
        CHECK(f["reference"]["machine"] == "OW-P101");
        CHECK(f["reference"]["mismatches"][0]["field"] == "machine");
        CHECK(f["reference"]["level_floor_db"].get<double>() >= 3.0);
        CHECK(f["confidence_grade"] != "high");
    }
}
