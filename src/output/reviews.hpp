// An analyst's review of a finding, kept beside it and never in it: FINDING's
// reviews live in FINDING.reviews.json (cavitas.reviews/1), which names the
// finding's file and the SHA-256 of its bytes, so that a review can never be
// read against another finding than the one reviewed. The finding's own
// bytes are never changed by a review.
#pragma once

#include <cstddef>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

namespace cavitas::app {

inline constexpr const char* kReviewsSchema = "cavitas.reviews/1";

/// Longest reason, bytes (a paragraph).
inline constexpr std::size_t kReviewReasonMaxBytes = 2000;
/// Most reviews one file holds (far more than a finding ever gets).
inline constexpr std::size_t kMaxReviews = 1000;

struct Review {
    std::string reviewed_utc;
    std::string analyst, analyst_source, host;
    std::string decision;          ///< "agree" or "override"
    std::string verdict;           ///< the verdict the analyst decided on
    std::string original_verdict;  ///< what cavitas said (the finding's verdict)
    std::string reason;            ///< may be empty for "agree"
};

/// A finding made again (a route run again into its folder) from the same
/// recording, channel and baseline with the same verdict: its reviews follow it.
struct CarriedOver {
    std::string carried_utc;
    std::string from_finding_sha256;
    std::string note;
};

struct ReviewsFile {
    std::string finding;         ///< the finding's file name (no folder)
    std::string finding_sha256;  ///< of the finding's bytes when reviewed
    std::vector<Review> reviews;  ///< oldest first
    std::vector<CarriedOver> carried_over;
};

/// "DIR/NAME.json" -> "DIR/NAME.reviews.json"; a name without ".json" gets ".reviews.json" added.
std::string reviews_path_for(const std::string& finding_path);

/// Whether `verdict` is one a review may decide on: normal, incipient, developed, indeterminate.
bool is_review_verdict(const std::string& verdict);

nlohmann::json reviews_to_json(const ReviewsFile& r);
/// Throws InputError naming `origin` and the field that is wrong.
ReviewsFile reviews_from_json(const nlohmann::json& j, const std::string& origin);
/// Reads and checks a reviews file. Throws InputError naming the file.
ReviewsFile read_reviews_file(const std::string& path);

/// InputError naming both files unless the finding's bytes (finding_sha256)
/// are those the reviews were made of.
void require_reviewed_bytes(const ReviewsFile& reviews, const std::string& reviews_path,
                            const std::string& finding_path, const std::string& finding_sha256);

}  // namespace cavitas::app
