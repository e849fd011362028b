// How fast and how lean is `cavitas analyze`, measured against the same work
// done with numpy/scipy and against the irreducible spectral work, in one run
// on one generated recording (the machine is shared and noisy: ratios from one
// run are what to compare).
//
//   cavitas-bench [--seconds 60] [--fs 96000] [--reps 5] [--memory-minutes 1,10,60]
//                 [--route-files 32] [--python PATH] [--cavitas PATH] [--skip-scipy] [--keep DIR]
//
// 1. cavitas analyze, the whole process (start-up, decode, SHA-256, quality gate,
//    every indicator, classification), on a 60 s, 96 kHz, 16-bit mono recording
//    of developed cavitation: median of --reps runs, one core (nothing in
//    analyze is threaded); with the FFT plans kept from earlier runs (the
//    bench's own cache folder, as a user's laptop has after its first analysis)
//    and, alternating with those runs, with no plans kept.
// 2. The same indicators the numpy/scipy way (tools/bench/scipy_pipeline.py),
//    timed inside Python, start-up excluded: median of the runs.
// 3. A bare FFTW Welch pass over the same samples (8192-point frames, Hann, 50 %
//    overlap, double precision, the plan made once): the spectral work no
//    analysis can avoid; and the time to decode the file into memory.
// 4. Peak resident memory of analyze (/usr/bin/time -v) on 1, 10 and 60 min
//    recordings made by repeating the 60 s one (streamed; memory must not grow).
// 5. route throughput on --jobs 1 and --jobs 2 over --route-files recordings
//    of 10 s (default 32, a small route: with fewer, the start-up and the last
//    recording's tail, both serial, weigh more than a real route has them).
// Prints each stage's median and the ratios.
#include <sys/resource.h>
#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

#include <fftw3.h>
#include <sndfile.h>

#include "models/analyzer.hpp"
#include "tools/synth/synth.hpp"

namespace fs = std::filesystem;
using namespace cavitas;

