// Who ran a command, for the audit trail of findings, routes and reviews: the
// analyst's name (given with --analyst, else the login name the environment
// states) and the host it ran on.
#pragma once

#include <optional>
#include <string>

namespace cavitas::app {

struct Analyst {
    std::string name;    ///< "R. Okafor", or the login name
    std::string source;  ///< where the name came from: "--analyst", "USER", "LOGNAME", "account" or "unknown"
    std::string host;    ///< gethostname(), "unknown" when it fails
};

/// Longest analyst name, bytes: a line of a report's fields.
inline constexpr std::size_t kAnalystMaxBytes = 200;

/// `given` (--analyst) when set, else $USER, else $LOGNAME, else the account's
/// name (getpwuid of the effective user), else "unknown"; the
/// host from gethostname. UsageError naming --analyst when the given name is
/// empty, longer than kAnalystMaxBytes or holds a control character.
Analyst identify_analyst(const std::optional<std::string>& given);

}  // namespace cavitas::app
