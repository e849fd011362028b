// The field set (cavitas-synth field): what a route meets beyond the evaluation
// set - variable-speed pumps, re-mounted visits, spoiled baselines, inner-race
// faults on pumps with vanes, speeds the tool must find, 1-2 s captures. Every
// group's baseline is learned and every test judged through the commands'
// own path (run_baseline, analyze: sidecars, speed model, checks, margin).
//
// Prints the confusion matrix (due verdict x verdict given), the baseline
// hazards found, and the reliability table of the confidence; exits 1 when a
// target is missed. Targets (the issue's): three-class accuracy >= 0.97 on the
// rows due a verdict, no developed case missed, false alarms on look-alikes
// <= 2 %, every hazard warned and no clean baseline warned, ECE <= 0.10.
#include <algorithm>
#include <array>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <iostream>
#include <map>
#include <sstream>
#include <string>
#include <vector>

#include "models/calibration.hpp"
#include "src/io/baseline_io.hpp"
#include "src/commands/commands.hpp"
#include "tests/support/evalset.hpp"

namespace fs = std::filesystem;
using namespace cavitas;

namespace {

struct Group {
    std::vector<test::EvalRow> baselines, tests;
};

// The baseline of a group, learned as `cavitas baseline` learns it, one speed per recording.
std::string learn(const std::string& dir, const std::string& name, const Group& g, const fs::path& out_dir,
                  std::vector<models::BaselineWarning>& warnings) {
    app::BaselineOptions o;
    for (const auto& r : g.baselines) {
        o.recordings.push_back(dir + "/" + r.file);
        o.rpms.push_back(r.rpm);
    }
    o.vanes = g.baselines.front().vanes;
    o.calibration.full_scale = "50g";
    o.machine = g.baselines.front().machine;
    o.output = (out_dir / (name + ".json")).string();
    std::ostringstream out, err;
    app::run_baseline(o, out, err);
    warnings = app::read_baseline_file(o.output).warnings;
    return o.output;
}

struct Scores {
    std::vector<double> raw;
    std::vector<int> right;
};

// --fit DIR...: Platt scaling of the raw scores on sets made with other seeds
// than the ones the tests evaluate; prints the constants for classifier.cpp.
int fit(const std::vector<std::string>& dirs);
int evaluate(const std::string& dir, Scores* scores);

}  // namespace

int main(int argc, char** argv) {
    const std::vector<std::string> args(argv + 1, argv + argc);
    if (args.size() >= 2 && args.front() == "--fit") return fit({args.begin() + 1, args.end()});
    if (args.size() != 1) {
        std::cerr << "usage: cavitas_field_eval SET_DIR | --fit SET_DIR...\n";
        return 2;
    }
    return evaluate(args.front(), nullptr);
}

