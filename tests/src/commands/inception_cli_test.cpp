// The contract of 'cavitas inception' against the real binary: exit statuses,
// one error line naming the sweep's file and line, nothing written on failure,
// and the JSON against its schema (python3-jsonschema, when installed).
#include <catch2/catch.hpp>

#include <nlohmann/json.hpp>

#include <algorithm>
#include <functional>

#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

#include "tests/support/cli.hpp"

namespace fs = std::filesystem;
using cavitas::test::q;
using cavitas::test::Run;
using cavitas::test::slurp;

namespace {

const fs::path& scratch() {
    static const fs::path p = cavitas::test::scratch_dir("inception-cli");
    return p;
}

Run run_cavitas(const std::string& args) { return cavitas::test::run_binary(CAVITAS_BIN, args, scratch()); }

// A small sweep (4 steps of one 3 s recording, inception at 7 m), written once.
const fs::path& sweep() {
    static const fs::path dir = [] {
        const fs::path d = scratch() / "sweep";
        const std::string cmd = std::string("'") + CAVITAS_SYNTH_BIN + "' sweep " + q(d) +
                                " --steps 10,8,6,4 --recordings 1 --seconds 3 --npshi 7 2>/dev/null";
        REQUIRE(std::system(cmd.c_str()) == 0);
        return d;
    }();
    return dir;
}

std::vector<std::string> lines_of(const fs::path& p) {
    std::vector<std::string> v;
    std::ifstream in(p);
    for (std::string line; std::getline(in, line);) v.push_back(line);
    return v;
}

// SWEEP.csv with `edit` applied to its lines, written beside the recordings as NAME.
fs::path edited(const std::string& name, const std::function<void(std::vector<std::string>&)>& edit) {
    auto lines = lines_of(sweep() / "SWEEP.csv");
    edit(lines);
    const fs::path p = sweep() / name;
    std::ofstream out(p);
    for (const auto& l : lines) out << l << "\n";
    return p;
}

// Replaces the cell `column` (from 0) of a CSV line.
void set_cell(std::string& line, std::size_t column, const std::string& value) {
    std::vector<std::string> cells;
    std::stringstream ss(line);
    for (std::string c; std::getline(ss, c, ',');) cells.push_back(c);
    cells.at(column) = value;
    line.clear();
    for (std::size_t i = 0; i < cells.size(); ++i) line += (i ? "," : "") + cells[i];
}

std::size_t count_lines(const std::string& s) { return static_cast<std::size_t>(std::count(s.begin(), s.end(), '\n')); }

void refused(const fs::path& manifest, int line, const std::string& words) {
    const fs::path out = scratch() / (manifest.stem().string() + ".json");
    const Run r = run_cavitas("inception " + q(manifest) + " --json " + q(out));
    INFO(r.err);
    CHECK(r.status == 1);
    CHECK(count_lines(r.err) == 1);
    CHECK(r.err.find(manifest.filename().string() + (line > 0 ? ":" + std::to_string(line) : "")) != std::string::npos);
    CHECK(r.err.find(words) != std::string::npos);
    CHECK_FALSE(fs::exists(out));
}

}  // namespace

TEST_CASE("inception writes its result and the JSON follows its schema", "[inception][cli]") {
    const fs::path out = scratch() / "ok.json";
    const Run r = run_cavitas("inception " + q(sweep() / "SWEEP.csv") + " --json " + q(out));
    INFO(r.err);
    REQUIRE(r.status == 0);
    CHECK(r.out.find("NPSHi") != std::string::npos);
    CHECK(r.out.find("lock out and tag out") != std::string::npos);
    const auto j = nlohmann::json::parse(slurp(out));
    CHECK(j["schema"] == "cavitas.inception/1");
    CHECK(j["steps"].size() == 4);
    CHECK(j["sweep"]["sha256"].get<std::string>().size() == 64);
    // The truth of the sweep is 7 m with one step (6 m) quiet above and two risen below... so
    // at least the knee lies between the 8 m and 6 m steps (cavitas-synth sweep --help).
    REQUIRE(j["npshi_m"].is_number());
    CHECK(j["npshi_m"].get<double>() > 6.0);
    CHECK(j["npshi_m"].get<double>() < 8.0);
    const std::string check =
        "/usr/bin/python3 -c \"import json,sys,jsonschema; jsonschema.Draft7Validator(json.load(open(sys.argv[1])))"
        ".validate(json.load(open(sys.argv[2]))); print('valid')\" " +
        q(fs::path(CAVITAS_SCHEMAS) / "inception.schema.json") + " " + q(out) + " 2>&1";
    const std::string has = cavitas::test::shell_first_line("/usr/bin/python3 -c 'import jsonschema' && echo yes", scratch());
    if (has == "yes") CHECK(cavitas::test::shell_first_line(check, scratch()) == "valid");
    else WARN("python3-jsonschema is not installed: the schema check is skipped");
}

TEST_CASE("inception refuses a row of another machine, naming the file and line", "[inception][cli]") {
    refused(edited("other-machine.csv", [](auto& l) { set_cell(l[3], 1, "OW-P102"); }), 4, "machine 'OW-P102' differs");
}

TEST_CASE("inception refuses a row without its suction pressure", "[inception][cli]") {
    refused(edited("no-suction.csv", [](auto& l) { set_cell(l[2], 8, ""); }), 3, "no NPSHa");
}

TEST_CASE("inception refuses fewer than three NPSHa steps", "[inception][cli]") {
    refused(edited("two-steps.csv", [](auto& l) { l.resize(3); }), 0, "a sweep needs at least 3");
}

TEST_CASE("inception refuses a missing recording, naming its row", "[inception][cli]") {
    refused(edited("gone.csv", [](auto& l) { set_cell(l[2], 0, "gone.wav"); }), 3, "gone.wav");
}

TEST_CASE("inception refuses a sweep of rows at different sample rates", "[inception][cli]") {
    const fs::path other = sweep() / "other-rate.wav";
    const std::string cmd = std::string("'") + CAVITAS_SYNTH_BIN + "' one --machine OW-P101 --seconds 3 --fs 12800 -o " +
                            q(other) + " 2>/dev/null";
    REQUIRE(std::system(cmd.c_str()) == 0);
    refused(edited("rates.csv", [](auto& l) { set_cell(l[4], 0, "other-rate.wav"); }), 5, "12800 Hz");
}

TEST_CASE("inception usage errors exit 2 and an output may not be an input", "[inception][cli]") {
    CHECK(run_cavitas("inception " + q(sweep() / "SWEEP.csv") + " --at-rpm fast").status == 2);
    CHECK(run_cavitas("inception " + q(sweep() / "SWEEP.csv") + " --paper a3").status == 2);
    CHECK(run_cavitas("inception").status == 2);
    const std::string before = slurp(sweep() / "SWEEP.csv");
    const Run r = run_cavitas("inception " + q(sweep() / "SWEEP.csv") + " --json " + q(sweep() / "SWEEP.csv"));
    CHECK(r.status == 1);
    CHECK(slurp(sweep() / "SWEEP.csv") == before);
    const Run help = run_cavitas("inception --help");
    CHECK(help.status == 0);
    CHECK(help.out.find("two-segment line") != std::string::npos);
}
