// The pieces of a route: CSV, ISO 8601 times, manifests and the results store.
#include <catch2/catch.hpp>

#include <sqlite3.h>
#include <unistd.h>

#include <filesystem>
#include <fstream>

#include "src/io/csv.hpp"
#include "src/io/datetime.hpp"
#include "src/io/errors.hpp"
#include "src/io/manifest.hpp"
#include "src/route/store.hpp"

using namespace cavitas::app;
using Catch::Matchers::Contains;
using Catch::Matchers::WithinAbs;
namespace fs = std::filesystem;

namespace {

fs::path scratch_dir() {
    static const fs::path d = [] {
        const fs::path p = fs::temp_directory_path() / ("cavitas-route-parts-" + std::to_string(::getpid()));
        fs::create_directories(p);
        return p;
    }();
    return d;
}

fs::path write(const std::string& name, const std::string& text) {
    const fs::path p = scratch_dir() / name;
    std::ofstream(p, std::ios::binary) << text;
    return p;
}

}  // namespace

TEST_CASE("CSV as RFC 4180 writes it", "[src][route]") {
    // RFC 4180 section 2: quoted fields hold commas, doubled quotes and line breaks; CRLF ends records.
    const auto r = parse_csv("\xEF\xBB\xBF" "a,b,c\r\n\"x, y\",\"say \"\"hi\"\"\",\"two\nlines\"\r\n\r\nlast,,\n", "t.csv");
    REQUIRE(r.size() == 3);
    CHECK(r[0].fields == std::vector<std::string>{"a", "b", "c"});
    CHECK(r[1].fields == std::vector<std::string>{"x, y", "say \"hi\"", "two\nlines"});
    CHECK(r[2].line == 5);  // the quoted line break moved the line count on
    CHECK(r[2].fields == std::vector<std::string>{"last", "", ""});
    CHECK_THROWS_WITH(parse_csv("a,b\n\"open,c\n", "q.csv"), Contains("q.csv:2") && Contains("never closed"));
    // Writing and reading again gives the same fields.
    const std::vector<std::string> tricky{"plain", "with,comma", "with \"quote\"", " padded ", "line\nbreak", ""};
    CHECK(parse_csv(csv_line(tricky), "w.csv").front().fields == tricky);
}

TEST_CASE("CSV cells a spreadsheet would run are written as text, numbers stay numbers", "[src][route]") {
    // OWASP CSV injection (methods review A9, [S]): prefix ', double embedded quotes, quote the field.
    CHECK(csv_field("=1+2\";=1+2") == "\"'=1+2\"\";=1+2\"");
    CHECK(csv_field("=1+2'\" ;,=1+2") == "\"'=1+2'\"\" ;,=1+2\"");
    CHECK(csv_field("@SUM(1+1)") == "'@SUM(1+1)");
    CHECK(csv_field("+HYPERLINK(x)") == "'+HYPERLINK(x)");
    CHECK(csv_field("-cmd") == "'-cmd");
    CHECK(csv_field("\tx") == "'\tx");
    CHECK(csv_field("-inf") == "'-inf");
    // Numbers as cavitas writes them are left alone.
    for (const char* n : {"-3.2", "+0.5", "-12", "1e-05", "-2.5E+3", "0"}) CHECK(csv_field(n) == n);
}

TEST_CASE("ISO 8601 dates and times", "[src][route]") {
    // Days since 1970-01-01: 2026-11-02 is day 20759 (Python's datetime:
    // (date(2026, 11, 2) - date(1970, 1, 1)).days).
    const auto d = parse_iso8601("2026-11-02");
    REQUIRE(d);
    CHECK(d->text == "2026-11-02T00:00:00");
    CHECK(d->days == 20759.0);
    CHECK_THAT(parse_iso8601("2026-11-02T18:00")->days, WithinAbs(20759.75, 1e-12));
    CHECK(parse_iso8601("2026-11-02T09:05")->text == "2026-11-02T09:05:00");
    CHECK(parse_iso8601("2026-11-02 09:05:30")->text == "2026-11-02T09:05:30");
    CHECK(parse_iso8601("2026-11-02T09:05:30.25Z")->text == "2026-11-02T09:05:30Z");
    // A zone is converted to UTC: 00:30 at +01:00 is 23:30 the day before.
    CHECK(parse_iso8601("2026-11-02T00:30:00+01:00")->text == "2026-11-01T23:30:00Z");
    CHECK(parse_iso8601("2028-02-29")->text == "2028-02-29T00:00:00");  // a leap year
    for (const char* bad : {"2026-02-29", "2026-13-01", "2026-11-02T25:00", "02/11/2026", "yesterday", "2026-11-02T09",
                            "2026-11-02X09:05", ""})
        CHECK_FALSE(parse_iso8601(bad));
}