namespace {

int fit(const std::vector<std::string>& dirs) {
    Scores all;
    for (const auto& d : dirs) evaluate(d, &all);
    std::vector<double> logit;
    for (double r : all.raw) {
        const double s = std::clamp(r, 0.01, 0.99);
        logit.push_back(std::log(s / (1.0 - s)));
    }
    const auto p = models::fit_platt(logit, all.right);
    std::printf("\nPlatt fit on %zu verdicts: A = %.6f, B = %.6f\n", logit.size(), p.a, p.b);
    std::vector<double> conf;
    for (double r : all.raw) conf.push_back(models::calibrated_confidence(r, {p.a, p.b}));
    const auto rel = models::reliability(conf, all.right, 10);
    std::printf("on the fitting sets: ECE %.3f, Brier %.3f\n", rel.ece, rel.brier);
    return 0;
}

int evaluate(const std::string& dir, Scores* scores) {
    try {
        std::map<std::string, Group> groups;
        for (auto r : test::read_eval_manifest(dir + "/manifest.csv")) {
            if (r.group.empty()) r.group = r.machine;  // the evaluation set: one baseline per machine
            (r.role == "baseline" ? groups[r.group].baselines : groups[r.group].tests).push_back(r);
        }
        const fs::path out_dir = fs::path(dir) / "baselines";
        fs::create_directories(out_dir);

        std::array<std::array<int, 4>, 4> confusion{};
        int hazards = 0, hazards_found = 0, clean = 0, clean_warned = 0;
        int due = 0, correct = 0, developed_missed = 0, lookalikes = 0, false_alarms = 0;
        std::vector<double> conf;
        std::vector<int> right;
        for (const auto& [name, g] : groups) {
            if (g.baselines.empty()) throw std::runtime_error("group " + name + " has no baseline recordings");
            std::vector<models::BaselineWarning> warnings;
            const std::string base = learn(dir, name, g, out_dir, warnings);
            std::string hazard = "none";
            for (const auto& r : g.baselines)
                if (r.hazard != "none") hazard = r.hazard;
            if (hazard != "none") {
                ++hazards;
                if (!warnings.empty()) ++hazards_found;
                else std::cout << "hazard not warned: " << name << " (" << hazard << ")\n";
            } else {
                ++clean;
                if (!warnings.empty()) {
                    ++clean_warned;
                    std::cout << "clean baseline warned: " << name << ": " << warnings.front().message << "\n";
                }
            }
            for (const auto& r : g.tests) {
                app::AnalysisRequest o;
                o.baseline = base;
                o.recording = dir + "/" + r.file;
                if (r.rpm_given) o.rpm = r.rpm;
                const auto f = app::analyze(o).finding;
                const int t = test::verdict_index(r.expect), p = test::verdict_index(models::to_string(f.verdict));
                confusion[static_cast<std::size_t>(t)][static_cast<std::size_t>(p)]++;
                // Calibration counts the verdicts made on rows due one (the confidence of a verdict).
                if (t < 3 && p < 3) {
                    conf.push_back(f.confidence);
                    right.push_back(t == p ? 1 : 0);
                    if (scores) {
                        scores->raw.push_back(f.raw_score);
                        scores->right.push_back(t == p ? 1 : 0);
                    }
                }
                if (t < 3) {
                    ++due;
                    if (t == p) ++correct;
                }
                if (t == 2 && p != 1 && p != 2) ++developed_missed;
                const bool lookalike = r.expect == "normal" && r.kind != "healthy";
                if (lookalike) {
                    ++lookalikes;
                    if (p == 1 || p == 2) ++false_alarms;
                }
                if (t != p)
                    std::cout << "miss: " << name << " " << r.file << " (" << r.kind << ", " << r.rpm << " rpm"
                              << (r.rpm_given ? "" : ", not given") << ") due " << r.expect << ", called "
                              << models::to_string(f.verdict) << ", HF " << f.hf_rise_db << " dB"
                              << (f.reasons.empty() ? "" : ": " + f.reasons.front()) << "\n";
            }
        }
        test::print_confusion(confusion, 4, "confusion matrix (rows: verdict due, columns: verdict given)");
        const auto rel = models::reliability(conf, right, 10);
        std::printf("\nreliability of the confidence (%zu verdicts made on rows due one)\n", rel.n);
        std::printf("%-14s%8s%12s%10s\n", "confidence", "count", "mean conf.", "right");
        for (const auto& b : rel.bins)
            if (b.count > 0)
                std::printf("%4.1f - %-7.1f%8zu%12.3f%10.3f\n", b.low, b.high, b.count, b.mean_confidence, b.accuracy);
        const double accuracy = due ? static_cast<double>(correct) / due : 0.0;
        const double fa = lookalikes ? static_cast<double>(false_alarms) / lookalikes : 0.0;
        std::printf("\nthree-class accuracy %.3f (%d of %d due a verdict or indeterminate; need >= 0.97)\n", accuracy,
                    correct, due);
        std::printf("developed missed: %d (need 0)\n", developed_missed);
        std::printf("false alarms on look-alikes %.3f (%d of %d; need <= 0.02)\n", fa, false_alarms, lookalikes);
        std::printf("baseline hazards warned: %d of %d (need all); clean baselines warned: %d of %d (need 0)\n",
                    hazards_found, hazards, clean_warned, clean);
        std::printf("expected calibration error %.3f, largest bin error %.3f, Brier %.3f (need ECE <= 0.10)\n", rel.ece,
                    rel.mce, rel.brier);
        const int failed = (accuracy >= 0.97 ? 0 : 1) + (developed_missed == 0 ? 0 : 1) + (fa <= 0.02 ? 0 : 1) +
                           (hazards_found == hazards ? 0 : 1) + (clean_warned == 0 ? 0 : 1) + (rel.ece <= 0.10 ? 0 : 1);
        std::printf("%d passed, %d failed\n", 6 - failed, failed);
        return failed == 0 ? 0 : 1;
    } catch (const std::exception& e) {
        std::cerr << "cavitas_field_eval: " << e.what() << "\n";
        return 1;
    }
}

}  // namespace
