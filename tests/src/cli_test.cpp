// The command-line contract: exit statuses, --help, JSON keys and verdict
// values, one clear error line naming the file, nothing written on failure.
// Runs the real cavitas binary.
#include <catch2/catch.hpp>

#include <sndfile.h>
#include <unistd.h>

#include <array>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <functional>
#include <limits>
#include <numbers>
#include <set>
#include <sstream>
#include <string>

#include <nlohmann/json.hpp>

namespace fs = std::filesystem;

namespace {

struct Run {
    int status = -1;
    std::string out, err;
};

fs::path workdir() {
    static const fs::path d = [] {
        fs::path p = fs::temp_directory_path() / ("cavitas-cli-test-" + std::to_string(::getpid()));
        fs::create_directories(p);
        return p;
    }();
    return d;
}

std::string slurp(const fs::path& p) {
    std::ifstream in(p, std::ios::binary);
    std::stringstream ss;
    ss << in.rdbuf();
    return ss.str();
}

Run run(const std::string& args) {
    const fs::path o = workdir() / "stdout.txt", e = workdir() / "stderr.txt";
    const std::string cmd = std::string("'") + CAVITAS_BIN + "' " + args + " >'" + o.string() + "' 2>'" + e.string() + "'";
    const int rc = std::system(cmd.c_str());
    Run r;
    r.status = WIFEXITED(rc) ? WEXITSTATUS(rc) : -1;
    r.out = slurp(o);
    r.err = slurp(e);
    return r;
}

// A 6 s, 25.6 kHz recording (1x and BPF tones over noise), passed through `spoil` first;
// written as 16-bit PCM, or 32-bit float when float_file (NaN survives only there).
fs::path make_spoiled(const std::string& name, unsigned seed, const std::function<void(std::vector<float>&)>& spoil,
                      bool float_file = false, double noise = 0.02) {
    const fs::path p = workdir() / name;
    SF_INFO info{};
    info.samplerate = 25600;
    info.channels = 1;
    info.format = SF_FORMAT_WAV | (float_file ? SF_FORMAT_FLOAT : SF_FORMAT_PCM_16);
    std::vector<float> x(25600 * 6);
    std::uint64_t s = seed;
    for (std::size_t i = 0; i < x.size(); ++i) {
        s = s * 6364136223846793005ULL + 1442695040888963407ULL;
        const double u = static_cast<double>(s >> 11) / 9007199254740992.0 - 0.5;
        const double t = static_cast<double>(i) / 25600.0;
        x[i] = static_cast<float>(0.01 * std::sin(2 * std::numbers::pi * 24.75 * t) +
                                  0.02 * std::sin(2 * std::numbers::pi * 173.25 * t) + noise * u);
    }
    spoil(x);
    SNDFILE* f = sf_open(p.string().c_str(), SFM_WRITE, &info);
    REQUIRE(f != nullptr);
    if (!float_file) sf_command(f, SFC_SET_CLIPPING, nullptr, SF_TRUE);
    sf_writef_float(f, x.data(), static_cast<sf_count_t>(x.size()));
    sf_close(f);
    return p;
}

// A clean 6 s, 25.6 kHz, 16-bit recording.
fs::path make_wav(const std::string& name, unsigned seed, double noise = 0.02) {
    return make_spoiled(name, seed, [](std::vector<float>&) {}, false, noise);
}

std::string q(const fs::path& p) { return "'" + p.string() + "'"; }

}  // namespace

TEST_CASE("--help teaches every command and exits 0", "[cli]") {
    Run r = run("--help");
    CHECK(r.status == 0);
    CHECK(r.out.find("baseline") != std::string::npos);
    CHECK(r.out.find("analyze") != std::string::npos);
    CHECK(r.out.find("Exit status") != std::string::npos);
    r = run("baseline --help");
    CHECK(r.status == 0);
    CHECK(r.out.find("--rpm") != std::string::npos);
    CHECK(r.out.find("--vanes") != std::string::npos);
    CHECK(r.out.find("--full-scale") != std::string::npos);
    r = run("analyze --help");
    CHECK(r.status == 0);
    CHECK(r.out.find("--baseline") != std::string::npos);
    CHECK(r.out.find("--json") != std::string::npos);
}

TEST_CASE("Usage errors exit 2", "[cli]") {
    CHECK(run("").status == 2);
    CHECK(run("frobnicate").status == 2);
    CHECK(run("analyze --no-such-option x.wav").status == 2);
    CHECK(run("analyze x.wav").status == 2);  // --baseline missing
    CHECK(run("baseline --full-scale 50furlongs -o " + q(workdir() / "b.json") + " " + q(make_wav("u.wav", 1))).status == 2);
}

