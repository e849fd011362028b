// cavitas review: an analyst agrees with a finding or overrides its verdict,
// with a reason; the review is kept beside the finding (FINDING.reviews.json,
// src/output/reviews.hpp), never in it.
#pragma once

#include <iosfwd>
#include <optional>
#include <string>

namespace cavitas::app {

struct AnalystReviewOptions {
    std::string finding;                  ///< FINDING.json (analyze --json, or a route's findings/NAME.json)
    bool agree = false;
    std::optional<std::string> override_verdict;  ///< normal, incipient, developed or indeterminate
    std::optional<std::string> reason;
    std::optional<std::string> analyst;   ///< default: the login name
};

/// Appends one review to FINDING.reviews.json (made on the first review),
/// rewritten whole and atomically. UsageError naming the option for a bad
/// command line; InputError naming both files when the finding's bytes are no
/// longer those reviewed before.
void run_analyst_review(const AnalystReviewOptions& options, std::ostream& out);

}  // namespace cavitas::app
