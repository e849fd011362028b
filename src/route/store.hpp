// The results store: every analysed recording, keyed by machine, point and
// time, in an SQLite database (a real embedded database: one file, safe
// against a crash mid-write, readable by any SQLite tool). Created on first
// use; its schema is versioned (PRAGMA user_version) and migrated forward in
// a transaction when an older file is opened. A recording is identified by
// the SHA-256 of its file and its channel: importing it again updates its row
// instead of adding one. Beside the recordings, the maintenance events of a
// machine (a repair, a changed part): a point's trend is judged from its last
// event on, and a comparison can be made around one.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

struct sqlite3;

namespace cavitas::app {

/// One analysed recording as the store keeps it (a summary of the finding;
/// the whole finding JSON is kept too).
struct Measurement {
    std::string sha256;
    int channel = 0;
    std::string machine;
    std::string point;
    std::string measured_at;   ///< normalised ISO 8601 (see datetime.hpp)
    double days = 0.0;         ///< days since 1970-01-01
    std::string file;
    std::string baseline;      ///< path of the baseline used
    std::string verdict;       ///< normal, incipient, developed, indeterminate
    double confidence = 0.0;
    std::optional<double> hf_rise_db;
    std::optional<double> hf_kurtosis;
    std::optional<double> impulse_rate_per_s;
    std::optional<double> lf_rise_db;
    std::optional<double> npsha_m;
    std::optional<double> margin_ratio;
    std::string agreement;     ///< margin reading (empty when no operating point)
    std::string finding_json;
};

/// A repair or change of a machine (or of one point of it), as the store keeps it.
struct Event {
    std::int64_t id = 0;       ///< the store's number for it (0 before it is stored)
    std::string machine;
    std::string point;         ///< empty: every point of the machine
    std::string happened_at;   ///< normalised ISO 8601 (see datetime.hpp)
    double days = 0.0;         ///< days since 1970-01-01
    std::string what;          ///< "impeller replaced", as the person wrote it
    std::string source;        ///< where it was recorded: "cavitas event", "manifest FILE:LINE"

    /// Whether the event concerns `point` (its own, or one of the whole machine).
    bool applies_to(const std::string& point_name) const { return point.empty() || point == point_name; }
    /// "2026-11-04 'impeller replaced'" (the time too when it is not midnight).
    std::string label() const;
};

/// The latest of `events` that applies to `point` and happened at or before
/// `days` (every event when `days` is nullopt); nullptr when none does.
const Event* last_event(const std::vector<Event>& events, const std::string& point,
                        std::optional<double> days = std::nullopt);

class HistoryStore {
public:
    /// The schema this cavitas writes. 1: measurements; 2: + npsha_m,
    /// margin_ratio, agreement (the operating point); 3: + events.
    static constexpr int kSchemaVersion = 3;

    /// Opens (creating when absent) and migrates. Throws InputError naming the
    /// file: not an SQLite database, a schema newer than this cavitas, locked.
    explicit HistoryStore(const std::string& path);
    ~HistoryStore();
    HistoryStore(const HistoryStore&) = delete;
    HistoryStore& operator=(const HistoryStore&) = delete;

    int schema_version() const;

    /// Insert, or replace the row of the same (sha256, channel). Returns true
    /// when the row is new. Several calls in one transaction: begin()/commit().
    bool upsert(const Measurement& m);
    void begin();
    void commit();
    /// Throws InputError with the reason when this run could not write to the
    /// store: read-only, its folder not writable (the journal), locked by
    /// another program. Called before an analysis that ends in a write.
    void check_writable() const;

    /// Every measurement of a machine (and point), oldest first within each point.
    std::vector<Measurement> history(const std::string& machine, const std::string& point = "") const;
    /// Points stored for a machine.
    std::vector<std::string> points(const std::string& machine) const;
    std::size_t count() const;

    /// Record a maintenance event. The same machine, point, time and words
    /// again add no row: returns false then (and `id` of the row there).
    bool add_event(const Event& e, std::int64_t* id = nullptr);
    /// The events of a machine, oldest first: all of them when `point` is
    /// empty, else those of that point and those of the whole machine.
    std::vector<Event> events(const std::string& machine, const std::string& point = "") const;
    /// The event numbered `id`, of any machine.
    std::optional<Event> event(std::int64_t id) const;

private:
    void exec(const std::string& sql) const;
    std::string locked_message() const;
    std::string path_;
    sqlite3* db_ = nullptr;
};

}  // namespace cavitas::app
