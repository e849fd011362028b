// libFuzzer target: arbitrary bytes as a route manifest (CSV) and as a line of
// a route summary (JSON Lines, read back by 'merge').
//
// The manifest reader's only way to refuse a whole file is InputError; a bad
// row must come back with its reason, never as an exception. A summary line is
// refused with InputError or read; a row that is read must survive writing and
// reading again unchanged.
#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <string>

#include <nlohmann/json.hpp>

#include "src/io/errors.hpp"
#include "src/io/manifest.hpp"
#include "src/route/route.hpp"

namespace {

[[noreturn]] void bug(const char* what, const std::string& detail) {
    std::fprintf(stderr, "\nfuzz_manifest: BUG: %s: %s\n", what, detail.c_str());
    std::fflush(stderr);
    std::abort();
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    const std::string text(reinterpret_cast<const char*>(data), size);
    try {
        const auto m = cavitas::app::parse_manifest(text, "fuzz/route.csv");
        for (const auto& r : m.rows) {
            if (r.error.empty() && (r.machine.empty() || r.point.empty() || r.file.empty()))
                bug("a row without machine, point or file was accepted", std::to_string(r.line));
            if (r.error.empty() && r.when.text.size() < 19) bug("an accepted row has no normalised time", r.datetime);
        }
        for (const auto& e : m.events)
            if (e.machine.empty() || e.what.empty() || e.when.text.size() < 19)
                bug("an event without machine, words or time was accepted", std::to_string(e.line));
    } catch (const cavitas::app::InputError&) {
    }
    const nlohmann::json j = nlohmann::json::parse(text, nullptr, false);
    if (!j.is_discarded()) {
        try {
            const auto row = cavitas::app::SummaryRow::from_json(j, "fuzz/summary.jsonl:1");
            const auto again = cavitas::app::SummaryRow::from_json(row.to_json(), "fuzz/again");
            if (again.to_json() != row.to_json()) bug("a summary row changed on a round trip", row.to_json().dump());
        } catch (const cavitas::app::InputError&) {
        }
    }
    return 0;
}