TEST_CASE("A route manifest: required columns in any order, bad rows kept with their line", "[src][route]") {
    const auto p = write("m.csv",
                         "Machine,point,file,datetime,channel,rpm,vanes,flow,crew,suction_pressure\n"
                         "OW-P101,DE-H,a.wav,2026-11-02T09:05,0,1485,7,420 m3/h,blue,-70 kPa\n"
                         "OW-P101,DE-H,b.wav,2026-13-02,0,1485,7,,blue,\n"
                         "OW-P102,DE-H,c.wav,2026-11-02,x,,,,green,\n"
                         "../etc,DE-H,d.wav,2026-11-02,0,,,,red,\n"
                         "OW-P103,DE-H,e.wav,2026-11-02,0,1485\n");
    const Manifest m = read_manifest(p.string());
    REQUIRE(m.rows.size() == 5);
    CHECK(m.extra_columns == std::vector<std::string>{"crew"});
    const auto& r0 = m.rows[0];
    CHECK(r0.error.empty());
    CHECK(r0.line == 2);
    CHECK(r0.machine == "OW-P101");
    CHECK(r0.path == (scratch_dir() / "a.wav").string());
    CHECK(*r0.rpm == 1485.0);
    CHECK(*r0.vanes == 7);
    CHECK(r0.operating.size() == 2);
    CHECK(r0.extra.front() == std::make_pair(std::string("crew"), std::string("blue")));
    CHECK_THAT(m.rows[1].error, Contains("datetime"));
    CHECK(m.rows[1].line == 3);
    CHECK_THAT(m.rows[2].error, Contains("channel 'x'"));
    CHECK_FALSE(m.rows[2].rpm);  // empty cell: not stated
    CHECK_THAT(m.rows[3].error, Contains("cannot hold '/'"));  // a tag must not reach outside the library
    CHECK_THAT(m.rows[4].error, Contains("cells"));
    CHECK_FALSE(m.sha256.empty());
    CHECK_THROWS_WITH(read_manifest(write("n.csv", "file,machine,point\na,b,c\n").string()),
                      Contains("n.csv:1") && Contains("channel, datetime, rpm, vanes"));
    CHECK_THROWS_WITH(read_manifest(write("d.csv", "file,file,machine,point,channel,datetime,rpm,vanes\n").string()),
                      Contains("named twice"));
    CHECK_THROWS_WITH(read_manifest(write("e.csv", "").string()), Contains("empty manifest"));
    CHECK(unusable_as_file_name("a/b"));
    CHECK(unusable_as_file_name(".."));
    CHECK_FALSE(unusable_as_file_name("Pump 1 (old)"));
}

namespace {

Measurement measurement(const std::string& sha, const std::string& when, double days, double hf) {
    Measurement m;
    m.sha256 = sha;
    m.machine = "OW-P101";
    m.point = "DE-H";
    m.measured_at = when;
    m.days = days;
    m.file = sha + ".wav";
    m.baseline = "b.json";
    m.verdict = "normal";
    m.confidence = 0.9;
    m.hf_rise_db = hf;
    m.finding_json = "{}";
    return m;
}

}  // namespace

