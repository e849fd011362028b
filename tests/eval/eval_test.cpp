// End to end on the generator's labelled evaluation set: learn each machine's
// baseline from its baseline recordings, judge every test recording through the
// same path as `cavitas analyze` (file -> reader -> analyzer -> classifier), print
// the confusion matrix and hold the detector to:
//   three-class accuracy >= 0.95, no developed case called normal,
//   false alarms (look-alikes called cavitation) <= 5 %.
// The data are synthetic (tools/synth): they test the rules against the physics
// we modelled, not against a real machine; the real-data tests do that.
//
//   cavitas_eval EVALSET_DIR [--estimate-speed]   (made by: cavitas-synth eval EVALSET_DIR)
// With --estimate-speed the test recordings are judged without their speed, as
// `analyze` without --rpm does: the speed is searched near the baseline's.
#include <algorithm>
#include <array>
#include <cstdio>
#include <fstream>
#include <iostream>
#include <map>
#include <sstream>
#include <string>
#include <vector>

#include "models/classifier.hpp"
#include "src/analysis/analysis.hpp"
#include "tests/support/evalset.hpp"

using namespace cavitas;

namespace {

using Row = cavitas::test::EvalRow;

std::vector<Row> read_manifest(const std::string& path) { return cavitas::test::read_eval_manifest(path); }

}  // namespace

int main(int argc, char** argv) {
    const bool estimate_speed = argc == 3 && std::string(argv[2]) == "--estimate-speed";
    if (argc != 2 && !estimate_speed) {
        std::cerr << "usage: cavitas_eval EVALSET_DIR [--estimate-speed]\n";
        return 2;
    }
    const std::string dir = argv[1];
    try {
        const auto rows = read_manifest(dir + "/manifest.csv");
        std::map<std::string, models::Baseline> baselines;
        std::map<std::string, std::vector<Row>> good;
        for (const auto& r : rows)
            if (r.role == "baseline") good[r.machine].push_back(r);
        for (const auto& [machine, list] : good) {
            std::vector<models::RecordingAnalysis> an;
            std::optional<models::AnalysisSetup> setup;
            app::Calibration cal{list.front().full_scale_g, "g"};
            for (const auto& r : list) {
                models::MachineContext m;
                m.rpm = r.rpm;
                m.vanes = r.vanes;
                auto a = app::analyze_file(dir + "/" + r.file, {}, {}, app::StoredCalibration{cal, "FS"}, setup, 0.0, m);
                if (!setup) setup = a.analysis.setup;
                an.push_back(std::move(a.analysis));
            }
            models::Baseline b = models::learn_baseline(an);
            b.unit = "g";
            b.full_scale = cal.full_scale;
            b.sources.resize(list.size());
            baselines[machine] = b;
        }
        // confusion[true][predicted], predicted includes indeterminate.
        std::array<std::array<int, 4>, 4> confusion{};
        std::map<std::string, std::array<int, 4>> by_kind;
        int lookalikes = 0, false_alarms = 0, developed_missed = 0, total = 0, correct = 0, flagged = 0;
        for (const auto& r : rows) {
            if (r.role != "test") continue;
            const auto it = baselines.find(r.machine);
            if (it == baselines.end()) throw std::runtime_error("no baseline recordings for " + r.machine);
            const models::Baseline& b = it->second;
            models::MachineContext m;
            if (!estimate_speed) m.rpm = r.rpm;
            m.vanes = b.vanes;
            m.rpm_hint = b.rpm;
            app::Calibration cal{b.full_scale, "g"};
            const auto a = app::analyze_file(dir + "/" + r.file, {}, {}, app::StoredCalibration{cal, "FS"}, b.setup, 0.0, m);
            const auto f = models::classify(a.analysis, b, "g");
            const int t = test::verdict_index(r.label), p = test::verdict_index(models::to_string(f.verdict));
            // Every generated recording is clean: the quality gate must not flag one.
            if (f.quality.warning_count() > 0 || !f.quality.usable()) {
                ++flagged;
                std::cout << "quality flagged a clean recording: " << r.file << "\n";
            }
            confusion[static_cast<std::size_t>(t)][static_cast<std::size_t>(p)]++;
            by_kind[r.kind][static_cast<std::size_t>(p)]++;
            ++total;
            if (t == p) ++correct;
            const bool lookalike = r.label == "normal" && r.kind != "healthy";
            if (lookalike) {
                ++lookalikes;
                if (p == 1 || p == 2) ++false_alarms;
            }
            if (t == 2 && p != 2 && p != 1) ++developed_missed;
            if (t != p)
                std::cout << "miss: " << r.file << " (" << r.kind << ") called " << models::to_string(f.verdict)
                          << ", HF " << f.hf_rise_db << " dB\n";
        }
        const std::string title = "confusion matrix (rows: truth, columns: verdict), " + std::to_string(total) + " recordings";
        test::print_confusion(confusion, 3, title.c_str());
        std::printf("\nby generated kind:\n");
        for (const auto& [kind, v] : by_kind)
            std::printf("%-12s%11d%11d%11d%11d\n", kind.c_str(), v[0], v[1], v[2], v[3]);
        const double accuracy = total ? static_cast<double>(correct) / total : 0.0;
        const double fa_rate = lookalikes ? static_cast<double>(false_alarms) / lookalikes : 0.0;
        std::printf("\nthree-class accuracy %.3f (need >= 0.95)\n", accuracy);
        std::printf("developed called normal or indeterminate: %d (need 0)\n", developed_missed);
        std::printf("false-alarm rate on look-alikes %.3f (%d of %d; need <= 0.05)\n", fa_rate, false_alarms, lookalikes);
        std::printf("clean recordings flagged by the quality gate: %d (need 0)\n", flagged);
        const int failed = (accuracy >= 0.95 ? 0 : 1) + (developed_missed == 0 ? 0 : 1) + (fa_rate <= 0.05 ? 0 : 1) +
                           (flagged == 0 ? 0 : 1);
        std::printf("%d passed, %d failed\n", 4 - failed, failed);
        return failed == 0 ? 0 : 1;
    } catch (const std::exception& e) {
        std::cerr << "cavitas_eval: " << e.what() << "\n";
        return 1;
    }
}