TEST_CASE("An unreadable recording exits 1 with one line naming the file", "[cli]") {
    const fs::path text = workdir() / "notes.wav";
    std::ofstream(text) << "this is not a recording\n";
    const fs::path out = workdir() / "never.json";
    Run r = run("baseline -o " + q(out) + " " + q(text));
    CHECK(r.status == 1);
    CHECK(r.err.find("notes.wav") != std::string::npos);
    CHECK(std::count(r.err.begin(), r.err.end(), '\n') == 1);
    CHECK_FALSE(fs::exists(out));

    r = run("baseline -o " + q(out) + " " + q(workdir() / "missing.wav"));
    CHECK(r.status == 1);
    CHECK(r.err.find("missing.wav: no such file") != std::string::npos);
    CHECK_FALSE(fs::exists(out));

    std::ofstream(workdir() / "empty.wav").close();
    r = run("baseline -o " + q(out) + " " + q(workdir() / "empty.wav"));
    CHECK(r.status == 1);
    CHECK(r.err.find("empty.wav") != std::string::npos);
}

TEST_CASE("baseline then analyze gives a JSON finding with the contracted keys", "[cli]") {
    const fs::path b = workdir() / "P101.json";
    const fs::path g1 = make_wav("good1.wav", 11), g2 = make_wav("good2.wav", 12), test = make_wav("today.wav", 13);
    Run r = run("baseline --rpm 1485 --vanes 7 --full-scale 50g -o " + q(b) + " " + q(g1) + " " + q(g2));
    REQUIRE(r.status == 0);
    REQUIRE(fs::exists(b));
    const auto base = nlohmann::json::parse(slurp(b));
    CHECK(base["schema"] == "cavitas.baseline/1");
    CHECK(base["context"]["rpm"] == 1485.0);
    CHECK(base["context"]["vanes"] == 7);
    CHECK(base["context"]["unit"] == "g");

    const fs::path j = workdir() / "finding.json";
    r = run("analyze --baseline " + q(b) + " --rpm 1485 --json " + q(j) + " " + q(test));
    REQUIRE(r.status == 0);
    CHECK(r.out.find("verdict") != std::string::npos);
    const auto f = nlohmann::json::parse(slurp(j));
    for (const char* key : {"schema", "verdict", "confidence", "evidence", "other_findings", "indicators", "quality", "input"})
        CHECK(f.contains(key));
    CHECK(f["schema"].get<std::string>().rfind("cavitas.finding/", 0) == 0);
    const std::set<std::string> verdicts{"normal", "incipient", "developed", "indeterminate"};
    CHECK(verdicts.count(f["verdict"].get<std::string>()) == 1);
    CHECK(f["confidence"].get<double>() >= 0.0);
    CHECK(f["confidence"].get<double>() <= 1.0);
    CHECK(f["evidence"].is_array());
    CHECK(f["other_findings"].is_array());
    CHECK(f["indicators"].contains("hf_band_level_db"));
    CHECK(f["indicators"].contains("overall_rms_g"));
    CHECK(f["input"]["sample_rate_hz"] == 25600.0);
    CHECK(f["input"]["channel"] == 0);
    CHECK_THAT(f["input"]["duration_s"].get<double>(), Catch::Matchers::WithinAbs(6.0, 1e-9));
    // Same-machine, same-noise recording: the verdict must be normal.
    CHECK(f["verdict"] == "normal");
    // SHA-256 cross-checked with coreutils' sha256sum (an independent implementation).
    const fs::path sums = workdir() / "sum.txt";
    REQUIRE(std::system(("sha256sum " + q(test) + " > " + q(sums)).c_str()) == 0);
    CHECK(f["input"]["sha256"] == slurp(sums).substr(0, 64));
}

TEST_CASE("A corrupt, foreign or future baseline exits 1 naming the file", "[cli]") {
    const fs::path rec = make_wav("rec.wav", 21);
    const fs::path bad = workdir() / "corrupt.json";
    std::ofstream(bad) << "{\"schema\": \"cavitas.baseline/1\", \"context\": {";
    Run r = run("analyze --baseline " + q(bad) + " " + q(rec));
    CHECK(r.status == 1);
    CHECK(r.err.find("corrupt.json") != std::string::npos);

    const fs::path future = workdir() / "future.json";
    std::ofstream(future) << "{\"schema\": \"cavitas.baseline/99\"}";
    r = run("analyze --baseline " + q(future) + " " + q(rec));
    CHECK(r.status == 1);
    CHECK(r.err.find("not supported") != std::string::npos);

    const fs::path foreign = workdir() / "foreign.json";
    std::ofstream(foreign) << "[1, 2, 3]";
    CHECK(run("analyze --baseline " + q(foreign) + " " + q(rec)).status == 1);
}