TEST_CASE("The results store: created on first use, no duplicates, migrated, foreign files refused", "[src][route]") {
    const fs::path db = scratch_dir() / "h.sqlite";
    fs::remove(db);
    {
        HistoryStore s(db.string());
        CHECK(s.schema_version() == HistoryStore::kSchemaVersion);
        CHECK(s.upsert(measurement("aa", "2026-09-07T08:40:00", 20338, 0.1)));
        CHECK(s.upsert(measurement("bb", "2026-10-05T08:55:00", 20366, 0.4)));
        Measurement again = measurement("aa", "2026-09-07T08:40:00", 20338, 0.2);
        CHECK_FALSE(s.upsert(again));  // the same recording: updated, not added
        CHECK(s.count() == 2);
        const auto h = s.history("OW-P101", "DE-H");
        REQUIRE(h.size() == 2);
        CHECK(h[0].sha256 == "aa");
        CHECK(*h[0].hf_rise_db == 0.2);
        CHECK(s.points("OW-P101") == std::vector<std::string>{"DE-H"});
    }
    {
        HistoryStore s(db.string());  // reopened: the rows are there
        CHECK(s.count() == 2);
    }
    // A version-1 file (as the first release wrote it) is migrated with its rows kept.
    const fs::path v1 = scratch_dir() / "v1.sqlite";
    fs::remove(v1);
    {
        sqlite3* raw = nullptr;
        REQUIRE(sqlite3_open(v1.string().c_str(), &raw) == SQLITE_OK);
        const char* sql =
            "CREATE TABLE measurements (sha256 TEXT NOT NULL, channel INTEGER NOT NULL, machine TEXT NOT NULL,"
            " point TEXT NOT NULL, measured_at TEXT NOT NULL, days REAL NOT NULL, file TEXT NOT NULL,"
            " baseline TEXT NOT NULL, verdict TEXT NOT NULL, confidence REAL NOT NULL, hf_rise_db REAL,"
            " hf_kurtosis REAL, impulse_rate_per_s REAL, lf_rise_db REAL, finding_json TEXT NOT NULL,"
            " imported_utc TEXT NOT NULL DEFAULT 'x', PRIMARY KEY (sha256, channel));"
            "INSERT INTO measurements (sha256, channel, machine, point, measured_at, days, file, baseline, verdict,"
            " confidence, hf_rise_db, finding_json) VALUES ('old', 0, 'OW-P101', 'DE-H', '2026-08-03T09:10:00', 20303,"
            " 'o.wav', 'b.json', 'normal', 0.9, 0.0, '{}');"
            "PRAGMA user_version = 1;";
        REQUIRE(sqlite3_exec(raw, sql, nullptr, nullptr, nullptr) == SQLITE_OK);
        sqlite3_close(raw);
    }
    {
        HistoryStore s(v1.string());
        CHECK(s.schema_version() == HistoryStore::kSchemaVersion);  // through every step
        const auto h = s.history("OW-P101");
        REQUIRE(h.size() == 1);
        CHECK(h[0].sha256 == "old");
        CHECK_FALSE(h[0].margin_ratio);
        Measurement m = measurement("new", "2026-09-07T08:40:00", 20338, 0.1);
        m.margin_ratio = 2.7;
        m.agreement = "consistent";
        CHECK(s.upsert(m));
        CHECK(*s.history("OW-P101").back().margin_ratio == 2.7);
    }
    // Someone else's database, a newer schema, a text file: refused with the file named.
    const fs::path other = scratch_dir() / "other.sqlite";
    fs::remove(other);
    {
        sqlite3* raw = nullptr;
        REQUIRE(sqlite3_open(other.string().c_str(), &raw) == SQLITE_OK);
        sqlite3_exec(raw, "CREATE TABLE invoices (id INTEGER);", nullptr, nullptr, nullptr);
        sqlite3_close(raw);
    }
    CHECK_THROWS_WITH(HistoryStore(other.string()), Contains("other.sqlite") && Contains("not a cavitas results store"));
    const fs::path future = scratch_dir() / "future.sqlite";
    fs::remove(future);
    {
        sqlite3* raw = nullptr;
        REQUIRE(sqlite3_open(future.string().c_str(), &raw) == SQLITE_OK);
        sqlite3_exec(raw, "CREATE TABLE measurements (x); PRAGMA user_version = 99;", nullptr, nullptr, nullptr);
        sqlite3_close(raw);
    }
    CHECK_THROWS_WITH(HistoryStore(future.string()), Contains("newer"));
    CHECK_THROWS_WITH(HistoryStore(write("text.sqlite", "not a database at all, just some words\n").string()),
                      Contains("text.sqlite"));
    CHECK_THROWS_WITH(HistoryStore((scratch_dir() / "no-such-folder" / "h.sqlite").string()), Contains("does not exist"));
}

