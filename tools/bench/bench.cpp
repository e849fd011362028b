// Speed and memory of `cavitas analyze` on long, high-rate recordings.
//
//   cavitas-bench [--seconds S] [--fs HZ] [--reps N] [--long-seconds L] [--keep DIR]
//
// Makes an OW-P101 healthy baseline recording (20 s) and a developed-cavitation
// recording (S s, default 60 s at 96 kHz, 32-bit float WAV) with the generator,
// then times the whole analyze path (read, analyse, classify) N times and prints
// min / mean / max wall time and the real-time factor. Each timed run happens in
// a child process so that its peak resident memory (getrusage of the child) is
// the analysis' own, not the generator's; a second, L s long recording
// (default 4 x S) shows whether memory grows with the record length.
#include <sys/resource.h>
#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <chrono>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <string>
#include <vector>

#include <sndfile.h>

#include "models/classifier.hpp"
#include "src/commands.hpp"
#include "tools/synth/synth.hpp"

namespace fs = std::filesystem;
using namespace cavitas;

namespace {

struct ChildRun {
    double wall_s = 0;
    long max_rss_kb = 0;
    bool ok = false;
};

models::Baseline learn(const std::string& path) {
    models::MachineContext m;
    m.rpm = 1485;
    m.vanes = 7;
    auto r = app::analyze_file(path, 0, {synth::kFullScaleG, "g"}, std::nullopt, 0.0, m);
    models::Baseline b = models::learn_baseline({r.analysis});
    b.unit = "g";
    b.full_scale = synth::kFullScaleG;
    b.sources.resize(1);
    return b;
}

ChildRun timed_analyze(const std::string& path, const models::Baseline& b) {
    int pipefd[2];
    if (pipe(pipefd) != 0) return {};
    const pid_t pid = fork();
    if (pid == 0) {
        close(pipefd[0]);
        const auto t0 = std::chrono::steady_clock::now();
        models::MachineContext m;
        m.rpm = 1485;
        m.vanes = 7;
        m.rpm_hint = b.rpm;
        auto r = app::analyze_file(path, 0, {synth::kFullScaleG, "g"}, b.setup, 0.0, m);
        const auto f = models::classify(r.analysis, b, "g");
        const double s = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
        const int v = static_cast<int>(f.verdict);
        if (write(pipefd[1], &s, sizeof s) != sizeof s || write(pipefd[1], &v, sizeof v) != sizeof v) _exit(1);
        _exit(0);
    }
    close(pipefd[1]);
    ChildRun run;
    double s = 0;
    int v = -1;
    const bool got = read(pipefd[0], &s, sizeof s) == sizeof s && read(pipefd[0], &v, sizeof v) == sizeof v;
    close(pipefd[0]);
    int status = 0;
    rusage ru{};
    wait4(pid, &status, 0, &ru);
    run.ok = got && WIFEXITED(status) && WEXITSTATUS(status) == 0 && v == static_cast<int>(models::Verdict::developed);
    run.wall_s = s;
    run.max_rss_kb = ru.ru_maxrss;
    return run;
}

void make(const fs::path& path, synth::Kind kind, double seconds, double fs_hz, std::uint64_t seed) {
    synth::CaseSpec spec;
    spec.machine = synth::machine_by_tag("OW-P101");
    spec.machine.fs_hz = fs_hz;
    spec.kind = kind;
    spec.duration_s = seconds;
    spec.seed = seed;
    spec.severity = 0.5;
    const auto rec = synth::synthesize_recording(spec);
    synth::write_wav(path.string(), rec.g, fs_hz, synth::kFullScaleG, SF_FORMAT_WAV | SF_FORMAT_FLOAT);
}

double arg(int argc, char** argv, const char* name, double def) {
    for (int i = 1; i + 1 < argc; ++i)
        if (std::string(argv[i]) == name) return std::atof(argv[i + 1]);
    return def;
}

}  // namespace

int main(int argc, char** argv) {
    for (int i = 1; i < argc; ++i)
        if (std::string(argv[i]) == "--help") {
            std::puts("cavitas-bench [--seconds S=60] [--fs HZ=96000] [--reps N=5] [--long-seconds L=4S]\n"
                      "Times the analyze path on a generated S-second developed-cavitation recording and\n"
                      "reports peak memory of the analysis for S and L seconds.");
            return 0;
        }
    const double seconds = arg(argc, argv, "--seconds", 60.0);
    const double fs_hz = arg(argc, argv, "--fs", 96000.0);
    const int reps = std::max(1, static_cast<int>(arg(argc, argv, "--reps", 5)));
    const double long_seconds = arg(argc, argv, "--long-seconds", 4.0 * seconds);
    const fs::path dir = fs::temp_directory_path() / ("cavitas-bench-" + std::to_string(getpid()));
    fs::create_directories(dir);
    const fs::path good = dir / "good.wav", test = dir / "developed.wav", longer = dir / "developed_long.wav";
    std::fprintf(stderr, "bench: generating recordings in %s\n", dir.string().c_str());
    make(good, synth::Kind::healthy, 20.0, fs_hz, 1);
    make(test, synth::Kind::developed, seconds, fs_hz, 2);
    make(longer, synth::Kind::developed, long_seconds, fs_hz, 3);
    const models::Baseline b = learn(good.string());

    std::vector<double> t;
    long rss_short = 0;
    for (int i = 0; i < reps; ++i) {
        const ChildRun r = timed_analyze(test.string(), b);
        if (!r.ok) {
            std::fprintf(stderr, "bench: analysis run failed or did not call the developed case developed\n");
            return 1;
        }
        t.push_back(r.wall_s);
        rss_short = std::max(rss_short, r.max_rss_kb);
    }
    const ChildRun rl = timed_analyze(longer.string(), b);
    const double mn = *std::min_element(t.begin(), t.end()), mx = *std::max_element(t.begin(), t.end());
    double mean = 0;
    for (double v : t) mean += v / static_cast<double>(t.size());
    std::printf("analyze, %.0f s at %.0f Hz (float WAV), %d runs:\n", seconds, fs_hz, reps);
    std::printf("  wall time  min %.3f s  mean %.3f s  max %.3f s\n", mn, mean, mx);
    std::printf("  real-time factor (audio seconds per wall second, best run): %.0fx\n", seconds / mn);
    std::printf("  peak resident memory: %.1f MiB for %.0f s, %.1f MiB for %.0f s (ratio %.2f)\n",
                static_cast<double>(rss_short) / 1024.0, seconds, static_cast<double>(rl.max_rss_kb) / 1024.0,
                long_seconds, static_cast<double>(rl.max_rss_kb) / static_cast<double>(std::max(1L, rss_short)));
    std::error_code ec;
    fs::remove_all(dir, ec);
    return rl.ok ? 0 : 1;
}
