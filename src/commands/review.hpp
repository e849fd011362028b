// Looking back: the history of a measurement point (trend) and a before/after
// comparison of a repair or an operating change (compare).
#pragma once

#include <iosfwd>
#include <optional>
#include <string>
#include <vector>

#include "src/commands/commands.hpp"

namespace cavitas::app {

/// The results store a command reads: --store, else BASELINES/history.sqlite;
/// UsageError naming `command` when neither is given.
std::string store_path_of(const std::optional<std::string>& store, const std::optional<std::string>& baselines,
                          const char* command);

struct TrendOptions {
    std::string machine;
    std::string point;                  ///< empty: every point of the machine
    std::optional<std::string> store;
    std::optional<std::string> baselines;  ///< store default: BASELINES/history.sqlite
    std::optional<std::string> json_output;
    std::optional<std::string> csv_output;
    std::size_t window = 6;
};
void run_trend(const TrendOptions& options, std::ostream& out);

struct CompareOptions {
    std::string baseline;
    std::vector<std::string> before;
    std::vector<std::string> after;
    std::string machine;
    std::optional<double> rpm;
    std::optional<int> vanes;
    int channel = 0;
    std::optional<std::string> json_output;
    /// --around-event ID|DATE: the sides come from the results store instead of
    /// --before/--after: the point's last `visits` before the event and its
    /// first `visits` at or after it (the baseline: --baseline, else theirs).
    std::optional<std::string> around_event;
    std::optional<std::string> store;
    std::optional<std::string> baselines;  ///< store default: BASELINES/history.sqlite
    std::string point;                     ///< default: the event's, or the machine's only point
    std::size_t visits = 1;
};
/// Exit status 0 whatever the change (it is a finding, not an error).
void run_compare(const CompareOptions& options, std::ostream& out, std::ostream& err);

}  // namespace cavitas::app
