// The audit trail: who ran an analysis (the finding's "provenance") and the
// analyst's review kept beside a finding (cavitas review), through the real
// binary on the demo recordings (samples/).
#include <catch2/catch.hpp>

#include <unistd.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <string>

#include <nlohmann/json.hpp>

#include "tests/support/cli.hpp"

namespace fs = std::filesystem;
using cavitas::test::q;
using cavitas::test::Run;
using cavitas::test::slurp;
using nlohmann::json;

namespace {

fs::path workdir() {
    static const fs::path d = cavitas::test::scratch_dir("review-test");
    return d;
}

Run run(const std::string& args) { return cavitas::test::run_binary(CAVITAS_BIN, args, workdir()); }

// The first line a shell command prints (coreutils, an implementation independent of cavitas).
std::string shell_line(const std::string& command) { return cavitas::test::shell_first_line(command, workdir()); }

std::string sha256sum(const fs::path& p) { return shell_line("sha256sum " + q(p)).substr(0, 64); }

// OW-P101's baseline from its two known-good demo recordings (samples/baselines.csv).
const fs::path& baseline() {
    static const fs::path b = [] {
        const fs::path p = workdir() / "OW-P101.json";
        const std::string s = CAVITAS_SAMPLES;
        const Run r = run("baseline --machine OW-P101 --rpm 1485 --vanes 7 --full-scale 50g -o " + q(p) + " " +
                          q(s + "/OW-P101_baseline_1.wav") + " " + q(s + "/OW-P101_baseline_2.wav"));
        REQUIRE(r.status == 0);
        return p;
    }();
    return b;
}

// A fresh finding of the demo's developed visit (OW-P101, 2026-11-02: developed in the demo's
// scenario, tools/synth), analysed by "R. Okafor".
fs::path make_finding(const std::string& name) {
    const fs::path f = workdir() / name;
    const Run r = run("analyze --analyst 'R. Okafor' --baseline " + q(baseline()) + " --json " + q(f) + " " +
                      q(std::string(CAVITAS_SAMPLES) + "/OW-P101_2026-11-02.wav"));
    REQUIRE(r.status == 0);
    return f;
}

fs::path reviews_of(const fs::path& finding) {
    return finding.parent_path() / (finding.stem().string() + ".reviews.json");
}

}  // namespace

TEST_CASE("analyze records who ran it, on which host, with which cavitas and the baseline's SHA-256", "[cli][audit]") {
    const fs::path f = make_finding("provenance.json");
    const json j = json::parse(slurp(f));
    REQUIRE(j.contains("provenance"));
    const json& p = j["provenance"];
    CHECK(p["analyst"] == "R. Okafor");        // given with --analyst above
    CHECK(p["analyst_source"] == "--analyst");
    CHECK(p["host"] == shell_line("uname -n"));  // POSIX uname: the node name gethostname reports
    // The baseline's bytes hashed by coreutils' sha256sum, an independent implementation.
    CHECK(p["baseline_sha256"] == sha256sum(baseline()));
    CHECK(p["baseline_path"] == baseline().string());
    // Its creation date as the baseline file states it.
    CHECK(p["baseline_created_utc"] == json::parse(slurp(baseline()))["created_utc"]);
    // The version 'cavitas --version' prints ("cavitas X.Y.Z").
    CHECK("cavitas " + p["cavitas_version"].get<std::string>() == shell_line(q(CAVITAS_BIN) + " --version"));
    // The keys that were there keep their meaning.
    CHECK(j["cavitas_version"] == p["cavitas_version"]);
    CHECK(j["baseline"]["created_utc"] == p["baseline_created_utc"]);
}

TEST_CASE("analyze without --analyst takes the login name from the environment, a blank --analyst is refused", "[cli][audit]") {
    const char* saved = std::getenv("USER");
    const std::string old = saved ? saved : "";
    ::setenv("USER", "field-tech-7", 1);
    const fs::path f = workdir() / "from-env.json";
    Run r = run("analyze --baseline " + q(baseline()) + " --json " + q(f) + " " +
                q(std::string(CAVITAS_SAMPLES) + "/OW-P101_2026-09-07.wav"));
    if (saved) ::setenv("USER", old.c_str(), 1);
    else ::unsetenv("USER");
    REQUIRE(r.status == 0);
    const json p = json::parse(slurp(f))["provenance"];
    CHECK(p["analyst"] == "field-tech-7");  // the USER set above
    CHECK(p["analyst_source"] == "USER");

    const fs::path never = workdir() / "never.json";
    r = run("analyze --analyst '' --baseline " + q(baseline()) + " --json " + q(never) + " " +
            q(std::string(CAVITAS_SAMPLES) + "/OW-P101_2026-09-07.wav"));
    CHECK(r.status == 2);
    CHECK(r.err.find("--analyst") != std::string::npos);
    CHECK_FALSE(fs::exists(never));
}