namespace {

std::string opt(int argc, char** argv, const char* name, const std::string& def) {
    for (int i = 1; i + 1 < argc; ++i)
        if (std::string(argv[i]) == name) return argv[i + 1];
    return def;
}
bool flag(int argc, char** argv, const char* name) {
    for (int i = 1; i < argc; ++i)
        if (std::string(argv[i]) == name) return true;
    return false;
}

double median(std::vector<double> v) {
    std::sort(v.begin(), v.end());
    return v.empty() ? 0.0 : (v.size() % 2 ? v[v.size() / 2] : 0.5 * (v[v.size() / 2 - 1] + v[v.size() / 2]));
}

double now() { return std::chrono::duration<double>(std::chrono::steady_clock::now().time_since_epoch()).count(); }

// Run a command (no shell), wall seconds; stdout to `out_path` when given. -1 on failure.
double timed(const std::vector<std::string>& args, const std::string& out_path = "/dev/null", int* status_out = nullptr) {
    const double t0 = now();
    const pid_t pid = fork();
    if (pid == 0) {
        FILE* o = std::fopen(out_path.c_str(), "w");
        if (o) dup2(fileno(o), 1);
        FILE* e = std::fopen("/dev/null", "w");
        if (e) dup2(fileno(e), 2);
        std::vector<char*> a;
        for (const auto& s : args) a.push_back(const_cast<char*>(s.c_str()));
        a.push_back(nullptr);
        execvp(a[0], a.data());
        _exit(127);
    }
    int status = 0;
    waitpid(pid, &status, 0);
    const double t = now() - t0;
    if (status_out) *status_out = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
    return WIFEXITED(status) && WEXITSTATUS(status) == 0 ? t : -1.0;
}

std::string slurp(const fs::path& p) {
    std::ifstream in(p);
    std::stringstream ss;
    ss << in.rdbuf();
    return ss.str();
}

void write16(const fs::path& path, const std::vector<float>& g, double fs_hz, int repeat = 1) {
    SF_INFO info{};
    info.samplerate = static_cast<int>(fs_hz);
    info.channels = 1;
    info.format = SF_FORMAT_WAV | SF_FORMAT_PCM_16;
    if (static_cast<double>(g.size()) * repeat * 2 > 4.0e9) info.format = SF_FORMAT_W64 | SF_FORMAT_PCM_16;
    SNDFILE* f = sf_open(path.string().c_str(), SFM_WRITE, &info);
    if (!f) {
        std::fprintf(stderr, "bench: cannot write %s\n", path.string().c_str());
        std::exit(1);
    }
    std::vector<float> scaled(g.size());
    for (std::size_t i = 0; i < g.size(); ++i) scaled[i] = static_cast<float>(g[i] / synth::kFullScaleG);
    for (int r = 0; r < repeat; ++r) sf_writef_float(f, scaled.data(), static_cast<sf_count_t>(scaled.size()));
    sf_close(f);
}

std::vector<float> make(synth::Kind kind, double seconds, double fs_hz, std::uint64_t seed) {
    synth::CaseSpec spec;
    spec.machine = synth::machine_by_tag("OW-P101");
    spec.machine.fs_hz = fs_hz;
    spec.kind = kind;
    spec.duration_s = seconds;
    spec.seed = seed;
    spec.severity = 0.5;
    return synth::synthesize_recording(spec).g;
}

// Decode into memory (libsndfile, float), seconds.
double decode(const fs::path& p, std::vector<double>& x, double& fs_hz) {
    const double t0 = now();
    SF_INFO info{};
    SNDFILE* f = sf_open(p.string().c_str(), SFM_READ, &info);
    if (!f) return -1.0;
    x.resize(static_cast<std::size_t>(info.frames));
    sf_readf_double(f, x.data(), info.frames);
    sf_close(f);
    fs_hz = info.samplerate;
    return now() - t0;
}

// Welch: 8192-point frames, Hann, 50 % overlap, FFTW r2c planned once.
double bare_welch(const std::vector<double>& x) {
    const int n = 8192;
    double* in = fftw_alloc_real(n);
    fftw_complex* out = fftw_alloc_complex(n / 2 + 1);
    fftw_plan plan = fftw_plan_dft_r2c_1d(n, in, out, FFTW_ESTIMATE);
    std::vector<double> w(n), psd(n / 2 + 1, 0.0);
    for (int i = 0; i < n; ++i) w[i] = 0.5 - 0.5 * std::cos(2.0 * M_PI * i / n);
    const double t0 = now();
    std::size_t frames = 0;
    for (std::size_t s = 0; s + n <= x.size(); s += n / 2, ++frames) {
        for (int i = 0; i < n; ++i) in[i] = x[s + i] * w[i];
        fftw_execute(plan);
        for (int k = 0; k <= n / 2; ++k) psd[k] += out[k][0] * out[k][0] + out[k][1] * out[k][1];
    }
    const double t = now() - t0;
    volatile double sink = psd[n / 4] / static_cast<double>(frames);
    (void)sink;
    fftw_destroy_plan(plan);
    fftw_free(in);
    fftw_free(out);
    return t;
}

// cavitas's analysis of the same samples in memory, in this process: what
// analyze does between decoding and classifying (quality gate, every indicator,
// the speed search), the analogue of the bare Welch pass (whose plan and
// buffers are made before its clock starts; here the first, untimed run makes
// the plans and later runs reuse the freed buffers).
double analysis_in_memory(const std::vector<double>& x, double fs_hz) {
    std::vector<float> block(1u << 15);
    const cavitas::models::AnalysisSetup setup = cavitas::models::choose_setup(fs_hz, 0.0, 1.0);
    cavitas::models::MachineContext machine;
    machine.rpm = 1485.0;
    machine.vanes = 7;
    const double t0 = now();
    cavitas::models::RecordingAnalyzer a(setup, machine, 1.0, x.size());
    for (std::size_t at = 0; at < x.size(); at += block.size()) {
        const std::size_t len = std::min(block.size(), x.size() - at);
        for (std::size_t i = 0; i < len; ++i) block[i] = static_cast<float>(x[at + i]);
        a.push(std::span<float>(block.data(), len));
    }
    const cavitas::models::RecordingAnalysis r = a.finish();
    const double t = now() - t0;
    volatile double sink = r.duration_s;
    (void)sink;
    return t;
}

long max_rss_kb(const std::vector<std::string>& args) {
    std::vector<std::string> a = {"/usr/bin/time", "-v"};
    a.insert(a.end(), args.begin(), args.end());
    // /usr/bin/time writes its report to stderr: capture it through a file.
    const fs::path log = fs::temp_directory_path() / ("cavitas-bench-time-" + std::to_string(getpid()) + ".txt");
    const pid_t pid = fork();
    if (pid == 0) {
        FILE* o = std::fopen("/dev/null", "w");
        if (o) dup2(fileno(o), 1);
        FILE* e = std::fopen(log.string().c_str(), "w");
        if (e) dup2(fileno(e), 2);
        std::vector<char*> v;
        for (const auto& s : a) v.push_back(const_cast<char*>(s.c_str()));
        v.push_back(nullptr);
        execv(v[0], v.data());
        _exit(127);
    }
    int status = 0;
    waitpid(pid, &status, 0);
    const std::string text = slurp(log);
    fs::remove(log);
    const auto at = text.find("Maximum resident set size (kbytes):");
    return at == std::string::npos ? -1 : std::atol(text.c_str() + at + 36);
}

double json_number(const std::string& j, const std::string& key) {
    const auto at = j.find("\"" + key + "\":");
    return at == std::string::npos ? -1.0 : std::atof(j.c_str() + at + key.size() + 3);
}

}  // namespace

