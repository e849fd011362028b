// cavitas review: the analyst's decision on a finding, appended to the
// finding's reviews file; the finding's bytes are read and hashed, never written.
#include "src/commands/analyst_review.hpp"

#include <algorithm>
#include <filesystem>
#include <ostream>

#include <nlohmann/json.hpp>

#include "src/io/analyst.hpp"
#include "src/io/atomic_file.hpp"
#include "src/io/datetime.hpp"
#include "src/io/errors.hpp"
#include "src/io/output_guard.hpp"
#include "src/io/text_file.hpp"
#include "src/output/plain_text.hpp"
#include "src/output/reviews.hpp"

namespace cavitas::app {

namespace fs = std::filesystem;
using nlohmann::json;

namespace {

// A finding is at most as large as a report reads (src/report/reports.cpp).
constexpr std::size_t kMaxFindingBytes = 8u << 20;

bool has_control(const std::string& s) {
    return std::any_of(s.begin(), s.end(), [](char c) {
        const auto u = static_cast<unsigned char>(c);
        return u < 0x20 || u == 0x7f;
    });
}

// The decision and its reason, checked before any file is read.
void check_options(const AnalystReviewOptions& o) {
    if (o.agree == o.override_verdict.has_value())
        throw UsageError("review: give either --agree or --override VERDICT (one of them)");
    if (o.override_verdict && !is_review_verdict(*o.override_verdict))
        throw UsageError("--override '" + *o.override_verdict + "': use normal, incipient, developed or indeterminate");
    const bool blank = !o.reason || o.reason->find_first_not_of(" \t") == std::string::npos;
    if (o.override_verdict && blank)
        throw UsageError("--override needs --reason \"...\": say why the verdict is overridden (what you saw or know)");
    if (o.reason && o.reason->size() > kReviewReasonMaxBytes)
        throw UsageError("--reason: " + std::to_string(o.reason->size()) + " characters; a reason takes at most " +
                         std::to_string(kReviewReasonMaxBytes));
    if (o.reason && has_control(*o.reason)) throw UsageError("--reason: holds a control character (a line break?)");
}

// The finding's verdict, from its JSON; InputError naming the file when it is not a finding.
std::string finding_verdict(const std::string& text, const std::string& path) {
    const json j = json::parse(text, nullptr, false);
    if (j.is_discarded()) throw InputError(path + ": not valid JSON");
    const auto schema = j.is_object() ? j.find("schema") : j.end();
    if (!j.is_object() || schema == j.end() || !schema->is_string() ||
        schema->get<std::string>().rfind("cavitas.finding/", 0) != 0)
        throw InputError(path + ": not a cavitas finding (analyze --json, or a route's findings/NAME.json)");
    const auto v = j.find("verdict");
    if (v == j.end() || !v->is_string() || !is_review_verdict(v->get<std::string>()))
        throw InputError(path + ": field 'verdict' is missing or not normal, incipient, developed or indeterminate");
    return v->get<std::string>();
}

Review make_review(const AnalystReviewOptions& o, const Analyst& who, const std::string& original) {
    Review r;
    r.reviewed_utc = utc_now();
    r.analyst = who.name;
    r.analyst_source = who.source;
    r.host = who.host;
    r.decision = o.agree ? "agree" : "override";
    r.verdict = o.agree ? original : *o.override_verdict;
    r.original_verdict = original;
    r.reason = o.reason.value_or("");
    return r;
}

void print_review(std::ostream& out, const ReviewsFile& file, const std::string& path, const std::string& sha) {
    const Review& r = file.reviews.back();
    out << "review " << file.reviews.size() << " of " << file.finding << " recorded in " << path << "\n"
        << "  cavitas said   " << r.original_verdict << "\n"
        << "  analyst        " << r.analyst << " (" << r.host << "), " << r.reviewed_utc << "\n"
        << "  decision       " << (r.decision == "agree" ? "agree: " : "override: ") << r.verdict << "\n";
    if (!r.reason.empty()) out << "  reason         " << r.reason << "\n";
    out << "the finding itself is unchanged (SHA-256 " << sha.substr(0, 16) << "...)\n";
}

}  // namespace

void run_analyst_review(const AnalystReviewOptions& o, std::ostream& out) {
    check_options(o);
    const Analyst who = identify_analyst(o.analyst);
    const std::string reviews_path = reviews_path_for(o.finding);
    {
        OutputGuard guard;
        guard.input(o.finding, "finding");
        guard.output(reviews_path);
    }
    std::string sha;
    const std::string text = read_text_file(o.finding, "finding file", kMaxFindingBytes, &sha);
    const std::string original = finding_verdict(text, o.finding);
    if (o.override_verdict && *o.override_verdict == original)
        throw UsageError("--override " + original + ": the finding already says " + original + "; use --agree");
    ReviewsFile file;
    std::error_code ec;
    if (fs::exists(fs::symlink_status(reviews_path, ec))) {
        file = read_reviews_file(reviews_path);
        require_reviewed_bytes(file, reviews_path, o.finding, sha);
    } else {
        file.finding = fs::path(o.finding).filename().string();
        file.finding_sha256 = sha;
    }
    if (file.reviews.size() >= kMaxReviews)
        throw InputError(reviews_path + ": holds " + std::to_string(file.reviews.size()) + " reviews, the most one file keeps");
    file.reviews.push_back(make_review(o, who, original));
    write_file_atomically(reviews_path, json_text(reviews_to_json(file), 2) + "\n");
    print_review(out, file, reviews_path, sha);
}

}  // namespace cavitas::app
