#include "src/commands.hpp"

#include "models/baseline_check.hpp"

#include <unistd.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <ctime>
#include <filesystem>
#include <iostream>
#include <sstream>

#include "models/machine.hpp"
#include "models/quality.hpp"
#include "src/atomic_file.hpp"
#include "src/output_guard.hpp"
#include "src/plain_text.hpp"
#include "src/baseline_io.hpp"
#include "src/plan_store.hpp"
#include "src/report.hpp"
#include "src/store.hpp"

#ifndef CAVITAS_VERSION
#define CAVITAS_VERSION "0.0.0"
#endif

namespace cavitas::app {

const char* const kVersion = CAVITAS_VERSION;

std::string utc_now() {
    std::time_t t = std::time(nullptr);
    std::tm tm{};
    gmtime_r(&t, &tm);
    char buf[32];
    std::strftime(buf, sizeof buf, "%Y-%m-%dT%H:%M:%SZ", &tm);
    return buf;
}

models::RecordingAnalysis analyze_source(AudioSource& source, const models::AnalysisSetup& setup,
                                         const models::MachineContext& machine, const Progress& progress,
                                         models::Fidelity fidelity) {
    const RecordingInfo& info = source.info();
    using clock = std::chrono::steady_clock;
    const auto t0 = clock::now();
    load_saved_fft_plans();
    const auto t1 = clock::now();
    models::RecordingAnalyzer analyzer(setup, machine, info.full_scale_value(), info.frames, fidelity);
    std::vector<float> block(1u << 15);
    std::size_t done = 0;
    const double total_s = info.duration_s();
    double next_report_s = 0.0;
    clock::duration decoding{};
    for (;;) {
        const auto r0 = clock::now();
        const std::size_t got = source.read(block);
        decoding += clock::now() - r0;
        if (got == 0) break;
        analyzer.push(std::span<float>(block.data(), got));
        done += got;
        if (progress) {
            const double done_s = static_cast<double>(done) / info.fs_hz;
            if (done_s >= next_report_s) {
                progress(done_s, total_s);
                next_report_s = done_s + std::max(1.0, total_s / 20.0);
            }
        }
    }
    try {
        models::RecordingAnalysis a = analyzer.finish();
        a.quantum = info.quantum();
        // For developers: where the time went (DEVELOPERS.md, "Where the time goes").
        if (const char* e = std::getenv("CAVITAS_STAGE_TIMES"); e && e[0] && e[0] != '0') {
            auto ms = [](clock::duration d) { return 1e3 * std::chrono::duration<double>(d).count(); };
            std::fprintf(stderr, "stage times of %s (ms):\n  %-18s %8.2f\n  %-18s %8.2f\n", info.path.c_str(),
                         "plan cache", ms(t1 - t0), "decode", ms(decoding));
            for (const auto& st : analyzer.stage_times()) std::fprintf(stderr, "  %-18s %8.2f\n", st.stage, 1e3 * st.seconds);
            std::fprintf(stderr, "  %-18s %8.2f\n", "all of the above", ms(clock::now() - t0));
        }
        return a;
    } catch (const std::runtime_error& e) {
        throw InputError(info.path + ": " + e.what());
    }
}

namespace {
std::string seconds_text(double s) {
    char b[32];
    std::snprintf(b, sizeof b, "%.3g s", s);
    return b;
}
}  // namespace

AnalyzedRecording analyze_file(const std::string& path, int channel, const Calibration& calibration,
                               const std::optional<models::AnalysisSetup>& setup, double sensor_max_hz,
                               const models::MachineContext& machine, const Progress& progress,
                               models::Fidelity fidelity) {
    AnalyzedRecording r;
    SndfileSource source(path, channel, calibration);
    r.info = source.info();
    models::AnalysisSetup use;
    try {
        if (setup && setup->fs_hz == r.info.fs_hz) {
            use = *setup;
            // A short capture is cut into shorter segments (models::segment_for_record).
            const double rpm = machine.rpm ? *machine.rpm : machine.rpm_hint;
            use.segment_s = models::segment_for_record(r.info.duration_s(), setup->segment_s, rpm);
        } else {
            // A different rate than the baseline's: analyse in this file's own
            // bands so the mismatch can be reported (the verdict is indeterminate).
            use = models::choose_setup(r.info.fs_hz, setup ? setup->sensor_max_hz : sensor_max_hz,
                                       setup ? setup->segment_s : 1.0);
        }
    } catch (const std::invalid_argument& e) {
        throw InputError(path + ": " + e.what());
    }
    if (r.info.duration_s() < use.segment_s) {
        const double rpm = machine.rpm ? *machine.rpm : machine.rpm_hint;
        throw InputError(path + ": record of " + seconds_text(r.info.duration_s()) + " is shorter than one " +
                         seconds_text(use.segment_s) + " analysis segment; a verdict needs at least " +
                         seconds_text(models::min_record_s(3, rpm)) + (rpm > 0.0 ? " at this speed" : ""));
    }
    try {
        r.analysis = analyze_source(source, use, machine, progress, fidelity);
    } catch (const std::invalid_argument& e) {
        throw InputError(path + ": cannot be analysed in these bands: " + e.what());
    }
    // Hashed while decoding; the rest of the file (if any) now.
    const auto h0 = std::chrono::steady_clock::now();
    r.sha256 = source.sha256();
    if (const char* e = std::getenv("CAVITAS_STAGE_TIMES"); e && e[0] && e[0] != '0')
        std::fprintf(stderr, "rest of the hash of %s: %.2f ms\n", path.c_str(),
                     1e3 * std::chrono::duration<double>(std::chrono::steady_clock::now() - h0).count());
    return r;
}

OperatingPointText OperatingPointFlags::text() const {
    OperatingPointText t;
    for (const auto& f : operating_point_fields()) {
        const auto it = values.find(f.key);
        if (it != values.end() && !it->second.empty()) t.emplace_back(f.key, it->second);
    }
    return t;
}

std::optional<ResolvedOperatingPoint> resolve_operating_point(const OperatingPointFlags& flags,
                                                              const std::string& recording) {
    ResolvedOperatingPoint r;
    std::string file;
    if (flags.file) {
        file = *flags.file;
    } else if (!recording.empty()) {
        const std::string side = sidecar_path_for(recording);
        std::error_code ec;
        if (std::filesystem::exists(side, ec)) file = side;
    }
    if (!file.empty()) {
        r.op = read_operating_point_file(file);
        r.sources.push_back(file);
    }
    const OperatingPointText given = flags.text();
    if (!given.empty()) {
        TextOrigin origin;
        origin.flags = true;
        if (flags.origin) origin = *flags.origin;
        r.op.overlay(parse_operating_point(given, origin));
        r.sources.push_back(flags.origin ? flags.origin->file : std::string("command line"));
    }
    if (r.op.empty()) return std::nullopt;
    try {
        r.hydraulics = models::evaluate_operating_point(r.op);
    } catch (const std::invalid_argument& e) {
        if (file.empty() && !flags.origin) throw UsageError(std::string("operating point: ") + e.what());
        std::string where;
        for (const auto& s : r.sources) where += (where.empty() ? "" : " + ") + s;
        throw InputError((file.empty() ? flags.origin->file : file) + ": operating point" +
                         (r.sources.size() > 1 ? " (" + where + ")" : "") + ": " + e.what());
    }
    return r;
}

namespace {

Calibration calibration_of(const std::optional<std::string>& text) {
    return text ? parse_full_scale(*text) : Calibration{};
}

Progress stderr_progress(const std::string& path, std::ostream& err) {
    if (!isatty(STDERR_FILENO)) return {};
    return [&err, path](double done_s, double total_s) {
        if (total_s < 30.0) return;
        err << "\r" << path << ": " << static_cast<int>(done_s) << " / " << static_cast<int>(total_s) << " s analysed"
            << (done_s >= total_s - 0.5 ? "\n" : "") << std::flush;
    };
}

// The lower of a stated limit and the mount's (0 = none stated).
double sensor_limit(double sensor_max_hz, const std::string& mount) {
    double limit = sensor_max_hz > 0.0 ? sensor_max_hz : 0.0;
    if (!mount.empty()) {
        const auto lim = models::mount_limit_hz(mount);
        if (!lim) throw UsageError("--mount '" + mount + "': use handheld, magnet, adhesive or stud");
        limit = limit > 0.0 ? std::min(limit, *lim) : *lim;
    }
    return limit;
}


}  // namespace

// The files an operating point is read from (the --operating-point file, the
// recording's sidecar, an NPSH3 curve either names), as inputs of the guard.
void guard_operating_inputs(OutputGuard& guard, const OperatingPointFlags& flags, const std::string& recording) {
    if (flags.file) guard.input(*flags.file, "operating-point file");
    if (!recording.empty()) guard.input(sidecar_path_for(recording), "sidecar of " + recording);
    if (const auto duty = resolve_operating_point(flags, recording))
        if (!duty->op.npsh3_curve_name.empty()) guard.input(duty->op.npsh3_curve_name, "NPSH3 curve");
}

namespace {

// One known-good recording analysed for a baseline, with its stated duty.
struct LearnedSource {
    models::BaselineSource source;
    models::RecordingAnalysis analysis;
    std::optional<ResolvedOperatingPoint> duty;
};

LearnedSource learn_source(const BaselineOptions& o, std::size_t index, const Calibration& cal,
                           std::optional<models::AnalysisSetup>& setup, double sensor_max,
                           models::MachineContext& machine, std::ostream& err) {
    // The operating point first: a mistyped reading fails before minutes of analysis.
    const std::string& path = o.recordings[index];
    LearnedSource l;
    l.duty = resolve_operating_point(o.operating, path);
    models::MachineContext this_machine = machine;
    if (!o.rpms.empty()) this_machine.rpm = o.rpms[index];
    if (!this_machine.rpm && l.duty && l.duty->op.rpm) this_machine.rpm = l.duty->op.rpm;
    if (!setup) {
        // The first recording fixes the bands and the segment length (--segment).
        const SndfileSource probe(path, o.channel, cal);
        try {
            setup = models::choose_setup(probe.info().fs_hz, sensor_max, o.segment_s);
        } catch (const std::invalid_argument& e) {
            throw InputError(path + ": " + e.what());
        }
    }
    AnalyzedRecording r = analyze_file(path, o.channel, cal, setup, sensor_max, this_machine, stderr_progress(path, err));
    if (r.info.fs_hz != setup->fs_hz)
        throw InputError(path + ": sample rate " + std::to_string(static_cast<int>(r.info.fs_hz)) +
                         " Hz differs from the baseline's " + std::to_string(static_cast<int>(setup->fs_hz)) +
                         " Hz; a baseline needs recordings made the same way");
    // A baseline must be learned from clean recordings: the checks that need
    // no reference (NaN, a dead or stuck signal, clipping, dropouts, DC,
    // ski slope, length) are run against the recording's own statistics.
    models::Baseline self = models::learn_baseline({r.analysis});
    self.unit = cal.unit;
    self.full_scale = cal.full_scale;
    self.channel = o.channel;
    models::RecordingContext ctx;
    ctx.unit = cal.unit;
    ctx.channel = o.channel;
    // The speed is the exception: a baseline may be learned without one (its
    // findings then need a speed given or confirmed against it).
    for (const auto& c : models::assess_quality(r.analysis, self, ctx).checks)
        if (c.status == models::CheckStatus::fail && c.name != "speed_confirmed")
            throw InputError(path + ": cannot serve as a baseline: " + c.message);
    // A speed the spectrum could not confirm is not the baseline's: it stays unknown.
    if (r.analysis.rpm_estimated && !r.analysis.speed_confirmed) {
        err << path << ": shaft speed could not be confirmed from the spectrum (" << r.analysis.speed_how
            << "); the baseline keeps no speed for it: give --rpm\n";
        r.analysis.rpm = 0.0;
        r.analysis.rpm_estimated = false;
    }
    if (!machine.rpm && machine.rpm_hint <= 0.0 && r.analysis.rpm > 0.0) machine.rpm_hint = r.analysis.rpm;
    if (index < o.expected_sha256.size() && o.expected_sha256[index] != r.sha256)
        throw InputError(path + ": changed since the results store recorded it (SHA-256 " + r.sha256.substr(0, 12) +
                         "... now, " + o.expected_sha256[index].substr(0, 12) + "... then); it cannot stand for that visit");
    l.source = models::source_of(r.analysis);
    l.source.file = path;
    l.source.sha256 = r.sha256;
    l.analysis = std::move(r.analysis);
    return l;
}

void write_baseline_summary(std::ostream& out, const std::string& path, const models::Baseline& b,
                            std::size_t stated) {
    out << "baseline written to " << path << "\n"
        << "  " << b.sources.size() << " recording(s), " << b.segments << " segments of " << b.setup.segment_s << " s at "
        << b.setup.fs_hz << " Hz, channel " << b.channel << ", unit " << b.unit << "\n"
        << "  HF band " << b.setup.hf.low_hz << "-" << b.setup.hf.high_hz << " Hz, LF band " << b.setup.lf.low_hz << "-"
        << b.setup.lf.high_hz << " Hz\n";
    const models::SpeedModel& m = b.speed;
    if (m.speeds > 1)
        out << "  shaft speeds " << m.rpm_low << "-" << m.rpm_high << " rpm (" << m.speeds << " speeds); band levels "
            << (m.fitted ? "fitted against speed: HF " + std::to_string(static_cast<int>(std::lround(m.hf_slope_db_per_decade))) +
                               " dB/decade, LF " + std::to_string(static_cast<int>(std::lround(m.lf_slope_db_per_decade))) +
                               " dB/decade"
                         : std::string("scaled by an assumed 40 dB/decade (not two speeds 15 % apart)"))
            << "; judged from " << std::lround(m.covered_low_rpm()) << " to " << std::lround(m.covered_high_rpm()) << " rpm\n";
    else if (b.rpm > 0.0)
        out << "  shaft speed " << b.rpm << " rpm, judged from " << std::lround(m.covered_low_rpm()) << " to "
            << std::lround(m.covered_high_rpm()) << " rpm"
            << (b.rpm_estimated ? " (estimated from the spectrum without a reference: a harmonic-series search can lock "
                                  "on twice or half the speed; give --rpm from a tachometer or the nameplate to be sure)"
                                : "")
            << "\n";
    else
        out << "  shaft speed unknown: give --rpm so that envelope lines can be checked\n";
    if (b.vanes > 0) out << "  " << b.vanes << " vanes, BPF " << models::blade_pass_hz(b.rpm, b.vanes) << " Hz\n";
    out << "  repeatability floor " << models::repeatability_floor_db(b.mount) << " dB ("
        << (b.mount.empty() ? std::string("mount not stated: a magnet's") : b.mount) << ")\n";
    write_operating_point_summary(out, b.operating_point, stated, b.sources.size());
    if (b.warnings.empty()) {
        out << "  checks: nothing found\n";
    } else {
        out << "  WARNINGS (" << b.warnings.size() << "): findings against this baseline will repeat them\n";
        for (const auto& w : b.warnings) out << "    - " << w.message << "\n";
    }
}

// The store's normal visits of a point, newest last: their recordings, speeds and hashes.
BaselineOptions with_store_visits(BaselineOptions o) {
    namespace fs = std::filesystem;
    if (!o.recordings.empty()) throw UsageError("--from-store: give no recordings; they come from the store");
    if (o.machine.empty() || o.point.empty()) throw UsageError("--from-store needs --machine and --point");
    std::error_code ec;
    if (!fs::is_regular_file(*o.from_store, ec)) throw InputError(*o.from_store + ": no such results store");
    const HistoryStore store(*o.from_store);
    std::vector<Measurement> normal;
    for (const auto& m : store.history(o.machine, o.point))
        // A normal verdict at a thin margin is not known-good (margin reading "at_risk").
        if (m.verdict == "normal" && m.agreement != "at_risk") normal.push_back(m);
    if (normal.empty())
        throw InputError(*o.from_store + ": no normal visit of " + o.machine + " " + o.point + " to learn from");
    if (normal.size() > o.last_visits) normal.erase(normal.begin(), normal.end() - static_cast<std::ptrdiff_t>(o.last_visits));
    o.rpms.clear();
    for (const auto& m : normal) {
        const auto f = nlohmann::json::parse(m.finding_json, nullptr, false);
        std::string path = m.file;
        double rpm = 0.0;
        if (!f.is_discarded() && f.contains("input") && f["input"].contains("path") && f["input"]["path"].is_string())
            path = f["input"]["path"].get<std::string>();
        if (!f.is_discarded() && f.contains("speed") && f["speed"].contains("rpm") && f["speed"]["rpm"].is_number())
            rpm = f["speed"]["rpm"].get<double>();
        o.recordings.push_back(path);
        o.rpms.push_back(rpm > 0.0 ? rpm : 0.0);
        o.expected_sha256.push_back(m.sha256);
        o.channel = m.channel;
    }
    // Calibration, vane count and mount as the baseline those visits were judged against, unless given.
    std::error_code ec2;
    if (fs::is_regular_file(normal.back().baseline, ec2)) {
        const models::Baseline used = read_baseline_file(normal.back().baseline);
        if (!o.full_scale && used.unit != "FS") {
            char text[64];
            std::snprintf(text, sizeof text, "%.17g%s", used.full_scale, used.unit.c_str());
            o.full_scale = text;
        }
        if (o.vanes == 0) o.vanes = used.vanes;
        if (o.mount.empty()) o.mount = used.mount;
    }
    // A speed unknown for one visit: let every visit's speed come from its sidecar or the spectrum.
    if (std::find(o.rpms.begin(), o.rpms.end(), 0.0) != o.rpms.end()) o.rpms.clear();
    return o;
}

}  // namespace

void run_baseline(const BaselineOptions& given, std::ostream& out, std::ostream& err) {
    const BaselineOptions o = given.from_store ? with_store_visits(given) : given;
    if (given.from_store)
        out << "learning from " << o.recordings.size() << " normal visit(s) of " << o.machine << " " << o.point << " in "
            << *given.from_store << "\n";
    if (o.recordings.empty()) throw UsageError("baseline: give at least one known-good recording");
    const std::string output = !o.output.empty() ? o.output : o.add_to.value_or("");
    if (output.empty()) throw UsageError("baseline: -o BASELINE.json is required");
    {
        OutputGuard guard;
        for (const auto& rec : o.recordings) {
            guard.input(rec, "recording");
            guard_operating_inputs(guard, o.operating, rec);
        }
        if (o.add_to && *o.add_to != output) guard.input(*o.add_to, "baseline added to");
        if (given.from_store) guard.input(*given.from_store, "results store");
        guard.output(output);
    }
    std::optional<models::Baseline> earlier;
    if (o.add_to) earlier = read_baseline_file(*o.add_to);
    const double sensor_max = sensor_limit(o.sensor_max_hz, o.mount);
    Calibration cal = calibration_of(o.full_scale);
    if (earlier) {
        if (o.full_scale && (cal.unit != earlier->unit || cal.full_scale != earlier->full_scale))
            throw UsageError("--full-scale " + *o.full_scale + " differs from the calibration of " + *o.add_to +
                             "; recordings added to a baseline must be calibrated as it is");
        cal.unit = earlier->unit;
        cal.full_scale = earlier->full_scale;
        if (earlier->sources.empty() || earlier->sources.front().series.segments() == 0)
            throw InputError(*o.add_to + ": made by an older cavitas, it keeps no per-recording values to add to; "
                             "relearn it from its recordings");
        if (o.channel != earlier->channel)
            throw UsageError("--channel " + std::to_string(o.channel) + " differs from the channel " +
                             std::to_string(earlier->channel) + " of " + *o.add_to);
    }
    models::MachineContext machine;
    machine.rpm = o.rpm;
    machine.vanes = earlier ? earlier->vanes : o.vanes;
    if (earlier) machine.rpm_hint = earlier->rpm;
    std::optional<models::AnalysisSetup> setup;
    if (earlier) setup = earlier->setup;
    std::vector<LearnedSource> learned;
    if (!o.rpms.empty() && o.rpms.size() != o.recordings.size())
        throw UsageError("--rpm: " + std::to_string(o.rpms.size()) + " speeds for " + std::to_string(o.recordings.size()) +
                         " recordings; give one speed for all or one per recording, in order");
    for (std::size_t k = 0; k < o.recordings.size(); ++k)
        learned.push_back(learn_source(o, k, cal, setup, sensor_max, machine, err));

    std::vector<models::BaselineSource> sources = earlier ? earlier->sources : std::vector<models::BaselineSource>{};
    std::vector<std::optional<models::Hydraulics>> duties(sources.size());
    std::vector<std::pair<models::OperatingPoint, models::Hydraulics>> stated;
    std::vector<models::RecordingAnalysis> analyses;
    for (auto& l : learned) {
        sources.push_back(l.source);
        duties.push_back(l.duty ? std::optional<models::Hydraulics>(l.duty->hydraulics) : std::nullopt);
        if (l.duty) stated.emplace_back(l.duty->op, l.duty->hydraulics);
        analyses.push_back(std::move(l.analysis));
    }
    models::Baseline b;
    if (earlier) {
        b = models::learn_from_sources(std::move(sources), *setup, earlier->vanes);
        b.spectrum = earlier->spectrum;  // the profile's spread is kept from the first learning
        b.machine = earlier->machine;
        b.mount = earlier->mount;
        b.operating_point = earlier->operating_point;
        b.rpm_estimated = earlier->rpm_estimated;
    } else {
        b = models::learn_baseline(analyses);
        b.sources = std::move(sources);
        b.machine = o.machine;
        b.mount = o.mount;
        b.operating_point = models::summarize(stated);
    }
    for (const auto& a : analyses) b.rpm_estimated = b.rpm_estimated || a.rpm_estimated;
    b.cavitas_version = kVersion;
    b.created_utc = utc_now();
    b.channel = o.channel;
    b.unit = cal.unit;
    b.full_scale = cal.full_scale;
    b.warnings = models::check_baseline(b, duties);
    // A level step: learn from the quieter side of it, and say so in the warning.
    bool cut = false;
    for (auto& w : b.warnings)
        if (w.check == "level_step")
            for (auto& src : b.sources)
                if (src.file == w.file) {
                    const double at = models::keep_quieter_part(src, b.setup.segment_s);
                    if (at < 0.0) continue;
                    w.message += "; the baseline keeps only the quieter side of the step";
                    cut = true;
                }
    // Visits louder than re-mounting explains are left out of the statistics (the warning names them).
    const auto louder = models::louder_visits(b);
    for (auto k = louder.rbegin(); k != louder.rend(); ++k) {
        for (auto& w : b.warnings)
            if (w.check == "visits_disagree" && (w.file == b.sources[*k].file || b.sources.size() == 2))
                w.message += "; the baseline leaves " + b.sources[*k].file + " (the louder) out of its statistics";
        b.sources.erase(b.sources.begin() + static_cast<std::ptrdiff_t>(*k));
        cut = true;
    }
    if (cut) {
        models::Baseline relearned = models::learn_from_sources(b.sources, b.setup, b.vanes);
        b.segment = relearned.segment;
        b.recording = relearned.recording;
        b.segments = relearned.segments;
        b.speed = relearned.speed;
    }
    if (earlier)  // what only the first learning's operating points could show is kept
        for (const auto& w : earlier->warnings)
            if (w.check == "low_npsh" || w.check == "low_margin") b.warnings.push_back(w);
    if (o.strict && !b.warnings.empty()) {
        std::string all;
        for (const auto& w : b.warnings) all += "\n  - " + w.message;
        throw InputError("baseline not written (--strict): " + std::to_string(b.warnings.size()) +
                         " problem(s) with the recordings:" + all);
    }
    write_file_atomically(output, json_text(baseline_to_json(b), 2) + "\n");
    write_baseline_summary(out, output, b, stated.size());
}

AnalyzeResult analyze(const AnalyzeOptions& o, const Progress& progress) {
    AnalyzeResult r;
    r.baseline = read_baseline_file(o.baseline);
    if (!o.machine.empty() && !r.baseline.machine.empty() && o.machine != r.baseline.machine)
        throw InputError(o.baseline + ": baseline is for machine '" + r.baseline.machine + "', not '" + o.machine +
                         "'; use that machine's baseline");
    Calibration cal;
    if (o.full_scale) {
        cal = parse_full_scale(*o.full_scale);
    } else {
        cal.full_scale = r.baseline.full_scale;
        cal.unit = r.baseline.unit;
    }
    // The operating point first: a mistyped reading fails before the analysis.
    std::optional<ResolvedOperatingPoint> duty = resolve_operating_point(o.operating, o.recording);
    models::MachineContext machine;
    machine.rpm = o.rpm;
    if (!machine.rpm && duty && duty->op.rpm) machine.rpm = duty->op.rpm;
    machine.vanes = o.vanes ? *o.vanes : r.baseline.vanes;
    machine.rpm_hint = r.baseline.rpm;
    r.recording = analyze_file(o.recording, o.channel, cal, r.baseline.setup, 0.0, machine, progress);
    models::RecordingContext ctx;
    ctx.unit = cal.unit;
    ctx.channel = o.channel;
    ctx.sensor_max_hz = sensor_limit(o.sensor_max_hz, o.mount);
    r.finding = models::classify(r.recording.analysis, r.baseline, ctx);
    if (duty) {
        OperatingPointFinding of;
        of.resolved = std::move(*duty);
        models::grade_with_margin(r.finding, of.resolved.hydraulics);
        of.reading = models::read_margin(r.finding.verdict, of.resolved.hydraulics);
        of.baseline_differences = models::compare_with_baseline(r.baseline.operating_point, of.resolved.op);
        models::flag_operating_point_differences(r.finding, of.baseline_differences);
        r.operating = std::move(of);
    }
    return r;
}

void run_analyze(const AnalyzeOptions& o, std::ostream& out, std::ostream& err) {
    if (o.json_output) {
        OutputGuard guard;
        guard.input(o.recording, "recording");
        guard.input(o.baseline, "baseline");
        guard_operating_inputs(guard, o.operating, o.recording);
        guard.output(*o.json_output);
    }
    const AnalyzeResult r = analyze(o, stderr_progress(o.recording, err));
    if (o.json_output) write_file_atomically(*o.json_output, json_text(finding_to_json(r, o.baseline), 2) + "\n");
    write_summary(out, r, o.baseline);
}

void run_npsh(const NpshOptions& o, std::ostream& out) {
    const OperatingPointText given = o.operating.text();
    if (!o.operating.file && given.empty())
        throw UsageError("npsh: give the suction reading (--suction-pressure and --temperature) for a pump, or "
                         "--runner-setting and --net-head for a turbine; see 'cavitas npsh --help'");
    if (o.json_output) {
        OutputGuard guard;
        guard_operating_inputs(guard, o.operating, "");
        guard.output(*o.json_output);
    }
    const auto duty = resolve_operating_point(o.operating, "");
    const models::Hydraulics& h = duty->hydraulics;
    if (!h.npsh && !h.thoma_sigma)
        throw UsageError("npsh: give --suction-pressure (a pump's NPSH available) or --runner-setting and --net-head "
                         "(a turbine's Thoma number)");
    // NPSH3 was asked for but cannot be read: say so as an error, not as a missing key.
    if ((duty->op.npsh3_m || duty->op.npsh3_curve) && !h.margin && h.margin_unavailable)
        throw InputError((duty->op.npsh3_curve_name.empty() ? std::string("npsh") : duty->op.npsh3_curve_name) + ": " +
                         *h.margin_unavailable);
    if (o.json_output) {
        nlohmann::json j = npsh_to_json(*duty);
        write_file_atomically(*o.json_output, json_text(j, 2) + "\n");
    }
    write_npsh_account(out, *duty);
}

}  // namespace cavitas::app
