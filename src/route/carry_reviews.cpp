#include "src/route/carry_reviews.hpp"

#include <filesystem>
#include <optional>
#include <ostream>

#include <nlohmann/json.hpp>

#include "src/io/atomic_file.hpp"
#include "src/io/datetime.hpp"
#include "src/io/errors.hpp"
#include "src/io/text_file.hpp"
#include "src/output/plain_text.hpp"
#include "src/output/reviews.hpp"

namespace cavitas::app {

namespace fs = std::filesystem;
using nlohmann::json;

namespace {

constexpr const char* kReviewsSuffix = ".reviews.json";
constexpr const char* kCarriedNote =
    "made again by a later run into the same folder from the same recording (SHA-256), channel and baseline "
    "(SHA-256), with the same verdict; the reviews follow it";

struct ReadFinding {
    std::string sha256;
    json doc;
};

std::optional<ReadFinding> read_finding(const fs::path& p) {
    std::error_code ec;
    if (!fs::is_regular_file(p, ec)) return std::nullopt;
    ReadFinding f;
    f.doc = json::parse(read_text_file(p.string(), "finding file", 64u << 20, &f.sha256), nullptr, false);
    if (f.doc.is_discarded() || !f.doc.is_object()) return std::nullopt;
    return f;
}

json member(const json& j, const char* a, const char* b) {
    if (!j.is_object() || !j.contains(a) || !j[a].is_object() || !j[a].contains(b)) return nullptr;
    return j[a][b];
}

// Why the reviews of `name` cannot follow the new finding; empty when they can.
std::string why_not_carried(const std::string& name, const ReviewsFile& reviews, const std::optional<ReadFinding>& old,
                            const std::optional<ReadFinding>& made) {
    if (!old) return "its reviewed finding is missing or unreadable";
    if (old->sha256 != reviews.finding_sha256) return "the finding was changed after it was reviewed";
    if (!made) return "this run made no finding " + name + " (the manifest row changed or failed)";
    if (member(old->doc, "input", "sha256") != member(made->doc, "input", "sha256")) return "the recording is another";
    if (member(old->doc, "input", "channel") != member(made->doc, "input", "channel")) return "the channel is another";
    const json old_base = member(old->doc, "provenance", "baseline_sha256");
    if (old_base.is_null()) return "the reviewed finding does not record its baseline's SHA-256";
    if (old_base != member(made->doc, "provenance", "baseline_sha256")) return "the baseline changed";
    if (old->doc.value("verdict", "") != made->doc.value("verdict", ""))
        return "the verdict is now " + made->doc.value("verdict", std::string("?")) + ", was " +
               old->doc.value("verdict", std::string("?"));
    return {};
}

}  // namespace

ReviewCarry carry_reviews(const std::string& out_dir, const std::string& staged_dir, bool discard) {
    ReviewCarry carry;
    std::vector<std::string> blocked;
    const fs::path old_dir = fs::path(out_dir) / "findings", new_dir = fs::path(staged_dir) / "findings";
    std::error_code ec;
    if (!fs::is_directory(old_dir, ec)) return carry;
    const std::string suffix = kReviewsSuffix;
    for (auto it = fs::directory_iterator(old_dir, ec); !ec && it != fs::directory_iterator(); it.increment(ec)) {
        const std::string file = it->path().filename().string();
        if (file.size() <= suffix.size() || file.compare(file.size() - suffix.size(), suffix.size(), suffix) != 0) continue;
        const std::string name = file.substr(0, file.size() - suffix.size()) + ".json";
        std::string why;
        try {
            ReviewsFile reviews = read_reviews_file(it->path().string());
            const auto old = read_finding(old_dir / name);
            const auto made = read_finding(new_dir / name);
            why = why_not_carried(name, reviews, old, made);
            if (why.empty()) {
                reviews.carried_over.push_back({utc_now(), reviews.finding_sha256, kCarriedNote});
                reviews.finding_sha256 = made->sha256;
                write_file_atomically((new_dir / file).string(), json_text(reviews_to_json(reviews), 2) + "\n");
                carry.carried.push_back("findings/" + file);
                continue;
            }
        } catch (const InputError& e) {
            why = e.what();
        }
        blocked.push_back("findings/" + name + ": " + why);
    }
    if (blocked.empty()) return carry;
    if (discard) {
        carry.discarded = blocked;
        return carry;
    }
    std::string list;
    for (const auto& b : blocked) list += (list.empty() ? "" : "; ") + b;
    throw InputError(out_dir + ": holds analyst reviews this run cannot carry over, and replacing the folder would lose "
                     "them (" + list + "); nothing was replaced. Write this run to another folder (--out), or give "
                     "--discard-reviews to replace the folder and drop those reviews");
}

void print_review_carry(std::ostream& out, const ReviewCarry& carry, const std::string& out_dir) {
    for (const auto& c : carry.carried)
        out << "reviews kept: " << (fs::path(out_dir) / c).string()
            << " (the finding was made again from the same recording, channel and baseline, with the same verdict)\n";
    for (const auto& d : carry.discarded) out << "reviews dropped (--discard-reviews): " << d << "\n";
}

}  // namespace cavitas::app
