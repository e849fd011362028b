// A route (or merge) run again into its output folder replaces the folder
// whole (StagedFolder). Analyst reviews kept there (findings/NAME.reviews.json,
// src/output/reviews.hpp) are never lost silently: a review follows its
// finding when the new run made that finding again from the same recording
// (SHA-256), channel and baseline (SHA-256) with the same verdict, and is
// rewritten against the new finding's bytes with a note saying so. Any other
// review stops the run before the folder is replaced, naming each reviewed
// finding and why, unless the run was told to discard them.
#pragma once

#include <iosfwd>
#include <string>
#include <vector>

namespace cavitas::app {

struct ReviewCarry {
    std::vector<std::string> carried;    ///< findings/NAME.reviews.json, following the finding made again
    std::vector<std::string> discarded;  ///< "findings/NAME.json: why", dropped as asked (discard)
};

/// Run after the new findings are written into `staged_dir` and before the
/// swap: reads the reviews of the old folder `out_dir` (none when it does not
/// exist), writes those that may follow into staged_dir/findings/. Throws
/// InputError naming out_dir and every reviewed finding that cannot follow,
/// unless `discard`.
ReviewCarry carry_reviews(const std::string& out_dir, const std::string& staged_dir, bool discard);

/// A line per carried or discarded review (nothing when there were none).
void print_review_carry(std::ostream& out, const ReviewCarry& carry, const std::string& out_dir);

}  // namespace cavitas::app