TEST_CASE("The results store: a schema-2 file gains the events table with its rows kept, the same event is one row", "[src][route]") {
    // A version-2 file as the release before events wrote it: migrations 1 and 2 of store.cpp, one visit.
    const fs::path v2 = scratch_dir() / "v2.sqlite";
    fs::remove(v2);
    {
        sqlite3* raw = nullptr;
        REQUIRE(sqlite3_open(v2.string().c_str(), &raw) == SQLITE_OK);
        const char* sql =
            "CREATE TABLE measurements (sha256 TEXT NOT NULL, channel INTEGER NOT NULL, machine TEXT NOT NULL,"
            " point TEXT NOT NULL, measured_at TEXT NOT NULL, days REAL NOT NULL, file TEXT NOT NULL,"
            " baseline TEXT NOT NULL, verdict TEXT NOT NULL, confidence REAL NOT NULL, hf_rise_db REAL,"
            " hf_kurtosis REAL, impulse_rate_per_s REAL, lf_rise_db REAL, finding_json TEXT NOT NULL,"
            " imported_utc TEXT NOT NULL DEFAULT 'x', PRIMARY KEY (sha256, channel));"
            "CREATE INDEX measurements_by_point ON measurements (machine, point, measured_at);"
            "ALTER TABLE measurements ADD COLUMN npsha_m REAL;"
            "ALTER TABLE measurements ADD COLUMN margin_ratio REAL;"
            "ALTER TABLE measurements ADD COLUMN agreement TEXT NOT NULL DEFAULT '';"
            "INSERT INTO measurements (sha256, channel, machine, point, measured_at, days, file, baseline, verdict,"
            " confidence, hf_rise_db, finding_json, npsha_m, margin_ratio, agreement) VALUES ('v2row', 0, 'OW-P101',"
            " 'DE-H', '2026-11-02T09:05:00', 20759.378, 'd.wav', 'b.json', 'developed', 0.9, 18.6, '{}', 3.5, 1.07,"
            " 'consistent');"
            "PRAGMA user_version = 2;";
        REQUIRE(sqlite3_exec(raw, sql, nullptr, nullptr, nullptr) == SQLITE_OK);
        sqlite3_close(raw);
    }
    {
        HistoryStore s(v2.string());
        CHECK(s.schema_version() == 3);
        const auto h = s.history("OW-P101", "DE-H");
        REQUIRE(h.size() == 1);  // the row as written above, every column kept
        CHECK(h[0].sha256 == "v2row");
        CHECK(h[0].verdict == "developed");
        CHECK(*h[0].margin_ratio == 1.07);
        CHECK(h[0].agreement == "consistent");
        CHECK(s.events("OW-P101").empty());
        // 2026-11-04 is day 20761 since 1970-01-01 (days_from_civil, H. Hinnant's algorithm; also `date -d`).
        const auto when = parse_iso8601("2026-11-04");
        REQUIRE(when);
        CHECK_THAT(when->days, WithinAbs(20761.0, 1e-9));
        Event e{0, "OW-P101", "", when->text, when->days, "impeller replaced", "test"};
        std::int64_t id = 0, again_id = 0;
        CHECK(s.add_event(e, &id));
        CHECK(id == 1);  // the first row of a new table
        CHECK_FALSE(s.add_event(e, &again_id));  // the same event: no second row
        CHECK(again_id == id);
        Event other = e;
        other.point = "NDE-T";
        other.what = "sensor re-mounted";
        CHECK(s.add_event(other));
        CHECK(s.events("OW-P101").size() == 2);
        CHECK(s.events("OW-P101", "DE-H").size() == 1);  // the machine's event, not NDE-T's
        CHECK(s.events("OW-P101", "NDE-T").size() == 2);
        CHECK(s.event(id)->what == "impeller replaced");
        CHECK_FALSE(s.event(99));
        CHECK(e.label() == "2026-11-04 'impeller replaced'");
    }
    {
        sqlite3* raw = nullptr;
        REQUIRE(sqlite3_open(v2.string().c_str(), &raw) == SQLITE_OK);
        sqlite3_stmt* st = nullptr;
        sqlite3_prepare_v2(raw, "PRAGMA user_version", -1, &st, nullptr);
        REQUIRE(sqlite3_step(st) == SQLITE_ROW);
        CHECK(sqlite3_column_int(st, 0) == 3);  // written back in the migration's transaction
        sqlite3_finalize(st);
        sqlite3_close(raw);
    }
    // A file of the next schema is refused, naming it.
    const fs::path v4 = scratch_dir() / "v4.sqlite";
    fs::remove(v4);
    {
        sqlite3* raw = nullptr;
        REQUIRE(sqlite3_open(v4.string().c_str(), &raw) == SQLITE_OK);
        sqlite3_exec(raw, "CREATE TABLE measurements (x); PRAGMA user_version = 4;", nullptr, nullptr, nullptr);
        sqlite3_close(raw);
    }
    CHECK_THROWS_WITH(HistoryStore(v4.string()), Contains("v4.sqlite") && Contains("schema 4 is newer"));
}

