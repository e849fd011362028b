// cavitas export: a route's current state as work requests for a maintenance
// system: one request per action of each machine point's (and channel's)
// latest visit, in the route's order of attention (src/route/attention), as
// CSV or JSON. The layout is our own, documented in `export --help`,
// README.md and src/schemas/work-requests.schema.json.
#pragma once

#include <iosfwd>
#include <string>
#include <vector>

namespace cavitas::app {

inline constexpr const char* kWorkRequestsSchema = "cavitas.work-requests/1";

struct ExportOptions {
    std::string route_dir;      ///< a route's output folder (route --out DIR)
    std::string work_requests;  ///< OUT.csv or OUT.json: the format is told by the extension
};

/// The columns of the CSV, in order; the keys of each JSON request alike.
const std::vector<std::string>& work_request_columns();

/// Reads the route folder, writes the work requests whole (atomically) and
/// says on `out` how many. UsageError naming --work-requests for a name that
/// does not end in .csv or .json; InputError naming the file, field and value
/// for a folder that is not a route, a finding the summary names that is
/// missing, or a finding whose actions cannot be read.
void run_export(const ExportOptions& options, std::ostream& out);

}  // namespace cavitas::app
