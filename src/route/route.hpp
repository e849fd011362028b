// A whole route at once: every recording of a manifest analysed against its
// point's baseline, in parallel, with one summary row per manifest row, the
// full finding of each recording, the change since the previous visit, and
// the history kept in the results store. Shards of a route (--shard K/N) can
// run anywhere and be merged into the same summary.
#pragma once

#include <cstddef>
#include <iosfwd>
#include <optional>
#include <string>
#include <utility>
#include <vector>

#include <nlohmann/json.hpp>

#include "src/io/manifest.hpp"
#include "src/route/store.hpp"

namespace cavitas::app {

inline constexpr const char* kSummarySchema = "cavitas.route-row/1";

/// One row of summary.csv / one line of summary.jsonl.
/// Whether a route row's `finding` is a file of the route folder's findings/
/// ("findings/NAME.json", NAME one plain file name): what a reader of a
/// summary may open or copy, never a path that leaves the folder.
bool is_finding_path(const std::string& path);

/// One action of a row's finding (models/actions.hpp), as the summary keeps it.
struct RowAction {
    std::string topic;       ///< cavitation, suction_margin, other_finding, cannot_judge, recording_quality, baseline
    std::string concern;     ///< the other finding's kind (empty otherwise)
    std::string priority;    ///< urgent, soon, planned, watch
    int priority_rank = 4;   ///< 1 urgent .. 4 watch
    int recheck_days = 0;
    std::string step;
    std::string basis;
};

struct SummaryRow {
    std::size_t line = 0;          ///< manifest line
    std::string file;              ///< as in the manifest
    std::string machine, point;
    int channel = 0;
    std::string datetime;          ///< normalised ISO 8601
    double days = 0.0;
    std::string verdict;           ///< normal, incipient, developed, indeterminate, or error
    std::string reason;            ///< error: what went wrong; indeterminate: why
    double confidence = 0.0;
    std::string confidence_grade;  ///< high / moderate / low (empty: an error row or an older summary)
    std::optional<double> hf_rise_db, hf_kurtosis, impulse_rate_per_s, lf_rise_db, bpf_modulation;
    std::optional<double> npsha_m, margin_ratio;
    std::string agreement;         ///< margin reading, empty without an operating point
    std::string other_findings;    ///< joined with "; "
    std::string note;              ///< the operator's words (sidecar or manifest `note`)
    std::vector<RowAction> actions;  ///< soonest first
    std::optional<double> duration_s;
    std::string sha256;
    std::string baseline;          ///< path of the baseline used
    std::string finding;           ///< the finding JSON, relative to the output folder
    std::string previous_datetime, previous_verdict;
    std::optional<double> hf_rise_change_db;  ///< since the previous visit of the point
    /// The point's maintenance event between the previous visit and this one
    /// (Event::label); the HF change is not given across it (empty: none).
    std::string event_since_previous;
    std::vector<std::pair<std::string, std::string>> extra;  ///< passed-through manifest columns

    bool failed() const { return verdict == "error"; }
    /// The soonest action's rank, 5 when there is none (1 urgent .. 4 watch).
    int soonest_rank() const { return actions.empty() ? 5 : actions.front().priority_rank; }
    nlohmann::json to_json() const;
    /// Throws InputError naming `where` on a line that is not a summary row.
    static SummaryRow from_json(const nlohmann::json& j, const std::string& where);
};

/// A route folder's summary.jsonl as a reader of it (report, export) takes it:
/// the rows, each one's line of text and where it stands (FILE:LINE).
struct RouteSummary {
    std::vector<SummaryRow> rows;
    std::vector<std::string> lines, wheres;
};
/// Limits of a summary a reader takes: 64 MiB in all, 64 KiB a row (a row is a
/// few kB; far above anything route writes, so that an edited file cannot make
/// a reader hold gigabytes).
inline constexpr std::size_t kMaxSummaryBytes = 64u << 20;
inline constexpr std::size_t kMaxSummaryLineBytes = 64u << 10;
/// Reads DIR/summary.jsonl; InputError naming the file and line (not JSON, not
/// a row, a line too long, more than max_rows rows when max_rows > 0: `why_max`
/// says why there is a limit).
RouteSummary read_route_summary(const std::string& dir, std::size_t max_rows = 0, const std::string& why_max = "");

/// The CSV header and one CSV line of a row (extra columns last, in the manifest's order).
std::vector<std::string> summary_columns(const std::vector<std::string>& extra_columns);
std::vector<std::string> summary_cells(const SummaryRow& row);

/// The "actions" array of a finding or a summary row, soonest first (stable
/// within a priority). Throws InputError naming `where` on an entry that is
/// not an action as cavitas writes it.
std::vector<RowAction> actions_from_json(const nlohmann::json& actions, const std::string& where);

struct RouteOptions {
    std::string manifest;
    std::string out_dir;
    std::string baselines;             ///< library: BASELINES/MACHINE/POINT.json
    std::optional<std::string> store;  ///< default BASELINES/history.sqlite
    bool no_store = false;
    int jobs = 0;                      ///< 0: one per core
    std::optional<std::string> shard;  ///< "K/N"
    /// --zones FILE: severity zones for every row's velocity (default
    /// BASELINES/severity_zones.toml when it exists).
    std::optional<std::string> zones;
    std::optional<std::string> analyst;  ///< --analyst: recorded in route.json and every finding
    /// --discard-reviews: replace the folder even where its analyst reviews
    /// cannot follow their findings (src/route/carry_reviews.hpp).
    bool discard_reviews = false;
};

/// Analyse the route. Returns the exit status: 0 every row analysed, 1 when a
/// row failed or a file-level error stopped the route (the summary of what was
/// done is written either way, except on a file-level error).
int run_route(const RouteOptions& options, std::ostream& out, std::ostream& err);

struct MergeOptions {
    std::vector<std::string> shard_dirs;
    std::string out_dir;
    std::optional<std::string> store;
    bool no_store = true;
    std::optional<std::string> analyst;
    bool discard_reviews = false;
};
/// Merge the outputs of route --shard runs of one manifest into one summary,
/// as a run without shards would have written it. Exit status as run_route.
int run_merge(const MergeOptions& options, std::ostream& out, std::ostream& err);

/// "K/N" -> {K, N}; UsageError unless 1 <= K <= N <= 100000.
std::pair<std::size_t, std::size_t> parse_shard(const std::string& text);

/// Fill the previous-visit fields of each analysed row from the other rows and
/// the store's history (the latest earlier measurement of the same machine and
/// point, not the same recording). A maintenance event of the point between
/// the two (from `events` or the store) splits them: the row names it and
/// gives no HF change across it.
void link_previous_visits(std::vector<SummaryRow>& rows, const HistoryStore* store,
                          const std::vector<Event>& events = {});

/// The events a manifest records, as the store keeps them (source "manifest FILE:LINE").
std::vector<Event> manifest_events(const Manifest& manifest);
/// route.json's "events" and back (InputError naming `where` on a malformed list).
nlohmann::json events_to_json(const std::vector<Event>& events);
std::vector<Event> events_from_json(const nlohmann::json& list, const std::string& where);

/// Rows that could be recorded in the store.
Measurement to_measurement(const SummaryRow& row, const std::string& finding_json);

}  // namespace cavitas::app