TEST_CASE("An output path that is an input file is refused and left intact", "[cli]") {
    const fs::path rec = make_wav("keep.wav", 31);
    const std::string before = slurp(rec);
    Run r = run("baseline -o " + q(rec) + " " + q(rec));
    CHECK(r.status == 1);
    CHECK(r.err.find("refusing to overwrite") != std::string::npos);
    CHECK(slurp(rec) == before);
}

TEST_CASE("A missing channel is an input error naming the channels there are", "[cli]") {
    const fs::path rec = make_wav("mono.wav", 41);
    Run r = run("baseline --channel 3 -o " + q(workdir() / "x.json") + " " + q(rec));
    CHECK(r.status == 1);
    CHECK(r.err.find("1 channel") != std::string::npos);
}

TEST_CASE("A directory as baseline or an unwritable output folder fails before any analysis", "[cli]") {
    const fs::path rec = make_wav("dir-case.wav", 51);
    Run r = run("analyze --baseline " + q(workdir()) + " " + q(rec));
    CHECK(r.status == 1);
    CHECK(r.err.find("is a directory") != std::string::npos);
    r = run("baseline -o " + q(workdir() / "no-such-folder" / "b.json") + " " + q(rec));
    CHECK(r.status == 1);
    CHECK(r.err.find("does not exist") != std::string::npos);
    CHECK_FALSE(fs::exists(workdir() / "no-such-folder"));
}


TEST_CASE("Recordings that cannot support a verdict are indeterminate with a reason that says what to do", "[cli]") {
    // Baseline from clean recordings of the same (synthetic) machine; units FS.
    const fs::path b = workdir() / "gate.json";
    REQUIRE(run("baseline --rpm 1485 --vanes 7 -o " + q(b) + " " + q(make_wav("gate1.wav", 61)) + " " +
                q(make_wav("gate2.wav", 62)))
                .status == 0);
    struct Row {
        const char* name;
        std::function<void(std::vector<float>&)> spoil;
        bool float_file;
        const char* words;
    };
    const std::vector<Row> rows = {
        // Overload: the signal driven 60x into full scale.
        {"clipped", [](std::vector<float>& x) { for (auto& v : x) v *= 60.0f; }, false, "reduce the input range"},
        // A cable that drops out for 0.5 s in every 2 s.
        {"dropout", [](std::vector<float>& x) { for (std::size_t i = 0; i < x.size(); ++i) if (i % 51200 < 12800) x[i] = 0.0f; },
         false, "dropped out"},
        // A sensor still settling after power-on: a slow exponential decay of 0.5 FS.
        {"settling", [](std::vector<float>& x) { for (std::size_t i = 0; i < x.size(); ++i) x[i] += static_cast<float>(0.5 * std::exp(-static_cast<double>(i) / 25600.0 / 1.5)); },
         false, "ski slope"},
        // A DC bias fault: 30 % of full scale.
        {"dc", [](std::vector<float>& x) { for (auto& v : x) v += 0.3f; }, false, "DC offset"},
        // Nothing arrives.
        {"silent", [](std::vector<float>& x) { std::fill(x.begin(), x.end(), 0.0f); }, false, "all samples are zero"},
        // A converter that wrote NaN into a float file.
        {"nan", [](std::vector<float>& x) { x[1000] = std::numeric_limits<float>::quiet_NaN(); }, true, "not finite"},
    };
    for (const auto& row : rows) {
        INFO(row.name);
        const fs::path rec = make_spoiled(std::string("spoiled_") + row.name + ".wav", 63, row.spoil, row.float_file);
        const fs::path j = workdir() / (std::string(row.name) + ".finding.json");
        const Run r = run("analyze --baseline " + q(b) + " --rpm 1485 --json " + q(j) + " " + q(rec));
        CHECK(r.status == 0);
        CHECK(r.out.find("INDETERMINATE") != std::string::npos);
        CHECK(r.out.find(row.words) != std::string::npos);
        const auto f = nlohmann::json::parse(slurp(j));
        CHECK(f["verdict"] == "indeterminate");
        CHECK(f["quality"]["usable"] == false);
        CHECK(f["cautions"].empty());
    }
}

TEST_CASE("A clean recording passes the quality gate with no warning", "[cli]") {
    const fs::path b = workdir() / "gate-clean.json";
    REQUIRE(run("baseline --rpm 1485 --vanes 7 -o " + q(b) + " " + q(make_wav("c1.wav", 71)) + " " + q(make_wav("c2.wav", 72)))
                .status == 0);
    const fs::path j = workdir() / "clean.finding.json";
    REQUIRE(run("analyze --baseline " + q(b) + " --rpm 1485 --json " + q(j) + " " + q(make_wav("c3.wav", 73))).status == 0);
    const auto f = nlohmann::json::parse(slurp(j));
    CHECK(f["quality"]["usable"] == true);
    CHECK(f["quality"]["warnings"].empty());
    for (const auto& c : f["quality"]["checks"]) CHECK(c["status"] == "pass");
}