TEST_CASE("The last event of a point: its own or the machine's, at or before a time", "[src][route]") {
    const std::vector<Event> events = {{1, "M", "", "2026-03-01T00:00:00", 100.0, "pump overhauled", ""},
                                       {2, "M", "NDE", "2026-04-01T00:00:00", 131.0, "bearing changed", ""},
                                       {3, "M", "", "2026-05-01T14:30:00", 161.6, "impeller replaced", ""}};
    CHECK(last_event(events, "DE")->id == 3);
    CHECK(last_event(events, "DE", 140.0)->id == 1);   // NDE's event is not DE's
    CHECK(last_event(events, "NDE", 140.0)->id == 2);
    CHECK(last_event(events, "DE", 100.0)->id == 1);   // at the event's time counts as after it
    CHECK(last_event(events, "DE", 99.0) == nullptr);
    CHECK(events[2].label() == "2026-05-01 14:30 'impeller replaced'");
}

TEST_CASE("A route manifest's event column: an event-only row is recorded, not analysed", "[src][route]") {
    const auto p = write("ev.csv",
                         "file,machine,point,channel,datetime,rpm,vanes,event\n"
                         "a.wav,OW-P101,DE-H,0,2026-11-02T09:05,1485,7,\n"
                         ",OW-P101,,,2026-11-04,,,\"impeller replaced, strainer cleaned\"\n"
                         "b.wav,OW-P101,DE-H,0,2026-11-09T10:15,1485,7,sensor re-mounted\n"
                         ",OW-P101,DE-H,,2026-11-31,,,seal replaced\n"
                         ",OW-P102,,,2026-11-05,,,\n");
    const Manifest m = read_manifest(p.string());
    CHECK(m.extra_columns.empty());  // event is a column cavitas reads, not one passed through
    // Rows 2 and 4 are recordings; 5 an event whose date does not exist; 6 neither a file nor an event.
    REQUIRE(m.rows.size() == 4);
    CHECK(m.rows[0].line == 2);
    CHECK(m.rows[1].line == 4);
    CHECK(m.rows[1].index == 1);  // the event-only row takes no share of a route's shards
    CHECK(m.rows[1].event == "sensor re-mounted");
    CHECK(m.rows[2].line == 5);
    CHECK_THAT(m.rows[2].error, Contains("datetime '2026-11-31'"));
    CHECK(m.rows[3].line == 6);
    CHECK_THAT(m.rows[3].error, Contains("the file cell is empty"));
    REQUIRE(m.events.size() == 2);
    CHECK(m.events[0].line == 3);
    CHECK(m.events[0].machine == "OW-P101");
    CHECK(m.events[0].point.empty());  // every point of the machine
    CHECK(m.events[0].when.text == "2026-11-04T00:00:00");
    CHECK(m.events[0].what == "impeller replaced, strainer cleaned");
    CHECK(m.events[1].line == 4);
    CHECK(m.events[1].point == "DE-H");  // a recording's row: its point, at its time
    CHECK(m.events[1].when.text == "2026-11-09T10:15:00");
}