TEST_CASE("review keeps the finding's bytes, records its SHA-256, and a second review appends", "[cli][review]") {
    const fs::path f = make_finding("reviewed.json");
    const std::string before = slurp(f);
    const std::string verdict = json::parse(before)["verdict"];
    Run r = run("review " + q(f) + " --agree --analyst 'R. Okafor'");
    REQUIRE(r.status == 0);
    CHECK(slurp(f) == before);  // byte for byte
    const fs::path rv = reviews_of(f);
    REQUIRE(fs::exists(rv));
    json j = json::parse(slurp(rv));
    CHECK(j["schema"] == "cavitas.reviews/1");
    CHECK(j["finding"] == "reviewed.json");
    CHECK(j["finding_sha256"] == sha256sum(f));  // coreutils' sha256sum of the finding
    REQUIRE(j["reviews"].size() == 1);
    const json first = j["reviews"][0];
    CHECK(first["decision"] == "agree");
    CHECK(first["verdict"] == verdict);  // agreeing keeps cavitas's verdict
    CHECK(first["original_verdict"] == verdict);
    CHECK(first["analyst"] == "R. Okafor");

    r = run("review " + q(f) + " --override normal --reason 'suction valve throttled for a test that hour' "
            "--analyst 'J. Ng'");
    REQUIRE(r.status == 0);
    CHECK(slurp(f) == before);
    j = json::parse(slurp(rv));
    REQUIRE(j["reviews"].size() == 2);
    CHECK(j["reviews"][0] == first);  // the first review as it was
    const json& second = j["reviews"][1];
    CHECK(second["decision"] == "override");
    CHECK(second["verdict"] == "normal");
    CHECK(second["original_verdict"] == verdict);
    CHECK(second["reason"] == "suction valve throttled for a test that hour");
    CHECK(second["analyst"] == "J. Ng");
    CHECK(j["finding_sha256"] == sha256sum(f));
}

TEST_CASE("review: a bad command line exits 2 naming the option and writes nothing", "[cli][review]") {
    const fs::path f = make_finding("usage.json");
    const fs::path rv = reviews_of(f);
    Run r = run("review " + q(f) + " --override normal");
    CHECK(r.status == 2);
    CHECK(r.err.find("--reason") != std::string::npos);
    r = run("review " + q(f) + " --override normal --reason '  '");
    CHECK(r.status == 2);
    CHECK(r.err.find("--reason") != std::string::npos);
    r = run("review " + q(f) + " --override cavitating --reason x");
    CHECK(r.status == 2);
    CHECK(r.err.find("--override") != std::string::npos);
    r = run("review " + q(f) + " --agree --override normal --reason x");
    CHECK(r.status == 2);
    CHECK(r.err.find("--agree") != std::string::npos);
    r = run("review " + q(f));
    CHECK(r.status == 2);
    // Overriding with the verdict the finding already has is agreeing.
    r = run("review " + q(f) + " --override developed --reason x");
    CHECK(r.status == 2);
    CHECK(r.err.find("--agree") != std::string::npos);
    CHECK_FALSE(fs::exists(rv));
    r = run("review --help");
    CHECK(r.status == 0);
    CHECK(r.out.find("cavitas review") != std::string::npos);  // an example
    CHECK(r.out.find("never changed") != std::string::npos);
}

TEST_CASE("review: a finding changed after its review is refused naming both files", "[cli][review]") {
    const fs::path f = make_finding("changed.json");
    const fs::path rv = reviews_of(f);
    REQUIRE(run("review " + q(f) + " --agree --analyst 'R. Okafor'").status == 0);
    const std::string reviews_before = slurp(rv);
    std::ofstream(f, std::ios::app) << " ";  // one byte more: another finding
    const Run r = run("review " + q(f) + " --agree --analyst 'J. Ng'");
    CHECK(r.status == 1);
    CHECK(r.err.find("changed.json") != std::string::npos);
    CHECK(r.err.find("changed.reviews.json") != std::string::npos);
    CHECK(r.err.find("SHA-256") != std::string::npos);
    CHECK(slurp(rv) == reviews_before);
}

TEST_CASE("review: the reviews file may not be an input, and only a finding is reviewed", "[cli][review]") {
    const fs::path f = make_finding("linked.json");
    const std::string before = slurp(f);
    fs::create_symlink(f, reviews_of(f));  // the reviews file would be the finding itself
    Run r = run("review " + q(f) + " --agree");
    CHECK(r.status == 1);
    CHECK(r.err.find("refusing to overwrite") != std::string::npos);
    CHECK(slurp(f) == before);
    r = run("review " + q(baseline()) + " --agree");
    CHECK(r.status == 1);
    CHECK(r.err.find("not a cavitas finding") != std::string::npos);
}
