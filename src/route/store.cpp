#include "src/route/store.hpp"

#include <sqlite3.h>

#include <unistd.h>

#include <filesystem>

#include "src/io/errors.hpp"

namespace cavitas::app {

namespace {

// Schema steps: step k takes a version-(k-1) file to version k. Never edit a
// step once released; add one.
const char* const kMigrations[] = {
    // 1: the measurements.
    "CREATE TABLE measurements ("
    "  sha256 TEXT NOT NULL, channel INTEGER NOT NULL,"
    "  machine TEXT NOT NULL, point TEXT NOT NULL, measured_at TEXT NOT NULL, days REAL NOT NULL,"
    "  file TEXT NOT NULL, baseline TEXT NOT NULL, verdict TEXT NOT NULL, confidence REAL NOT NULL,"
    "  hf_rise_db REAL, hf_kurtosis REAL, impulse_rate_per_s REAL, lf_rise_db REAL,"
    "  finding_json TEXT NOT NULL, imported_utc TEXT NOT NULL DEFAULT (strftime('%Y-%m-%dT%H:%M:%SZ','now')),"
    "  PRIMARY KEY (sha256, channel));"
    "CREATE INDEX measurements_by_point ON measurements (machine, point, measured_at);",
    // 2: the operating point beside the verdict.
    "ALTER TABLE measurements ADD COLUMN npsha_m REAL;"
    "ALTER TABLE measurements ADD COLUMN margin_ratio REAL;"
    "ALTER TABLE measurements ADD COLUMN agreement TEXT NOT NULL DEFAULT '';",
    // 3: maintenance events (point '' = every point of the machine); the same
    // event recorded twice is one row.
    "CREATE TABLE events ("
    "  id INTEGER PRIMARY KEY, machine TEXT NOT NULL, point TEXT NOT NULL, happened_at TEXT NOT NULL,"
    "  days REAL NOT NULL, what TEXT NOT NULL, source TEXT NOT NULL DEFAULT '',"
    "  recorded_utc TEXT NOT NULL DEFAULT (strftime('%Y-%m-%dT%H:%M:%SZ','now')),"
    "  UNIQUE (machine, point, happened_at, what));"
    "CREATE INDEX events_by_machine ON events (machine, days);",
};
static_assert(sizeof(kMigrations) / sizeof(kMigrations[0]) == HistoryStore::kSchemaVersion);

struct Statement {
    sqlite3_stmt* s = nullptr;
    ~Statement() { sqlite3_finalize(s); }
};

void bind_opt(sqlite3_stmt* s, int i, const std::optional<double>& v) {
    if (v) sqlite3_bind_double(s, i, *v);
    else sqlite3_bind_null(s, i);
}

std::optional<double> column_opt(sqlite3_stmt* s, int i) {
    if (sqlite3_column_type(s, i) == SQLITE_NULL) return std::nullopt;
    return sqlite3_column_double(s, i);
}

std::string column_text(sqlite3_stmt* s, int i) {
    const unsigned char* t = sqlite3_column_text(s, i);
    return t ? reinterpret_cast<const char*>(t) : "";
}

constexpr const char* kEventColumns = "SELECT id, machine, point, happened_at, days, what, source FROM events";

Event event_of(sqlite3_stmt* s) {
    Event e;
    e.id = sqlite3_column_int64(s, 0);
    e.machine = column_text(s, 1);
    e.point = column_text(s, 2);
    e.happened_at = column_text(s, 3);
    e.days = sqlite3_column_double(s, 4);
    e.what = column_text(s, 5);
    e.source = column_text(s, 6);
    return e;
}

}  // namespace

std::string Event::label() const {
    std::string when = happened_at.substr(0, 16);
    if (when.size() > 10) when[10] = ' ';
    if (when.size() == 16 && when.compare(10, 6, " 00:00") == 0) when.resize(10);
    return when + " '" + what + "'";
}

const Event* last_event(const std::vector<Event>& events, const std::string& point, std::optional<double> days) {
    const Event* last = nullptr;
    for (const auto& e : events)
        if (e.applies_to(point) && (!days || e.days <= *days) && (!last || e.days >= last->days)) last = &e;
    return last;
}

HistoryStore::HistoryStore(const std::string& path) : path_(path) {
    std::error_code ec;
    const auto st = std::filesystem::status(path, ec);
    if (!ec && std::filesystem::exists(st) && !std::filesystem::is_regular_file(st))
        throw InputError(path + ": the results store is not a regular file");
    const auto parent = std::filesystem::path(path).parent_path();
    if (!parent.empty() && !std::filesystem::is_directory(parent, ec))
        throw InputError(path + ": cannot create the results store: folder " + parent.string() + " does not exist");
    if (sqlite3_open_v2(path.c_str(), &db_, SQLITE_OPEN_READWRITE | SQLITE_OPEN_CREATE | SQLITE_OPEN_FULLMUTEX, nullptr) !=
        SQLITE_OK) {
        const std::string why = db_ ? sqlite3_errmsg(db_) : "out of memory";
        sqlite3_close(db_);
        db_ = nullptr;
        throw InputError(path + ": cannot open the results store: " + why);
    }
    sqlite3_busy_timeout(db_, 10000);
    int version = 0;
    try {
        version = schema_version();
    } catch (const InputError&) {
        sqlite3_close(db_);
        db_ = nullptr;
        throw;
    }
    if (version > kSchemaVersion) {
        sqlite3_close(db_);
        db_ = nullptr;
        throw InputError(path + ": results store schema " + std::to_string(version) +
                         " is newer than this cavitas reads (" + std::to_string(kSchemaVersion) + "); update cavitas");
    }
    if (version < kSchemaVersion) {
        try {
            exec("BEGIN IMMEDIATE");
            for (int v = version; v < kSchemaVersion; ++v) exec(kMigrations[v]);
            exec("PRAGMA user_version = " + std::to_string(kSchemaVersion));
            exec("COMMIT");
        } catch (const InputError&) {
            sqlite3_exec(db_, "ROLLBACK", nullptr, nullptr, nullptr);
            sqlite3_close(db_);
            db_ = nullptr;
            throw;
        }
    }
}

HistoryStore::~HistoryStore() { sqlite3_close(db_); }

void HistoryStore::exec(const std::string& sql) const {
    char* err = nullptr;
    if (sqlite3_exec(db_, sql.c_str(), nullptr, nullptr, &err) != SQLITE_OK) {
        const int code = sqlite3_errcode(db_) & 0xff;
        if (code == SQLITE_BUSY || code == SQLITE_LOCKED) {
            sqlite3_free(err);
            throw InputError(locked_message());
        }
        const std::string why = err ? err : sqlite3_errmsg(db_);
        sqlite3_free(err);
        throw InputError(path_ + ": results store: " + why);
    }
}

int HistoryStore::schema_version() const {
    Statement st;
    if (sqlite3_prepare_v2(db_, "PRAGMA user_version", -1, &st.s, nullptr) != SQLITE_OK || sqlite3_step(st.s) != SQLITE_ROW) {
        const int code = sqlite3_errcode(db_) & 0xff;
        if (code == SQLITE_BUSY || code == SQLITE_LOCKED) throw InputError(locked_message());
        throw InputError(path_ + ": not a cavitas results store (" + sqlite3_errmsg(db_) + ")");
    }
    const int v = sqlite3_column_int(st.s, 0);
    if (v == 0) {
        // A new file, or some other SQLite database: refuse one that has tables of its own.
        Statement t;
        sqlite3_prepare_v2(db_, "SELECT count(*) FROM sqlite_master", -1, &t.s, nullptr);
        if (sqlite3_step(t.s) == SQLITE_ROW && sqlite3_column_int(t.s, 0) > 0)
            throw InputError(path_ + ": an SQLite database that is not a cavitas results store");
    }
    return v;
}

std::string HistoryStore::locked_message() const {
    return path_ + ": the results store is locked by another program (another cavitas run, or an SQLite tool with it "
                   "open); nothing was changed: run again when that program is done";
}

void HistoryStore::check_writable() const {
    namespace fs = std::filesystem;
    if (sqlite3_db_readonly(db_, "main") == 1)
        throw InputError(path_ + ": the results store is read-only (its permissions); this run could not be added to "
                                 "it: make it writable, name another with --store, or use --no-store");
    fs::path dir = fs::path(path_).parent_path();
    if (dir.empty()) dir = ".";
    if (::access(dir.c_str(), W_OK) != 0)
        throw InputError(path_ + ": the folder " + dir.string() + " is not writable, and SQLite writes its journal "
                                 "beside the results store: make it writable, name another store with --store, or "
                                 "use --no-store");
    // A write lock taken and given back at once: another program holding the
    // store is found now, not after the analysis.
    if (sqlite3_exec(db_, "BEGIN IMMEDIATE", nullptr, nullptr, nullptr) != SQLITE_OK) {
        const int code = sqlite3_errcode(db_) & 0xff;
        if (code == SQLITE_BUSY || code == SQLITE_LOCKED) throw InputError(locked_message());
        throw InputError(path_ + ": cannot write to the results store: " + sqlite3_errmsg(db_));
    }
    sqlite3_exec(db_, "ROLLBACK", nullptr, nullptr, nullptr);
}

void HistoryStore::begin() { exec("BEGIN IMMEDIATE"); }
void HistoryStore::commit() { exec("COMMIT"); }

bool HistoryStore::upsert(const Measurement& m) {
    Statement exists;
    sqlite3_prepare_v2(db_, "SELECT 1 FROM measurements WHERE sha256 = ?1 AND channel = ?2", -1, &exists.s, nullptr);
    sqlite3_bind_text(exists.s, 1, m.sha256.c_str(), -1, SQLITE_TRANSIENT);
    sqlite3_bind_int(exists.s, 2, m.channel);
    const bool known = sqlite3_step(exists.s) == SQLITE_ROW;

    Statement st;
    const char* sql =
        "INSERT INTO measurements (sha256, channel, machine, point, measured_at, days, file, baseline, verdict,"
        " confidence, hf_rise_db, hf_kurtosis, impulse_rate_per_s, lf_rise_db, finding_json, npsha_m, margin_ratio,"
        " agreement) VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11, ?12, ?13, ?14, ?15, ?16, ?17, ?18)"
        " ON CONFLICT (sha256, channel) DO UPDATE SET machine = excluded.machine, point = excluded.point,"
        " measured_at = excluded.measured_at, days = excluded.days, file = excluded.file,"
        " baseline = excluded.baseline, verdict = excluded.verdict, confidence = excluded.confidence,"
        " hf_rise_db = excluded.hf_rise_db, hf_kurtosis = excluded.hf_kurtosis,"
        " impulse_rate_per_s = excluded.impulse_rate_per_s, lf_rise_db = excluded.lf_rise_db,"
        " finding_json = excluded.finding_json, npsha_m = excluded.npsha_m, margin_ratio = excluded.margin_ratio,"
        " agreement = excluded.agreement, imported_utc = strftime('%Y-%m-%dT%H:%M:%SZ','now')";
    if (sqlite3_prepare_v2(db_, sql, -1, &st.s, nullptr) != SQLITE_OK)
        throw InputError(path_ + ": results store: " + sqlite3_errmsg(db_));
    sqlite3_bind_text(st.s, 1, m.sha256.c_str(), -1, SQLITE_TRANSIENT);
    sqlite3_bind_int(st.s, 2, m.channel);
    sqlite3_bind_text(st.s, 3, m.machine.c_str(), -1, SQLITE_TRANSIENT);
    sqlite3_bind_text(st.s, 4, m.point.c_str(), -1, SQLITE_TRANSIENT);
    sqlite3_bind_text(st.s, 5, m.measured_at.c_str(), -1, SQLITE_TRANSIENT);
    sqlite3_bind_double(st.s, 6, m.days);
    sqlite3_bind_text(st.s, 7, m.file.c_str(), -1, SQLITE_TRANSIENT);
    sqlite3_bind_text(st.s, 8, m.baseline.c_str(), -1, SQLITE_TRANSIENT);
    sqlite3_bind_text(st.s, 9, m.verdict.c_str(), -1, SQLITE_TRANSIENT);
    sqlite3_bind_double(st.s, 10, m.confidence);
    bind_opt(st.s, 11, m.hf_rise_db);
    bind_opt(st.s, 12, m.hf_kurtosis);
    bind_opt(st.s, 13, m.impulse_rate_per_s);
    bind_opt(st.s, 14, m.lf_rise_db);
    sqlite3_bind_text(st.s, 15, m.finding_json.c_str(), -1, SQLITE_TRANSIENT);
    bind_opt(st.s, 16, m.npsha_m);
    bind_opt(st.s, 17, m.margin_ratio);
    sqlite3_bind_text(st.s, 18, m.agreement.c_str(), -1, SQLITE_TRANSIENT);
    if (sqlite3_step(st.s) != SQLITE_DONE) throw InputError(path_ + ": results store: " + sqlite3_errmsg(db_));
    return !known;
}

std::vector<Measurement> HistoryStore::history(const std::string& machine, const std::string& point) const {
    Statement st;
    const char* sql =
        "SELECT sha256, channel, machine, point, measured_at, days, file, baseline, verdict, confidence, hf_rise_db,"
        " hf_kurtosis, impulse_rate_per_s, lf_rise_db, npsha_m, margin_ratio, agreement, finding_json"
        " FROM measurements WHERE machine = ?1 AND (?2 = '' OR point = ?2)"
        " ORDER BY point, measured_at, sha256, channel";
    if (sqlite3_prepare_v2(db_, sql, -1, &st.s, nullptr) != SQLITE_OK)
        throw InputError(path_ + ": results store: " + sqlite3_errmsg(db_));
    sqlite3_bind_text(st.s, 1, machine.c_str(), -1, SQLITE_TRANSIENT);
    sqlite3_bind_text(st.s, 2, point.c_str(), -1, SQLITE_TRANSIENT);
    std::vector<Measurement> out;
    int rc;
    while ((rc = sqlite3_step(st.s)) == SQLITE_ROW) {
        Measurement m;
        m.sha256 = column_text(st.s, 0);
        m.channel = sqlite3_column_int(st.s, 1);
        m.machine = column_text(st.s, 2);
        m.point = column_text(st.s, 3);
        m.measured_at = column_text(st.s, 4);
        m.days = sqlite3_column_double(st.s, 5);
        m.file = column_text(st.s, 6);
        m.baseline = column_text(st.s, 7);
        m.verdict = column_text(st.s, 8);
        m.confidence = sqlite3_column_double(st.s, 9);
        m.hf_rise_db = column_opt(st.s, 10);
        m.hf_kurtosis = column_opt(st.s, 11);
        m.impulse_rate_per_s = column_opt(st.s, 12);
        m.lf_rise_db = column_opt(st.s, 13);
        m.npsha_m = column_opt(st.s, 14);
        m.margin_ratio = column_opt(st.s, 15);
        m.agreement = column_text(st.s, 16);
        m.finding_json = column_text(st.s, 17);
        out.push_back(std::move(m));
    }
    if (rc != SQLITE_DONE) throw InputError(path_ + ": results store: " + sqlite3_errmsg(db_));
    return out;
}

std::vector<std::string> HistoryStore::points(const std::string& machine) const {
    Statement st;
    sqlite3_prepare_v2(db_, "SELECT DISTINCT point FROM measurements WHERE machine = ?1 ORDER BY point", -1, &st.s,
                       nullptr);
    sqlite3_bind_text(st.s, 1, machine.c_str(), -1, SQLITE_TRANSIENT);
    std::vector<std::string> out;
    while (sqlite3_step(st.s) == SQLITE_ROW) out.push_back(column_text(st.s, 0));
    return out;
}

std::size_t HistoryStore::count() const {
    Statement st;
    sqlite3_prepare_v2(db_, "SELECT count(*) FROM measurements", -1, &st.s, nullptr);
    return sqlite3_step(st.s) == SQLITE_ROW ? static_cast<std::size_t>(sqlite3_column_int64(st.s, 0)) : 0;
}

bool HistoryStore::add_event(const Event& e, std::int64_t* id) {
    Statement st;
    const char* sql =
        "INSERT INTO events (machine, point, happened_at, days, what, source) VALUES (?1, ?2, ?3, ?4, ?5, ?6)"
        " ON CONFLICT (machine, point, happened_at, what) DO NOTHING";
    if (sqlite3_prepare_v2(db_, sql, -1, &st.s, nullptr) != SQLITE_OK)
        throw InputError(path_ + ": results store: " + sqlite3_errmsg(db_));
    sqlite3_bind_text(st.s, 1, e.machine.c_str(), -1, SQLITE_TRANSIENT);
    sqlite3_bind_text(st.s, 2, e.point.c_str(), -1, SQLITE_TRANSIENT);
    sqlite3_bind_text(st.s, 3, e.happened_at.c_str(), -1, SQLITE_TRANSIENT);
    sqlite3_bind_double(st.s, 4, e.days);
    sqlite3_bind_text(st.s, 5, e.what.c_str(), -1, SQLITE_TRANSIENT);
    sqlite3_bind_text(st.s, 6, e.source.c_str(), -1, SQLITE_TRANSIENT);
    if (sqlite3_step(st.s) != SQLITE_DONE) {
        const int code = sqlite3_errcode(db_) & 0xff;
        if (code == SQLITE_BUSY || code == SQLITE_LOCKED) throw InputError(locked_message());
        throw InputError(path_ + ": results store: " + sqlite3_errmsg(db_));
    }
    const bool added = sqlite3_changes(db_) > 0;
    if (id) {
        Statement q;
        sqlite3_prepare_v2(db_, "SELECT id FROM events WHERE machine = ?1 AND point = ?2 AND happened_at = ?3 AND what = ?4",
                           -1, &q.s, nullptr);
        sqlite3_bind_text(q.s, 1, e.machine.c_str(), -1, SQLITE_TRANSIENT);
        sqlite3_bind_text(q.s, 2, e.point.c_str(), -1, SQLITE_TRANSIENT);
        sqlite3_bind_text(q.s, 3, e.happened_at.c_str(), -1, SQLITE_TRANSIENT);
        sqlite3_bind_text(q.s, 4, e.what.c_str(), -1, SQLITE_TRANSIENT);
        *id = sqlite3_step(q.s) == SQLITE_ROW ? sqlite3_column_int64(q.s, 0) : 0;
    }
    return added;
}

std::vector<Event> HistoryStore::events(const std::string& machine, const std::string& point) const {
    Statement st;
    const std::string sql = std::string(kEventColumns) +
                            " WHERE machine = ?1 AND (?2 = '' OR point = '' OR point = ?2) ORDER BY days, id";
    if (sqlite3_prepare_v2(db_, sql.c_str(), -1, &st.s, nullptr) != SQLITE_OK)
        throw InputError(path_ + ": results store: " + sqlite3_errmsg(db_));
    sqlite3_bind_text(st.s, 1, machine.c_str(), -1, SQLITE_TRANSIENT);
    sqlite3_bind_text(st.s, 2, point.c_str(), -1, SQLITE_TRANSIENT);
    std::vector<Event> out;
    int rc;
    while ((rc = sqlite3_step(st.s)) == SQLITE_ROW) out.push_back(event_of(st.s));
    if (rc != SQLITE_DONE) throw InputError(path_ + ": results store: " + sqlite3_errmsg(db_));
    return out;
}

std::optional<Event> HistoryStore::event(std::int64_t id) const {
    Statement st;
    const std::string sql = std::string(kEventColumns) + " WHERE id = ?1";
    if (sqlite3_prepare_v2(db_, sql.c_str(), -1, &st.s, nullptr) != SQLITE_OK)
        throw InputError(path_ + ": results store: " + sqlite3_errmsg(db_));
    sqlite3_bind_int64(st.s, 1, id);
    if (sqlite3_step(st.s) != SQLITE_ROW) return std::nullopt;
    return event_of(st.s);
}

}  // namespace cavitas::app
