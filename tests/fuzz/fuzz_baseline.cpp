// libFuzzer target: arbitrary bytes as a baseline file.
//
// Bytes that parse as JSON go to baseline_from_json, whose only documented way
// to refuse a document is InputError: a nlohmann::json exception escaping it
// (a type error not turned into a message) is a bug, like any other exception
// or a sanitizer report. An accepted baseline must survive a round trip:
// baseline_to_json, then dump, parse and read again, giving the same document.
//
// With FUZZ_BASELINE_MUST_ACCEPT=FILE in the environment (run.sh sets it to the
// committed valid seed) the target first checks that FILE is still accepted:
// a seed refused after a schema change would keep the fuzzer out of everything
// past the first refusal without anyone noticing.
#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <exception>
#include <fstream>
#include <iterator>
#include <string>
#include <typeinfo>

#include <nlohmann/json.hpp>

#include "models/baseline.hpp"
#include "src/io/baseline_io.hpp"
#include "src/io/errors.hpp"

namespace {

using nlohmann::json;

[[noreturn]] void bug(const char* what, const std::string& detail) {
    std::fprintf(stderr, "\nfuzz_baseline: BUG: %s: %s\n", what, detail.c_str());
    std::fflush(stderr);
    std::abort();
}

void round_trip(const cavitas::models::Baseline& b) {
    const json first = cavitas::app::baseline_to_json(b);
    const std::string text = first.dump(2);
    const json parsed = json::parse(text, nullptr, false);
    if (parsed.is_discarded()) bug("baseline_to_json wrote text that does not parse", text.substr(0, 200));
    cavitas::models::Baseline again;
    try {
        again = cavitas::app::baseline_from_json(parsed, "fuzz-roundtrip");
    } catch (const cavitas::app::InputError& e) {
        bug("a baseline that was read is refused after writing it", e.what());
    }
    const json second = cavitas::app::baseline_to_json(again);
    if (second != first) bug("round trip changed the baseline", first.dump() + "\n  became\n" + second.dump());
}

}  // namespace

extern "C" int LLVMFuzzerInitialize(int*, char***) {
    const char* must_accept = std::getenv("FUZZ_BASELINE_MUST_ACCEPT");
    if (!must_accept || !*must_accept) return 0;
    std::ifstream in(must_accept, std::ios::binary);
    const std::string text{std::istreambuf_iterator<char>(in), std::istreambuf_iterator<char>()};
    const json j = json::parse(text, nullptr, false);
    try {
        if (!in || j.is_discarded()) throw cavitas::app::InputError(std::string(must_accept) + ": unreadable or not JSON");
        (void)cavitas::app::baseline_from_json(j, must_accept);
    } catch (const std::exception& e) {
        std::fprintf(stderr,
                     "fuzz_baseline: the valid seed is refused, so fuzzing would stay shallow: %s\n"
                     "  (the baseline format changed? regenerate the corpus with tests/fuzz/make_corpus.sh)\n",
                     e.what());
        std::exit(1);
    }
    return 0;
}

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    const json j = json::parse(data, data + size, nullptr, false);
    if (j.is_discarded()) return 0;
    cavitas::models::Baseline b;
    try {
        b = cavitas::app::baseline_from_json(j, "fuzz");
    } catch (const cavitas::app::InputError&) {
        return 0;  // refused with a message: expected
    } catch (const json::exception& e) {
        bug("nlohmann::json exception escaped baseline_from_json (should be an InputError)",
            std::string(typeid(e).name()) + ": " + e.what());
    } catch (const std::exception& e) {
        bug("unexpected exception from baseline_from_json", std::string(typeid(e).name()) + ": " + e.what());
    }
    try {
        round_trip(b);
    } catch (const std::exception& e) {
        bug("exception in the write/read round trip", std::string(typeid(e).name()) + ": " + e.what());
    }
    return 0;
}
