// The results store: every analysed recording, keyed by machine, point and
// time, in an SQLite database (a real embedded database: one file, safe
// against a crash mid-write, readable by any SQLite tool). Created on first
// use; its schema is versioned (PRAGMA user_version) and migrated forward in
// a transaction when an older file is opened. A recording is identified by
// the SHA-256 of its file and its channel: importing it again updates its row
// instead of adding one.
#pragma once

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

class HistoryStore {
public:
    /// The schema this cavitas writes. 1: measurements; 2: + npsha_m,
    /// margin_ratio, agreement (the operating point).
    static constexpr int kSchemaVersion = 2;

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

private:
    void exec(const std::string& sql) const;
    std::string locked_message() const;
    std::string path_;
    sqlite3* db_ = nullptr;
};

}  // namespace cavitas::app
