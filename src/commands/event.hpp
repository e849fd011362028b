// Maintenance events: a repair or change of a machine recorded in the results
// store, so that a point's trend is judged from it on and a comparison can be
// made around it.
#pragma once

#include <iosfwd>
#include <optional>
#include <string>

namespace cavitas::app {

struct EventOptions {
    std::string machine;
    std::string point;                     ///< empty: every point of the machine
    std::optional<std::string> date;       ///< ISO 8601 date or date-time
    std::optional<std::string> what;       ///< "impeller replaced"
    bool list = false;                     ///< list the machine's events instead of recording one
    std::optional<std::string> store;
    std::optional<std::string> baselines;  ///< store default: BASELINES/history.sqlite
};

/// Records the event (the same one twice adds nothing) or lists the machine's
/// events; a line each on `out`, notes on `err`.
void run_event(const EventOptions& options, std::ostream& out, std::ostream& err);

}  // namespace cavitas::app
