#include "src/output/reviews.hpp"

#include <set>

#include "src/io/errors.hpp"
#include "src/io/text_file.hpp"

namespace cavitas::app {

using nlohmann::json;

namespace {

constexpr std::size_t kMaxReviewsFileBytes = 16u << 20;
constexpr std::size_t kMaxFieldBytes = 4 * kReviewReasonMaxBytes;  // any text field of an entry

std::string text_field(const json& j, const char* key, const std::string& origin, const std::string& where,
                       bool required = true) {
    const auto it = j.find(key);
    if (it == j.end() || it->is_null()) {
        if (!required) return {};
        throw InputError(origin + ": field '" + where + key + "' is missing");
    }
    if (!it->is_string()) throw InputError(origin + ": field '" + where + key + "' is not text");
    const std::string s = it->get<std::string>();
    if (s.size() > kMaxFieldBytes)
        throw InputError(origin + ": field '" + where + key + "' is " + std::to_string(s.size()) + " bytes (at most " +
                         std::to_string(kMaxFieldBytes) + ")");
    return s;
}

const json& list_field(const json& j, const char* key, const std::string& origin) {
    static const json empty = json::array();
    const auto it = j.find(key);
    if (it == j.end() || it->is_null()) return empty;
    if (!it->is_array() || it->size() > kMaxReviews)
        throw InputError(origin + ": field '" + key + "' is not a list of at most " + std::to_string(kMaxReviews) +
                         " entries");
    return *it;
}

Review review_from_json(const json& e, const std::string& origin, const std::string& where) {
    if (!e.is_object()) throw InputError(origin + ": field '" + where + "' is not an object");
    const std::string w = where + ".";
    Review r;
    r.reviewed_utc = text_field(e, "reviewed_utc", origin, w);
    r.analyst = text_field(e, "analyst", origin, w);
    r.analyst_source = text_field(e, "analyst_source", origin, w, false);
    r.host = text_field(e, "host", origin, w, false);
    r.decision = text_field(e, "decision", origin, w);
    if (r.decision != "agree" && r.decision != "override")
        throw InputError(origin + ": field '" + w + "decision' is '" + r.decision + "', not agree or override");
    r.verdict = text_field(e, "verdict", origin, w);
    r.original_verdict = text_field(e, "original_verdict", origin, w);
    for (const auto* v : {&r.verdict, &r.original_verdict})
        if (!is_review_verdict(*v))
            throw InputError(origin + ": field '" + w + (v == &r.verdict ? "verdict" : "original_verdict") + "' is '" +
                             *v + "', not normal, incipient, developed or indeterminate");
    r.reason = text_field(e, "reason", origin, w, false);
    return r;
}

}  // namespace

std::string reviews_path_for(const std::string& finding_path) {
    const std::string ext = ".json";
    if (finding_path.size() > ext.size() && finding_path.compare(finding_path.size() - ext.size(), ext.size(), ext) == 0)
        return finding_path.substr(0, finding_path.size() - ext.size()) + ".reviews.json";
    return finding_path + ".reviews.json";
}

bool is_review_verdict(const std::string& verdict) {
    static const std::set<std::string> verdicts{"normal", "incipient", "developed", "indeterminate"};
    return verdicts.count(verdict) == 1;
}

json reviews_to_json(const ReviewsFile& r) {
    json list = json::array();
    for (const auto& v : r.reviews)
        list.push_back({{"reviewed_utc", v.reviewed_utc},
                        {"analyst", v.analyst},
                        {"analyst_source", v.analyst_source},
                        {"host", v.host},
                        {"decision", v.decision},
                        {"verdict", v.verdict},
                        {"original_verdict", v.original_verdict},
                        {"reason", v.reason}});
    json carried = json::array();
    for (const auto& c : r.carried_over)
        carried.push_back({{"carried_utc", c.carried_utc}, {"from_finding_sha256", c.from_finding_sha256}, {"note", c.note}});
    return {{"schema", kReviewsSchema},
            {"finding", r.finding},
            {"finding_sha256", r.finding_sha256},
            {"reviews", list},
            {"carried_over", carried}};
}

ReviewsFile reviews_from_json(const json& j, const std::string& origin) {
    if (!j.is_object() || !j.contains("schema") || j["schema"] != kReviewsSchema)
        throw InputError(origin + ": not a reviews file (schema '" + std::string(kReviewsSchema) + "' expected)");
    ReviewsFile r;
    r.finding = text_field(j, "finding", origin, "");
    r.finding_sha256 = text_field(j, "finding_sha256", origin, "");
    if (r.finding_sha256.size() != 64 || r.finding_sha256.find_first_not_of("0123456789abcdef") != std::string::npos)
        throw InputError(origin + ": field 'finding_sha256' is not 64 lowercase hex digits");
    const json& list = list_field(j, "reviews", origin);
    for (std::size_t k = 0; k < list.size(); ++k)
        r.reviews.push_back(review_from_json(list[k], origin, "reviews[" + std::to_string(k) + "]"));
    const json& carried = list_field(j, "carried_over", origin);
    for (std::size_t k = 0; k < carried.size(); ++k) {
        const std::string w = "carried_over[" + std::to_string(k) + "].";
        if (!carried[k].is_object()) throw InputError(origin + ": field '" + w + "' is not an object");
        r.carried_over.push_back({text_field(carried[k], "carried_utc", origin, w),
                                  text_field(carried[k], "from_finding_sha256", origin, w),
                                  text_field(carried[k], "note", origin, w, false)});
    }
    return r;
}

ReviewsFile read_reviews_file(const std::string& path) {
    const json j = json::parse(read_text_file(path, "reviews file", kMaxReviewsFileBytes), nullptr, false);
    if (j.is_discarded()) throw InputError(path + ": reviews file is not valid JSON (corrupt or truncated)");
    return reviews_from_json(j, path);
}

void require_reviewed_bytes(const ReviewsFile& reviews, const std::string& reviews_path,
                            const std::string& finding_path, const std::string& finding_sha256) {
    if (reviews.finding_sha256 == finding_sha256) return;
    throw InputError(finding_path + ": its bytes no longer match the SHA-256 recorded in " + reviews_path + " (" +
                     reviews.finding_sha256.substr(0, 12) + "... recorded, " + finding_sha256.substr(0, 12) +
                     "... now): the finding was changed or replaced after it was reviewed; restore the reviewed "
                     "finding, or keep the new one under another name and review that");
}

}  // namespace cavitas::app