int main(int argc, char** argv) {
    if (flag(argc, argv, "--help")) {
        std::puts("cavitas-bench [--seconds 60] [--fs 96000] [--reps 5] [--memory-minutes 1,10,60] [--route-files 32]\n"
                  "              [--python PATH] [--cavitas PATH] [--skip-scipy] [--keep DIR]\n"
                  "Times cavitas analyze against the numpy/scipy pipeline and a bare FFTW Welch pass on one\n"
                  "generated recording, measures analyze's peak memory on long recordings and route's\n"
                  "throughput on 1 and 2 jobs, and prints the ratios. Takes a few minutes.");
        return 0;
    }
    const double seconds = std::atof(opt(argc, argv, "--seconds", "60").c_str());
    const double fs_hz = std::atof(opt(argc, argv, "--fs", "96000").c_str());
    const int reps = std::max(1, std::atoi(opt(argc, argv, "--reps", "5").c_str()));
    const int route_files = std::max(2, std::atoi(opt(argc, argv, "--route-files", "32").c_str()));
    std::vector<int> minutes;
    {
        std::stringstream ss(opt(argc, argv, "--memory-minutes", "1,10,60"));
        std::string m;
        while (std::getline(ss, m, ','))
            if (std::atoi(m.c_str()) > 0) minutes.push_back(std::atoi(m.c_str()));
    }
    const fs::path self = fs::canonical("/proc/self/exe");
    const std::string cavitas = opt(argc, argv, "--cavitas", (self.parent_path().parent_path().parent_path() / "cavitas").string());
    const std::string python = opt(argc, argv, "--python", "/usr/bin/python3");
    const fs::path script = fs::path(CAVITAS_BENCH_DIR) / "scipy_pipeline.py";
    const std::string keep = opt(argc, argv, "--keep", "");
    const fs::path dir = keep.empty() ? fs::temp_directory_path() / ("cavitas-bench-" + std::to_string(getpid())) : fs::path(keep);
    fs::create_directories(dir);
    if (!fs::exists(cavitas)) {
        std::fprintf(stderr, "bench: %s not found (build cavitas, or give --cavitas PATH)\n", cavitas.c_str());
        return 1;
    }

    std::fprintf(stderr, "bench: generating recordings in %s\n", dir.string().c_str());
    // Every cavitas run below keeps its FFT plans here, not in the user's cache.
    const std::string plan_cache = (dir / "plan-cache").string();
    ::setenv("CAVITAS_CACHE_DIR", plan_cache.c_str(), 1);
    const fs::path good = dir / "baseline.wav", test = dir / "developed.wav", base = dir / "baseline.json";
    const std::vector<float> g_good = make(synth::Kind::healthy, 20.0, fs_hz, 1);
    const std::vector<float> g_test = make(synth::Kind::developed, seconds, fs_hz, 2);
    write16(good, g_good, fs_hz);
    write16(test, g_test, fs_hz);
    if (timed({cavitas, "baseline", "--rpm", "1485", "--vanes", "7", "--full-scale", "50g", "-o", base.string(),
               good.string()}) < 0) {
        std::fprintf(stderr, "bench: cavitas baseline failed\n");
        return 1;
    }

    // 1 and 3. analyze, whole process: with the FFT plans kept by the runs
    // before (src/io/plan_store.hpp; the baseline run above filled the bench's own
    // cache folder), and with no plan cache at all; between them the decode and
    // the bare Welch pass, so that every stage sees the machine in the same
    // state (it is shared: its speed drifts by tens of per cent over a minute).
    std::vector<double> x;
    double fs_read = 0;
    decode(test, x, fs_read);
    analysis_in_memory(x, fs_read);  // plans made here, outside the clock
    std::vector<double> t_an, t_cold, t_dec, t_welch, t_mem;
    for (int i = 0; i < reps; ++i) {
        for (const bool cold : {false, true}) {
            ::setenv("CAVITAS_CACHE_DIR", cold ? "" : plan_cache.c_str(), 1);
            const fs::path j = dir / "finding.json";
            const double t = timed({cavitas, "analyze", "--baseline", base.string(), "--rpm", "1485", "--json",
                                    j.string(), test.string()});
            if (t < 0 || slurp(j).find("\"verdict\": \"developed\"") == std::string::npos) {
                std::fprintf(stderr, "bench: analyze failed or did not call the developed recording developed\n");
                return 1;
            }
            (cold ? t_cold : t_an).push_back(t);
            if (cold) {
                t_dec.push_back(decode(test, x, fs_read));
                t_welch.push_back(bare_welch(x));
                t_mem.push_back(analysis_in_memory(x, fs_read));
            }
        }
    }
    ::setenv("CAVITAS_CACHE_DIR", plan_cache.c_str(), 1);
    // 2. scipy.
    double scipy_total = -1, scipy_kurt = -1, scipy_hilbert = -1;
    std::string scipy_versions;
    if (!flag(argc, argv, "--skip-scipy")) {
        const fs::path out = dir / "scipy.json";
        // The HF band cavitas judges at this rate (0.4 fs top; the bottom at top / 4).
        const double top = 0.4 * fs_hz, low = std::max(1000.0, std::min(5000.0, top / 4.0));
        const double t = timed({python, script.string(), test.string(), std::to_string(low), std::to_string(top),
                                std::to_string(std::min(reps, 3))},
                               out.string());
        const std::string j = slurp(out);
        if (t > 0) {
            scipy_total = json_number(j, "total_s");
            scipy_kurt = json_number(j, "fast_kurtogram_s");
            scipy_hilbert = json_number(j, "bandpass_hilbert_envelope_s");
            const auto a = j.find("\"numpy\""), b = j.find("\"audio_s\"");
            if (a != std::string::npos && b != std::string::npos) scipy_versions = j.substr(a, b - a - 2);
        } else {
            std::fprintf(stderr, "bench: the scipy pipeline did not run (%s with numpy and scipy?)\n", python.c_str());
        }
    }
    // 4. memory on long recordings.
    std::vector<std::pair<int, long>> rss;
    for (int m : minutes) {
        const fs::path p = dir / ("long-" + std::to_string(m) + "min.wav");
        const int repeat = std::max(1, static_cast<int>(std::lround(m * 60.0 / seconds)));
        write16(p, g_test, fs_hz, repeat);
        rss.emplace_back(m, max_rss_kb({cavitas, "analyze", "--baseline", base.string(), "--rpm", "1485", p.string()}));
        fs::remove(p);
    }
    // 5. route on 1 and 2 jobs.
    double route1 = -1, route2 = -1;
    {
        const fs::path rdir = dir / "route";
        fs::create_directories(rdir / "lib" / "OW-P101");
        fs::copy_file(base, rdir / "lib" / "OW-P101" / "DE-H.json", fs::copy_options::overwrite_existing);
        std::ofstream m(rdir / "route.csv");
        m << "file,machine,point,channel,datetime,rpm,vanes\n";
        const std::vector<float> g10(g_test.begin(), g_test.begin() + static_cast<std::ptrdiff_t>(std::min<std::size_t>(g_test.size(), static_cast<std::size_t>(10 * fs_hz))));
        for (int i = 0; i < route_files; ++i) {
            const std::string name = "r" + std::to_string(i) + ".wav";
            write16(rdir / name, g10, fs_hz);
            m << name << ",OW-P101,DE-H,0,2026-11-0" << 1 + i % 9 << "T08:" << 10 + i << ",1485,7\n";
        }
        m.close();
        std::vector<double> r1, r2;
        for (int i = 0; i < std::min(reps, 5); ++i) {
            r1.push_back(timed({cavitas, "route", (rdir / "route.csv").string(), "--baselines", (rdir / "lib").string(),
                                "--no-store", "--jobs", "1", "--out", (rdir / "out1").string()}));
            r2.push_back(timed({cavitas, "route", (rdir / "route.csv").string(), "--baselines", (rdir / "lib").string(),
                                "--no-store", "--jobs", "2", "--out", (rdir / "out2").string()}));
        }
        route1 = median(r1);
        route2 = median(r2);
    }

    const double an = median(t_an), cold = median(t_cold), dec = median(t_dec), wel = median(t_welch),
                 mem = median(t_mem);
    std::printf("cavitas-bench: %.0f s of %.0f Hz 16-bit mono audio (generated developed cavitation), %d runs each, medians\n",
                seconds, fs_hz, reps);
    std::printf("  %-58s %9.3f s   %7.0fx real time\n", "cavitas analyze, whole process, one core", an, seconds / an);
    std::printf("  %-58s %9.3f s   %7.0fx real time\n", "  the same with no FFT plans kept from earlier runs", cold,
                seconds / cold);
    if (scipy_total > 0) {
        std::printf("  %-58s %9.3f s   (kurtogram %.3f s, band-pass + Hilbert %.3f s)\n",
                    "numpy/scipy pipeline, compute only", scipy_total, scipy_kurt, scipy_hilbert);
        std::printf("      %s\n", scipy_versions.c_str());
    }
    std::printf("  %-58s %9.3f s   %7.0fx real time\n", "cavitas analysis of the samples in memory (in process)", mem,
                seconds / mem);
    std::printf("  %-58s %9.3f s\n", "bare FFTW Welch (8192-point frames, 50 % overlap)", wel);
    std::printf("  %-58s %9.3f s\n", "decode the file (libsndfile, to memory)", dec);
    std::printf("ratios:\n");
    if (scipy_total > 0) std::printf("  scipy / cavitas            %8.1f   (target >= 20)\n", scipy_total / an);
    std::printf("  cavitas / bare Welch       %8.1f   (target <= 5; %.1f with no plans kept)\n", an / wel, cold / wel);
    std::printf("    analysis in memory / bare Welch %.1f (the same samples, both in this process)\n", mem / wel);
    std::printf("  audio s per wall s         %8.0f   (target >= 300; %.0f with no plans kept)\n", seconds / an,
                seconds / cold);
    std::printf("peak resident memory of analyze (/usr/bin/time -v):\n");
    for (const auto& [m, kb] : rss) std::printf("  %3d min   %8.1f MiB   (target < 150)\n", m, static_cast<double>(kb) / 1024.0);
    std::printf("route over %d recordings of 10 s:\n", route_files);
    std::printf("  --jobs 1  %7.3f s  (%.2f recordings/s)\n", route1, route_files / route1);
    std::printf("  --jobs 2  %7.3f s  (%.2f recordings/s), speed-up %.2fx (target >= 1.7)\n", route2, route_files / route2,
                route1 / route2);
    if (keep.empty()) {
        std::error_code ec;
        fs::remove_all(dir, ec);
    }
    return 0;
}
