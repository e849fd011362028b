// The command-line contract: exit statuses, --help, JSON keys and verdict
// values, one clear error line naming the file, nothing written on failure.
// Runs the real cavitas binary.
#include <catch2/catch.hpp>

#include <sndfile.h>
#include <unistd.h>

#include <array>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <functional>
#include <limits>
#include <numbers>
#include <set>
#include <sstream>
#include <string>

#include <nlohmann/json.hpp>

#include "tests/support/axes.hpp"
#include "tests/support/cli.hpp"

namespace fs = std::filesystem;
using cavitas::test::q;
using cavitas::test::Run;
using cavitas::test::slurp;

namespace {

fs::path workdir() {
    static const fs::path d = [] {
        fs::path p = fs::temp_directory_path() / ("cavitas-cli-test-" + std::to_string(::getpid()));
        fs::create_directories(p);
        return p;
    }();
    return d;
}

Run run(const std::string& args) { return cavitas::test::run_binary(CAVITAS_BIN, args, workdir()); }

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
    CHECK(base["schema"] == "cavitas.baseline/3");
    CHECK(base["warnings"].is_array());
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
    std::ofstream(bad) << "{\"schema\": \"cavitas.baseline/2\", \"context\": {";
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

// --- npsh and the operating point -------------------------------------------------------------

namespace {

nlohmann::json npsh_json(const std::string& args, const std::string& name) {
    const fs::path j = workdir() / name;
    fs::remove(j);
    const Run r = run("npsh " + args + " --json " + q(j));
    INFO(r.err);
    REQUIRE(r.status == 0);
    return nlohmann::json::parse(slurp(j));
}

}  // namespace

TEST_CASE("npsh: the worked example in SI and in US units agrees with the hand calculation", "[cli][npsh]") {
    // Hand calculations in tests/models/hydraulics_test.cpp: 13.0512 m (SI inputs) and 42.4298 ft =
    // 12.9326 m (US inputs), to 0.01 m.
    const auto si = npsh_json("--suction-pressure 35kPa --temperature 60C --barometric 101.325kPa --gauge-height 0.8m "
                              "--flow 120m3/h --bore 150mm --npsh3 4.2m",
                              "si.json");
    CHECK_THAT(si["npsha_m"].get<double>(), Catch::Matchers::WithinAbs(13.0512, 0.01));
    for (const char* key : {"npsha_m", "vapour_pressure_pa", "density_kg_m3", "velocity_head_m", "absolute_suction_pa",
                            "margin_m", "margin_ratio"})
        CHECK(si.contains(key));
    CHECK(si["absolute_suction_pa"] == 136325.0);
    CHECK_THAT(si["margin_m"].get<double>(), Catch::Matchers::WithinAbs(13.0512 - 4.2, 0.01));
    CHECK_THAT(si["margin_ratio"].get<double>(), Catch::Matchers::WithinAbs(13.0512 / 4.2, 0.003));
    CHECK(si["schema"] == "cavitas.npsh/1");
    const auto us = npsh_json("--suction-pressure 5psig --temperature 140F --barometric 14.7psi --gauge-height 2.5ft "
                              "--flow 500gpm --bore 6in",
                              "us.json");
    CHECK_THAT(us["npsha_m"].get<double>(), Catch::Matchers::WithinAbs(12.9326, 0.01));
    CHECK_FALSE(us.contains("margin_m"));  // no NPSH3 given
    CHECK_FALSE(us.contains("margin_ratio"));
    // Same state, the gauge reading given as absolute: 5 psig + 14.7 psi = 19.7 psia.
    const auto abs = npsh_json("--suction-pressure 19.7psia --temperature 140F --gauge-height 2.5ft --flow 500gpm --bore 6in",
                               "abs.json");
    CHECK_THAT(abs["npsha_m"].get<double>(), Catch::Matchers::WithinAbs(us["npsha_m"].get<double>(), 1e-9));
    // The readable account names every term with its unit.
    const Run r = run("npsh --suction-pressure 35kPa --temperature 60C --gauge-height 0.8m --flow 120m3/h --bore 150mm "
                      "--npsh3 4.2m");
    CHECK(r.status == 0);
    for (const char* words : {"NPSH available", "pressure head", "velocity head", "gauge height", "IAPWS-IF97", "kPa",
                              "ANSI/HI 9.6.1", "barometric pressure not given"})
        CHECK(r.out.find(words) != std::string::npos);
}

TEST_CASE("npsh: water boils at 212 F under 14.7 psi, so NPSHa is zero there", "[cli][npsh]") {
    // Common practice, no source: water boils at 100 C (212 F) under the standard atmosphere,
    // 101.325 kPa (14.7 psi). At the boiling point the absolute pressure equals the vapour
    // pressure and NPSHa (gauge level with the datum, no velocity) is zero.
    const auto j = npsh_json("--suction-pressure 14.7psi --pressure-ref absolute --temperature 212F", "boil.json");
    CHECK_THAT(j["vapour_pressure_pa"].get<double>(), Catch::Matchers::WithinRel(j["absolute_suction_pa"].get<double>(), 1e-3));
    CHECK_THAT(j["npsha_m"].get<double>(), Catch::Matchers::WithinAbs(0.0, 0.01));
}

TEST_CASE("npsh: the plant Thoma number of a turbine", "[cli][npsh]") {
    // sigma = (H_atm - H_v - H_s) / H; hand value 0.142238 for 20 C water under 101.325 kPa,
    // H_s = 3 m, H = 50 m (tests/models/hydraulics_test.cpp).
    const auto j = npsh_json("--temperature 20C --barometric 101.325kPa --runner-setting 3m --net-head 50m "
                             "--sigma-critical 0.1",
                             "thoma.json");
    CHECK_THAT(j["thoma_sigma"].get<double>(), Catch::Matchers::WithinAbs(0.142238, 2e-6));
    CHECK_THAT(j["thoma_ratio_to_critical"].get<double>(), Catch::Matchers::WithinAbs(1.42238, 2e-5));
}

TEST_CASE("npsh: bad values are usage errors naming the flag and the problem", "[cli][npsh]") {
    struct Case {
        std::string args;
        std::string words;
    };
    const std::vector<Case> cases = {
        {"--suction-pressure 35furlongs --temperature 20C", "unknown pressure unit 'furlongs'"},
        {"--suction-pressure 35 --temperature 20C", "no unit"},
        {"--suction-pressure kPa --temperature 20C", "expected a decimal number"},
        {"--suction-pressure 0x10kPa --temperature 20C", "expected a decimal number"},
        {"--suction-pressure 35kPa --temperature 20Q", "unknown temperature unit"},
        {"--suction-pressure 35kPa --temperature 20C --flow 3furlongs/h --bore 150mm", "--flow"},
        {"--suction-pressure -1.2bar --temperature 20C", "below -1 atm"},
        {"--suction-pressure 35kPa --temperature 400C", "critical point"},
        {"--suction-pressure 35kPa --temperature 360C", "350 C"},
        {"--suction-pressure 35kPa", "temperature"},
        {"--suction-pressure 35kPa --temperature 20C --bore 150mm", "flow"},
        {"--suction-pressure 35kPa --temperature 20C --density 850kg/m3", "both"},
        {"--suction-pressure 5psig --pressure-ref absolute --temperature 20C", "says gauge"},
        {"--suction-pressure 35kPa --temperature 20C --pressure-ref sideways", "--pressure-ref"},
        {"--temperature 20C", "--suction-pressure"},
        {"", "--suction-pressure"},
        {"--suction-pressure 35kPa --temperature 20C --suction-pressure", "--suction-pressure"},
    };
    for (const auto& c : cases) {
        INFO("npsh " << c.args);
        const Run r = run("npsh " + c.args);
        CHECK(r.status == 2);
        CHECK(r.err.find(c.words) != std::string::npos);
        CHECK(r.out.empty());
    }
}

namespace {

// The demo's raw-water pump OW-P101 (samples/): two known-good recordings and three to judge,
// copied into a folder of their own with sidecar files written by each test.
fs::path pump_folder(const std::string& name) {
    const fs::path d = workdir() / name;
    fs::create_directories(d);
    for (const char* f : {"OW-P101_baseline_1.wav", "OW-P101_baseline_2.wav", "OW-P101_2026-09-07.wav",
                          "OW-P101_2026-11-02.wav", "OW-P101_2026-10-05.wav"})
        fs::copy_file(fs::path(CAVITAS_SAMPLES) / f, d / f, fs::copy_options::overwrite_existing);
    return d;
}

void write_text(const fs::path& p, const std::string& text) { std::ofstream(p) << text; }

// Suction pressure (gauge), flow; 14 C water at 62 m elevation, NPSH3 3.2 m.
std::string sidecar(const std::string& suction, const std::string& flow) {
    return "suction_pressure = \"" + suction + "\"\ntemperature = \"14 C\"\nelevation = \"62 m\"\nflow = \"" + flow +
           "\"\nbore = \"250 mm\"\nnpsh3 = \"3.2 m\"\nspeed = \"1485 rpm\"\n";
}

}  // namespace

TEST_CASE("analyze reads the NPSH margin beside the verdict and flags disagreement both ways", "[cli][npsh]") {
    const fs::path d = pump_folder("duty");
    // Baseline at 410 m3/h with a comfortable suction (+50 kPa gauge: NPSHa about 15 m, 4.7 x NPSH3).
    write_text(d / "OW-P101_baseline_1.op.toml", sidecar("50 kPa", "410 m3/h"));
    write_text(d / "OW-P101_baseline_2.op.toml", sidecar("52 kPa", "410 m3/h"));
    const fs::path b = d / "b.json";
    Run r = run("baseline --vanes 7 --full-scale 50g -o " + q(b) + " " + q(d / "OW-P101_baseline_1.wav") + " " +
                q(d / "OW-P101_baseline_2.wav"));
    INFO(r.err);
    REQUIRE(r.status == 0);
    const auto base = nlohmann::json::parse(slurp(b));
    CHECK_THAT(base["operating_point"]["flow_m3_s"].get<double>(), Catch::Matchers::WithinRel(410.0 / 3600.0, 1e-12));
    CHECK(base["context"]["rpm"] == 1485.0);  // the sidecar's speed was used
    CHECK(r.out.find("operating point") != std::string::npos);

    // Developed cavitation at a large margin: not explained by the suction pressure.
    write_text(d / "OW-P101_2026-11-02.op.toml", sidecar("50 kPa", "410 m3/h"));
    const fs::path j1 = d / "developed.json";
    r = run("analyze --baseline " + q(b) + " --json " + q(j1) + " " + q(d / "OW-P101_2026-11-02.wav"));
    REQUIRE(r.status == 0);
    auto f = nlohmann::json::parse(slurp(j1));
    CHECK(f["verdict"] == "developed");
    CHECK(f["operating_point"]["agreement"] == "unexplained_by_margin");
    CHECK(f["operating_point"]["margin_class"] == "large");
    CHECK(f["operating_point"]["reading_notes"][0].get<std::string>().find("recirculation") != std::string::npos);
    CHECK(r.out.find("not explained by the NPSH margin") != std::string::npos);  // in words, not the JSON code

    // A normal recording with the margin near NPSH3 (-66 kPa gauge: NPSHa about 3.6 m, 1.1 x): at risk.
    write_text(d / "OW-P101_2026-09-07.op.toml", sidecar("-66 kPa", "410 m3/h"));
    const fs::path j2 = d / "healthy.json";
    r = run("analyze --baseline " + q(b) + " --json " + q(j2) + " " + q(d / "OW-P101_2026-09-07.wav"));
    REQUIRE(r.status == 0);
    f = nlohmann::json::parse(slurp(j2));
    CHECK(f["verdict"] == "normal");
    CHECK(f["operating_point"]["agreement"] == "at_risk");
    CHECK(f["operating_point"]["margin_ratio"].get<double>() < 1.2);
    const double confidence_same_flow = f["confidence"].get<double>();

    // Flags override the sidecar: the same recording at a comfortable suction is consistent.
    r = run("analyze --baseline " + q(b) + " --suction-pressure 50kPa --json " + q(j2) + " " +
            q(d / "OW-P101_2026-09-07.wav"));
    REQUIRE(r.status == 0);
    f = nlohmann::json::parse(slurp(j2));
    CHECK(f["operating_point"]["agreement"] == "consistent");
    CHECK(f["operating_point"]["sources"].size() == 2);

    // The same recording at another flow: the baseline's duty differs, flagged and the confidence lowered.
    r = run("analyze --baseline " + q(b) + " --flow 300m3/h --json " + q(j2) + " " + q(d / "OW-P101_2026-09-07.wav"));
    REQUIRE(r.status == 0);
    f = nlohmann::json::parse(slurp(j2));
    REQUIRE(f["operating_point"]["baseline_differences"].size() == 1);
    CHECK(f["operating_point"]["baseline_differences"][0].get<std::string>().find("410 m3/h") != std::string::npos);
    CHECK(f["confidence"].get<double>() < confidence_same_flow);
    // Listed with the other things that lowered the confidence (as a speed change is).
    bool warned = false;
    for (const auto& w : f["quality"]["warnings"]) warned |= w.get<std::string>().find("300 m3/h") != std::string::npos;
    CHECK(warned);
    CHECK(r.out.find("because") != std::string::npos);  // the confidence grade says what lowered it
    CHECK(r.out.find("300 m3/h") != std::string::npos);
    CHECK(f["confidence_grade"] != "high");

    // A bad sidecar stops the analysis with the file named; nothing is written.
    write_text(d / "OW-P101_2026-10-05.op.toml", "suction_pressure = \"-38 kPa\"\ntemperature = \"14 Q\"\n");
    const fs::path j3 = d / "incipient.json";
    r = run("analyze --baseline " + q(b) + " --json " + q(j3) + " " + q(d / "OW-P101_2026-10-05.wav"));
    CHECK(r.status == 1);
    CHECK(r.err.find("OW-P101_2026-10-05.op.toml: temperature") != std::string::npos);
    CHECK_FALSE(fs::exists(j3));
}

TEST_CASE("report: without its renderer module beside the executable, a clear error and nothing written",
          "[cli][report]") {
    // The report renderer is cavitas-report.so beside the executable, or in the
    // installed layout's library folder (src/report/report_loader.cpp).
    const fs::path lone = workdir() / "lone-bin";
    fs::create_directories(lone);
    fs::copy_file(CAVITAS_BIN, lone / "cavitas", fs::copy_options::overwrite_existing);
    const fs::path finding = workdir() / "lone-finding.json";
    std::ofstream(finding) << "{\"schema\":\"cavitas.finding/1\"}";
    const fs::path html = workdir() / "lone.html";
    const Run r = cavitas::test::run_binary((lone / "cavitas").string(),
                                            "report '" + finding.string() + "' --html '" + html.string() + "'", workdir());
    INFO(r.err);
    CHECK(r.status == 1);
    CHECK(r.err.find("cavitas-report.so was not found") != std::string::npos);
    // Both places are named: beside the executable, and the installed layout's library folder.
    CHECK(r.err.find((lone / "cavitas-report.so").string()) != std::string::npos);
    CHECK(r.err.find((workdir() / "lib").string() + "/") != std::string::npos);
    CHECK(r.err.find("/cavitas/cavitas-report.so") != std::string::npos);
    CHECK(!fs::exists(html));
    // Beside the real executable it loads (the same input is then judged on its content).
    const Run real = run("report '" + finding.string() + "' --html '" + html.string() + "'");
    CHECK(real.err.find("cavitas-report.so") == std::string::npos);
}

TEST_CASE("FFT plans are kept in the cache folder and change no result, a damaged cache is ignored", "[cli]") {
    // src/io/plan_store.hpp: CAVITAS_CACHE_DIR names the folder (empty = no cache).
    const fs::path cache = workdir() / "plan-cache";
    fs::remove_all(cache);
    const fs::path b = workdir() / "cache-base.json";
    const fs::path rec = make_wav("cache-today.wav", 81);
    ::setenv("CAVITAS_CACHE_DIR", "", 1);
    REQUIRE(run("baseline --rpm 1485 --vanes 7 -o " + q(b) + " " + q(make_wav("cache-good.wav", 80))).status == 0);
    const fs::path j0 = workdir() / "cache-none.json", j1 = workdir() / "cache-first.json",
                   j2 = workdir() / "cache-second.json", j3 = workdir() / "cache-damaged.json";
    REQUIRE(run("analyze --baseline " + q(b) + " --rpm 1485 --json " + q(j0) + " " + q(rec)).status == 0);
    CHECK(!fs::exists(cache));
    ::setenv("CAVITAS_CACHE_DIR", cache.c_str(), 1);
    REQUIRE(run("analyze --baseline " + q(b) + " --rpm 1485 --json " + q(j1) + " " + q(rec)).status == 0);
    std::vector<fs::path> files;
    if (fs::is_directory(cache))
        for (const auto& e : fs::directory_iterator(cache)) files.push_back(e.path());
    REQUIRE(files.size() == 2);  // fftw-KEY.single and fftw-KEY.double
    for (const auto& f : files) CHECK(slurp(f).find("_wisdom") != std::string::npos);
    const auto stamp = fs::last_write_time(files[0]);
    REQUIRE(run("analyze --baseline " + q(b) + " --rpm 1485 --json " + q(j2) + " " + q(rec)).status == 0);
    CHECK(fs::last_write_time(files[0]) == stamp);  // nothing new to keep: not rewritten
    for (const auto& f : files) std::ofstream(f, std::ios::trunc) << "(damaged";
    REQUIRE(run("analyze --baseline " + q(b) + " --rpm 1485 --json " + q(j3) + " " + q(rec)).status == 0);
    for (const auto& f : files) CHECK(slurp(f).find("_wisdom") != std::string::npos);  // written anew
    ::unsetenv("CAVITAS_CACHE_DIR");
    // The findings agree in every field but the time of analysis.
    auto strip = [](const fs::path& p) {
        auto j = nlohmann::json::parse(slurp(p));
        j.erase("created_utc");
        return j.dump();
    };
    CHECK(strip(j1) == strip(j0));
    CHECK(strip(j2) == strip(j0));
    CHECK(strip(j3) == strip(j0));
}

TEST_CASE("baseline checks what it is given: warnings stored and printed, --strict refuses, --add-to adds a visit",
          "[cli]") {
    const fs::path g1 = make_wav("chk1.wav", 31), g2 = make_wav("chk2.wav", 32), g3 = make_wav("chk3.wav", 33);
    // The HF floor steps up 20 dB (x10 in amplitude) from 3 s on: a level step inside the record.
    const fs::path stepped = make_spoiled("chk_step.wav", 34, [](std::vector<float>& x) {
        std::uint64_t s = 99;
        for (std::size_t i = 3 * 25600; i < x.size(); ++i) {
            s = s * 6364136223846793005ULL + 1442695040888963407ULL;
            x[i] += static_cast<float>(0.2 * (static_cast<double>(s >> 11) / 9007199254740992.0 - 0.5));
        }
    });
    const fs::path clean = workdir() / "chk_clean.json", bad = workdir() / "chk_bad.json", strict = workdir() / "chk_strict.json";
    Run r = run("baseline --rpm 1485 --vanes 7 --full-scale 50g -o " + q(clean) + " " + q(g1) + " " + q(g2));
    REQUIRE(r.status == 0);
    CHECK(r.out.find("checks: nothing found") != std::string::npos);
    CHECK(nlohmann::json::parse(slurp(clean))["warnings"].empty());

    r = run("baseline --rpm 1485 --vanes 7 --full-scale 50g -o " + q(bad) + " " + q(g1) + " " + q(stepped));
    REQUIRE(r.status == 0);
    CHECK(r.out.find("WARNINGS") != std::string::npos);
    CHECK(r.out.find("chk_step.wav") != std::string::npos);
    const auto w = nlohmann::json::parse(slurp(bad))["warnings"];
    REQUIRE_FALSE(w.empty());
    CHECK(w[0]["file"].get<std::string>().find("chk_step.wav") != std::string::npos);

    r = run("baseline --strict --rpm 1485 --vanes 7 --full-scale 50g -o " + q(strict) + " " + q(g1) + " " + q(stepped));
    CHECK(r.status == 1);
    CHECK(r.err.find("--strict") != std::string::npos);
    CHECK_FALSE(fs::exists(strict));

    // A finding against the warned baseline repeats the warnings.
    const fs::path j = workdir() / "chk_finding.json";
    r = run("analyze --baseline " + q(bad) + " --rpm 1485 --json " + q(j) + " " + q(g3));
    REQUIRE(r.status == 0);
    const auto f = nlohmann::json::parse(slurp(j));
    CHECK(f["baseline_warnings"].size() == w.size());
    CHECK(f["confidence_grade"] != "high");

    // --add-to: the clean baseline gains the third visit, written back to itself.
    r = run("baseline --add-to " + q(clean) + " " + q(g3));
    REQUIRE(r.status == 0);
    const auto added = nlohmann::json::parse(slurp(clean));
    CHECK(added["sources"].size() == 3);
    CHECK(added["context"]["vanes"] == 7);
    CHECK(added["segments"] == 18);
    // Another calibration is refused, naming the option.
    r = run("baseline --add-to " + q(clean) + " --full-scale 10g " + q(g3));
    CHECK(r.status == 2);
    CHECK(r.err.find("--full-scale") != std::string::npos);
}

TEST_CASE("info describes a recording: format, channels, rate, length, unit", "[cli]") {
    const fs::path wav = make_wav("info.wav", 7);
    const fs::path js = workdir() / "info.json";
    Run r = run("info " + q(wav) + " --json " + q(js));
    REQUIRE(r.status == 0);
    CHECK(r.out.find("WAV PCM 16-bit, 1 channel(s)") != std::string::npos);
    // make_wav writes 6 s at 25.6 kHz: 153 600 samples.
    CHECK(r.out.find("25600 Hz, 153600 samples, 6 s") != std::string::npos);
    CHECK(r.out.find("fractions of full scale") != std::string::npos);
    const auto j = nlohmann::json::parse(slurp(js));
    REQUIRE(j.size() == 1);
    CHECK(j[0]["schema"] == "cavitas.info/1");
    CHECK(j[0]["channels"][0]["frames"] == 153600);
    CHECK(j[0]["channels"][0]["sample_rate_hz"] == 25600.0);
    // A missing file: exit 1 naming it, nothing written.
    r = run("info " + q(workdir() / "gone.wav"));
    CHECK(r.status == 1);
    CHECK(r.err.find("gone.wav: no such file") != std::string::npos);
    CHECK(run("info").status == 2);
}


TEST_CASE("A triaxial point: cavitation strong on one axis and weak on the others gives the point's verdict with each axis", "[cli]") {
    // The demo's OW-P101 recordings (invented, tools/synth) as axes: healthy
    // visits for the baselines, the developed visit strong on axis 0 and mixed
    // in 20 dB and 26 dB lower on axes 1 and 2.
    const fs::path s = CAVITAS_SAMPLES;
    using cavitas::test::read_mono;
    const auto b1 = read_mono(s / "OW-P101_baseline_1.wav"), b2 = read_mono(s / "OW-P101_baseline_2.wav");
    const auto ok = read_mono(s / "OW-P101_2026-09-07.wav"), bad = read_mono(s / "OW-P101_2026-11-02.wav");
    const fs::path base1 = workdir() / "tri_base1.wav", base2 = workdir() / "tri_base2.wav", visit = workdir() / "tri_visit.wav";
    cavitas::test::write_axes(base1, {{{{1.0f, &b1}}, {{0.7f, &b2}}, {{0.5f, &ok}}}});
    cavitas::test::write_axes(base2, {{{{1.0f, &b2}}, {{0.7f, &ok}}, {{0.5f, &b1}}}});
    cavitas::test::write_axes(visit, {{{{1.0f, &bad}}, {{0.7f, &b1}, {0.07f, &bad}}, {{0.5f, &b2}, {0.025f, &bad}}}});
    const fs::path base = workdir() / "tri.json", finding = workdir() / "tri-finding.json";
    Run r = run("baseline --channel all --rpm 1485 --vanes 7 --full-scale 50g -o " + q(base) + " " + q(base1) + " " + q(base2));
    REQUIRE(r.status == 0);
    const auto b = nlohmann::json::parse(slurp(base));
    CHECK(b["schema"] == "cavitas.baseline-channels/1");
    REQUIRE(b["channels"].size() == 3);
    CHECK(b["channels"][2]["context"]["channel"] == 2);
    r = run("analyze --channel 0,1,2 --rpm 1485 --baseline " + q(base) + " --json " + q(finding) + " " + q(visit));
    REQUIRE(r.status == 0);
    INFO(r.out);
    const auto f = nlohmann::json::parse(slurp(finding));
    CHECK(f["verdict"] == "developed");
    CHECK(f["point"]["verdict"] == "developed");
    CHECK(f["point"]["worst_channel"] == 0);
    REQUIRE(f["channels"].size() == 3);
    CHECK(f["channels"][0]["verdict"] == "developed");
    CHECK(f["channels"][0]["input"]["channel"] == 0);
    CHECK(f["channels"][2]["input"]["channel"] == 2);
    // Axis 0 rises most: the evidence sets the axes side by side.
    CHECK(f["channels"][0]["indicators"]["hf_band_level_db"]["change"].get<double>() >
          f["channels"][2]["indicators"]["hf_band_level_db"]["change"].get<double>() + 10.0);
    CHECK(f["evidence"][0].get<std::string>().find("of 3 channels of this point") != std::string::npos);
    CHECK(r.out.find("point of 3 channels: developed") != std::string::npos);
    // A channel the baseline does not hold is refused by name.
    r = run("analyze --channel 3 --baseline " + q(base) + " " + q(visit));
    CHECK(r.status == 1);
}

TEST_CASE("analyze --zones: overall velocity in mm/s RMS, its zone from the analyst's file, the verdict unchanged",
          "[cli][severity]") {
    // Tones over faint noise (0.002 FS, adding about 0.1 mm/s in quadrature): 0.01 FS at 24.75 Hz and 0.02 FS at 173.25 Hz, full scale 50 g,
    // so 0.5 g and 1 g. Hand sum (calculus, v = a / (2 pi f), RMS = peak / sqrt 2):
    // sqrt(sum (A g0 / (2 pi f))^2 / 2); 2 % for the window's leakage of lines that are not bin-centred (our choice).
    const fs::path b = workdir() / "zones-base.json";
    const fs::path g1 = make_wav("zones-good1.wav", 21, 0.002), g2 = make_wav("zones-good2.wav", 22, 0.002),
                   test = make_wav("zones-today.wav", 23, 0.002);
    Run r = run("baseline --rpm 1485 --vanes 7 --full-scale 50g -o " + q(b) + " " + q(g1) + " " + q(g2));
    REQUIRE(r.status == 0);
    const double g0 = 9.80665, pi = std::numbers::pi;
    const double v1 = 0.5 * g0 / (2 * pi * 24.75), v2 = 1.0 * g0 / (2 * pi * 173.25);
    const double hand_mm_s = 1000.0 * std::sqrt((v1 * v1 + v2 * v2) / 2.0);  // about 23.2 mm/s

    const fs::path zones = workdir() / "zones.toml";
    {
        std::ofstream z(zones);
        z << "# zones of a made-up class, for this test only\n"
             "source = \"test class, made up\"\nband_hz = [10, 1000]\na_b_mm_s = 5\nb_c_mm_s = 20\nc_d_mm_s = 40\n";
    }
    const fs::path j = workdir() / "zones-finding.json", plain = workdir() / "zones-plain.json";
    r = run("analyze --baseline " + q(b) + " --rpm 1485 --zones " + q(zones) + " --json " + q(j) + " " + q(test));
    INFO(r.err);
    REQUIRE(r.status == 0);
    const auto f = nlohmann::json::parse(slurp(j));
    const auto& v = f["velocity"];
    CHECK_THAT(v["overall_rms_mm_s"].get<double>(), Catch::Matchers::WithinRel(hand_mm_s, 0.02));
    CHECK(v["band_low_hz"] == 10.0);
    CHECK(v["band_high_hz"] == 1000.0);
    CHECK(v["low_cut_hz"] == 10.0);
    CHECK(v["zone"]["name"] == "C");
    CHECK(v["zone"]["source"] == "test class, made up");
    CHECK(v["zone"]["b_c_mm_s"] == 20.0);
    CHECK(r.out.find("mm/s RMS (10-1000 Hz): zone C by test class, made up (your zone file)") != std::string::npos);
    CHECK(r.out.find("dB re 1 µm/s²") != std::string::npos);
    CHECK(f["bands"].contains("hf_level_db_re_1um_s2"));
    CHECK(f["bands"]["rise_reference"] == "dB re baseline");
    // The 1 g tone at 173.25 Hz: about 0.707 g RMS at its line, less the scalloping of a line
    // a quarter bin off centre (Hann: under 0.3 dB there, so within 5 %).
    const auto& amp = f["plots"]["amplitude_spectrum"];
    CHECK(amp["unit"] == "g");
    const double bin = amp["bin_hz"].get<double>();
    const auto k = static_cast<std::size_t>(std::lround(173.0 / bin));
    CHECK_THAT(amp["rms"][k].get<double>(), Catch::Matchers::WithinRel(1.0 / std::sqrt(2.0), 0.05));

    // Without the zone file: the same velocity, no zone, the same verdict.
    r = run("analyze --baseline " + q(b) + " --rpm 1485 --json " + q(plain) + " " + q(test));
    REQUIRE(r.status == 0);
    const auto p = nlohmann::json::parse(slurp(plain));
    CHECK_FALSE(p["velocity"].contains("zone"));
    CHECK(p["velocity"]["overall_rms_mm_s"].get<double>() == v["overall_rms_mm_s"].get<double>());
    CHECK(p["verdict"] == f["verdict"]);
    CHECK(p["confidence"] == f["confidence"]);
}

TEST_CASE("info reads a CSV waveform with a given delimiter and decimal comma, and refuses one that cannot be told apart", "[cli]") {
    // ';' between fields and ',' as decimal mark: a common export of spreadsheets set to a European locale
    // (common practice, no source).
    const fs::path csv = workdir() / "eu.csv";
    std::ofstream(csv) << "# sample_rate_hz = 1000\nax [g];ay [g]\n0,5;1,5\n-0,5;2,0\n0,25;0,1\n";
    Run r = run("info --csv-delimiter ';' --csv-decimal , " + q(csv));
    REQUIRE(r.status == 0);
    CHECK(r.out.find("decimal comma, 2 channels") != std::string::npos);
    CHECK(r.out.find("channel 1 'ay': 1000 Hz, 3 samples") != std::string::npos);
    r = run("info --csv-delimiter , --csv-decimal , " + q(csv));
    CHECK(r.status == 2);
    CHECK(r.err.find("cannot be told from the delimiter") != std::string::npos);
}

// A point that is always noisier: its own limits beside its baseline raise the HF levels that count,
// and the finding says which limits it used and where from. OW-P101's developed visit rises +18.6 dB
// over its baseline (tools/demo.sh): past the default +9 dB for developed (models/classifier.hpp), under
// a point limit of +20 dB, so the same impulsive, blade-locked rise reads incipient there.
TEST_CASE("A point's limits file beside its baseline is used, named in the finding, and a bad one stops the analysis",
          "[cli][limits]") {
    const fs::path d = pump_folder("limits");
    const fs::path b = d / "DE-H.json";
    REQUIRE(run("baseline --vanes 7 --rpm 1485 --full-scale 50g -o " + q(b) + " " + q(d / "OW-P101_baseline_1.wav") + " " +
                q(d / "OW-P101_baseline_2.wav"))
                .status == 0);
    const fs::path j = d / "f.json";
    const std::string analyze = "analyze --baseline " + q(b) + " --rpm 1485 --json " + q(j) + " " + q(d / "OW-P101_2026-11-02.wav");
    Run r = run(analyze);
    REQUIRE(r.status == 0);
    auto f = nlohmann::json::parse(slurp(j));
    CHECK(f["verdict"] == "developed");
    CHECK(f["limits"]["hf_alert_db"] == 3.0);
    CHECK(f["limits"]["source"].get<std::string>().find("cavitas defaults") != std::string::npos);

    write_text(d / "DE-H.limits.toml", "reason = \"always noisy: recirculation at the suction bell\"\nhf_alert_db = 7\n"
                                      "hf_developed_db = 20\n");
    r = run(analyze);
    REQUIRE(r.status == 0);
    f = nlohmann::json::parse(slurp(j));
    CHECK(f["verdict"] == "incipient");
    CHECK(f["limits"]["hf_alert_db"] == 7.0);
    CHECK(f["limits"]["hf_developed_db"] == 20.0);
    CHECK(f["limits"]["source"] == (d / "DE-H.limits.toml").string());
    CHECK(f["limits"]["reason"] == "always noisy: recirculation at the suction bell");
    CHECK(r.out.find("HF alert +7.0 dB") != std::string::npos);

    // --limits names another file; a bad one stops before the analysis, naming file and key.
    write_text(d / "other.toml", "reason = \"x\"\nhf_alert_db = 50\n");
    r = run(analyze + " --limits " + q(d / "other.toml"));
    CHECK(r.status == 1);
    CHECK(r.err.find("other.toml: hf_alert_db = 50 must lie within 0.5-40 dB") != std::string::npos);
    // The limits file is an input: never overwritten by an output.
    r = run("analyze --baseline " + q(b) + " --json " + q(d / "DE-H.limits.toml") + " " + q(d / "OW-P101_2026-11-02.wav"));
    CHECK(r.status != 0);
    CHECK(slurp(d / "DE-H.limits.toml").find("always noisy") != std::string::npos);
}

TEST_CASE("screen: one recording without a reference, its three answers, errors and nothing written on failure",
          "[cli]") {
    Run r = run("screen --help");
    CHECK(r.status == 0);
    for (const char* code : {"signs_of_cavitation", "no_sign", "cannot_tell", "--suppression", "--reference"})
        CHECK(r.out.find(code) != std::string::npos);
    // 1x at 24.75 Hz (1485 rpm) and BPF at 7x over noise: a sound machine.
    const fs::path wav = make_wav("screen.wav", 11);
    const fs::path out = workdir() / "screen.json";
    r = run("screen --rpm 1485 --vanes 7 --full-scale 50g --json " + q(out) + " " + q(wav));
    REQUIRE(r.status == 0);
    const auto j = nlohmann::json::parse(slurp(out));
    CHECK(j["schema"] == "cavitas.screening/1");
    const std::set<std::string> codes{"signs_of_cavitation", "no_sign", "cannot_tell"};
    CHECK(codes.count(j["screening"].get<std::string>()) == 1);
    CHECK(j["grade"] != "high");
    CHECK(j["signs"].size() == 4);
    CHECK(r.out.find("without a reference") != std::string::npos);

    const fs::path never = workdir() / "never-screen.json";
    r = run("screen --json " + q(never) + " " + q(workdir() / "missing.wav"));
    CHECK(r.status == 1);
    CHECK(r.err.find("missing.wav") != std::string::npos);
    CHECK(std::count(r.err.begin(), r.err.end(), '\n') == 1);
    CHECK(run("screen --channel 0,1 " + q(wav)).status == 2);
    r = run("screen --suction-pressure 3furlongs --json " + q(never) + " " + q(wav));
    CHECK(r.status == 2);
    CHECK(r.err.find("--suction-pressure") != std::string::npos);
    CHECK_FALSE(fs::exists(never));
    // The output is never an input.
    CHECK(run("screen --json " + q(wav) + " " + q(wav)).status != 0);
    CHECK(fs::file_size(wav) > 1000);
}

TEST_CASE("analyze --reference: another machine's baseline accepted explicitly, its differences stated", "[cli]") {
    const fs::path wav = make_wav("sister-good.wav", 21), other = make_wav("sister-now.wav", 22);
    const fs::path base = workdir() / "sister.json", out = workdir() / "sister-finding.json";
    REQUIRE(run("baseline --machine P-201 --rpm 1485 --vanes 7 --full-scale 50g -o " + q(base) + " " + q(wav)).status == 0);
    // The tag differs: refused as a baseline, naming the way out.
    Run r = run("analyze --baseline " + q(base) + " --machine P-202 --rpm 1485 " + q(other));
    CHECK(r.status == 1);
    CHECK(r.err.find("--reference") != std::string::npos);
    r = run("analyze --reference " + q(base) + " --machine P-202 --rpm 1485 --mount magnet --json " + q(out) + " " +
            q(other));
    REQUIRE(r.status == 0);
    CHECK(r.out.find("a sister machine's baseline") != std::string::npos);
    const auto j = nlohmann::json::parse(slurp(out));
    CHECK(j["reference"]["kind"] == "sister");
    CHECK(j["reference"]["machine"] == "P-201");
    std::set<std::string> fields;
    for (const auto& m : j["reference"]["mismatches"]) fields.insert(m["field"].get<std::string>());
    // The magnet caps the HF band at 5 kHz (models/analyzer.hpp): a sensor limit the sister did not state.
    CHECK(fields == std::set<std::string>{"machine", "mount", "sensor_max_hz"});
    // 3 dB at one speed (models/reference.hpp), in quadrature with the baseline's own spread.
    CHECK(j["reference"]["level_floor_db"].get<double>() == Approx(3.0));
    CHECK(j["indicators"]["hf_band_level_db"]["baseline_sigma"].get<double>() >= 3.0);
    CHECK(j["confidence_grade"] != "high");
    // One of the two, never both, never neither.
    CHECK(run("analyze --baseline " + q(base) + " --reference " + q(base) + " " + q(other)).status == 2);
    r = run("analyze " + q(other));
    CHECK(r.status == 2);
    CHECK(r.err.find("cavitas screen") != std::string::npos);
}

TEST_CASE("baseline --suppression: learned only at a large stated margin, and the findings say so", "[cli]") {
    const fs::path wav = make_wav("suppressed.wav", 31);
    const fs::path base = workdir() / "suppression.json", out = workdir() / "suppression-finding.json";
    const std::string common = "baseline --suppression --machine P-301 --rpm 1485 --vanes 7 --full-scale 50g -o " + q(base);
    // No operating point, or no NPSH3: the margin cannot be shown.
    Run r = run(common + " " + q(wav));
    CHECK(r.status == 1);
    CHECK(r.err.find("suppressed.wav") != std::string::npos);
    r = run(common + " --suction-pressure 200kPa --pressure-ref absolute --temperature 20C " + q(wav));
    CHECK(r.status == 1);
    CHECK(r.err.find("NPSH3") != std::string::npos);
    // NPSHa = (200 kPa - 2.339 kPa) / (998.2 kg/m3 x 9.80665 m/s2) = 20.19 m (water at 20 C, IF97;
    // computed from the definition): 1.35 x an NPSH3 of 15 m is refused, 10 x one of 2 m accepted.
    r = run(common + " --suction-pressure 200kPa --pressure-ref absolute --temperature 20C --npsh3 15m " + q(wav));
    CHECK(r.status == 1);
    CHECK(r.err.find("under the 2.0 x") != std::string::npos);
    CHECK_FALSE(fs::exists(base));
    r = run(common + " --suction-pressure 200kPa --pressure-ref absolute --temperature 20C --npsh3 2m " + q(wav));
    REQUIRE(r.status == 0);
    CHECK(r.out.find("a suppression reference") != std::string::npos);
    const auto b = nlohmann::json::parse(slurp(base));
    CHECK(b["suppression"]["npsha_low_m"].get<double>() == Approx(20.19).margin(0.02));
    CHECK(b["suppression"]["ratio_low"].get<double>() == Approx(10.09).margin(0.02));
    REQUIRE(run("analyze --baseline " + q(base) + " --rpm 1485 --json " + q(out) + " " + q(wav)).status == 0);
    const auto f = nlohmann::json::parse(slurp(out));
    CHECK(f["reference"]["kind"] == "suppression");
    CHECK(f["evidence"][0].get<std::string>().find("judged against a suppression reference") != std::string::npos);
}
