// The analysis API: a recording, its baseline and its stated duty in, a
// finding out. Used by analyze, baseline, route and compare alike.
#include "src/analysis/analysis.hpp"
#include "src/io/severity_zones.hpp"

#include <unistd.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <filesystem>

#include "models/baseline_check.hpp"
#include "models/machine.hpp"
#include "models/quality.hpp"
#include "src/io/baseline_io.hpp"
#include "src/io/plan_store.hpp"

#ifndef CAVITAS_VERSION
#define CAVITAS_VERSION "0.0.0"
#endif

namespace cavitas::app {

const char* const kVersion = CAVITAS_VERSION;

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

AnalyzedRecording analyze_file(const std::string& path, const ReadRequest& read, const CalibrationText& calibration,
                               const std::optional<StoredCalibration>& stored,
                               const std::optional<models::AnalysisSetup>& setup, double sensor_max_hz,
                               const models::MachineContext& machine, const Progress& progress,
                               models::Fidelity fidelity) {
    AnalyzedRecording r;
    const std::unique_ptr<AudioSource> opened = open_calibrated(path, read, calibration, stored);
    AudioSource& source = *opened;
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

double sensor_limit(double sensor_max_hz, const std::string& mount) {
    double limit = sensor_max_hz > 0.0 ? sensor_max_hz : 0.0;
    if (!mount.empty()) {
        const auto lim = models::mount_limit_hz(mount);
        if (!lim) throw UsageError("--mount '" + mount + "': use handheld, magnet, adhesive or stud");
        limit = limit > 0.0 ? std::min(limit, *lim) : *lim;
    }
    return limit;
}



models::Verdict point_verdict(const std::vector<models::Verdict>& channels) {
    using models::Verdict;
    for (Verdict v : {Verdict::developed, Verdict::incipient, Verdict::normal})
        if (std::find(channels.begin(), channels.end(), v) != channels.end()) return v;
    return Verdict::indeterminate;
}

StoredCalibration stored_calibration(const models::Baseline& b) {
    StoredCalibration s;
    s.calibration.full_scale = b.full_scale;
    s.calibration.unit = b.unit;
    s.calibration.account = b.calibration_account;
    s.values_unit = b.values_unit;
    return s;
}

// The files an operating point is read from (the --operating-point file, the
// recording's sidecar, an NPSH3 curve either names), as inputs of the guard.
void guard_operating_inputs(OutputGuard& guard, const OperatingPointFlags& flags, const std::string& recording) {
    if (flags.file) guard.input(*flags.file, "operating-point file");
    if (!recording.empty()) guard.input(sidecar_path_for(recording), "sidecar of " + recording);
    if (const auto duty = resolve_operating_point(flags, recording))
        if (!duty->op.npsh3_curve_name.empty()) guard.input(duty->op.npsh3_curve_name, "NPSH3 curve");
}

VelocityFinding velocity_finding(const AnalyzedRecording& rec, const std::optional<models::SeverityZones>& zones) {
    VelocityFinding v;
    v.zones = zones;
    if (zones) {
        v.band_low_hz = zones->band_low_hz;
        v.band_high_hz = zones->band_high_hz;
    }
    v.low_cut_hz = std::min(models::kVelocityLowCutHz, v.band_low_hz);
    const std::string& unit_name = rec.info.calibration.unit;
    const std::optional<SignalUnit> unit = signal_unit(unit_name);
    const auto& a = rec.analysis;
    if (!unit || unit->quantity != SignalQuantity::acceleration) {
        v.unavailable = "the recording is not calibrated in acceleration (" + (unit_name.empty() ? std::string("raw") : unit_name) + ")";
    } else if (a.mean_psd.empty() || !(a.psd_bin_hz > 0.0)) {
        v.unavailable = "no averaged spectrum";
    } else if (v.band_high_hz > 0.5 * a.setup.fs_hz) {
        v.unavailable = "the sample rate (" + std::to_string(static_cast<long>(a.setup.fs_hz)) +
                        " Hz) does not reach the band's top (" + std::to_string(static_cast<long>(v.band_high_hz)) + " Hz)";
    } else {
        const double si2 = unit->si_per_unit * unit->si_per_unit;
        std::vector<double> psd_si(a.mean_psd.size());
        for (std::size_t k = 0; k < psd_si.size(); ++k) psd_si[k] = a.mean_psd[k] * si2;
        v.overall_rms_mm_s = 1000.0 * models::overall_velocity_rms_m_s(psd_si, a.psd_bin_hz, v.band_low_hz,
                                                                       v.band_high_hz, v.low_cut_hz);
        if (zones) v.zone = models::zone_of(*v.overall_rms_mm_s, *zones);
    }
    return v;
}

namespace {

std::optional<models::MarginContext> margin_context(const std::optional<OperatingPointFinding>& of) {
    if (!of) return std::nullopt;
    models::MarginContext m;
    m.agreement = of->reading.agreement;
    const auto& h = of->resolved.hydraulics;
    if (h.npsh) m.npsha_m = h.npsh->npsha_m;
    if (h.margin) {
        m.margin_ratio = h.margin->ratio;
        m.below_guidance = h.margin->margin_class == models::MarginClass::thin ||
                           h.margin->margin_class == models::MarginClass::below_npsh3;
    }
    return m;
}

}  // namespace

AnalyzeResult analyze(const AnalysisRequest& o, const Progress& progress) {
    AnalyzeResult r;
    r.analyst = o.analyst ? *o.analyst : identify_analyst(std::nullopt);
    r.baseline = read_baseline_file(o.baseline, o.read.channel, &r.baseline_sha256);
    if (!o.sister_reference && !o.machine.empty() && !r.baseline.machine.empty() && o.machine != r.baseline.machine)
        throw InputError(o.baseline + ": baseline is for machine '" + r.baseline.machine + "', not '" + o.machine +
                         "'; use that machine's baseline, or accept it as a sister machine's reference with --reference");
    // The operating point and the point's limits first: a mistyped file fails before the analysis.
    r.limits = point_limits(o.limits, o.baseline);
    std::optional<ResolvedOperatingPoint> duty = resolve_operating_point(o.operating, o.recording);
    const std::optional<models::SeverityZones> zones =
        o.zones ? std::optional(read_severity_zones(*o.zones)) : std::nullopt;
    models::MachineContext machine;
    machine.rpm = o.rpm;
    if (!machine.rpm && duty && duty->op.rpm) machine.rpm = duty->op.rpm;
    machine.vanes = o.vanes ? *o.vanes : r.baseline.vanes;
    machine.rpm_hint = r.baseline.rpm;
    r.recording = analyze_file(o.recording, o.read, o.calibration, stored_calibration(r.baseline), r.baseline.setup,
                               0.0, machine, progress);
    models::RecordingContext ctx;
    ctx.unit = r.recording.info.calibration.unit;
    ctx.channel = o.read.channel;
    ctx.sensor_max_hz = sensor_limit(o.sensor_max_hz, o.mount);
    const models::RecordingStatement stated{o.machine, o.read.channel, r.recording.analysis.rpm, o.vanes.value_or(0),
                                            o.mount, ctx.sensor_max_hz};
    r.reference = models::make_reference(r.baseline, o.sister_reference, stated);
    ctx.reference = r.reference.kind;
    ctx.reference_floor_db = r.reference.level_floor_db;
    r.finding = models::classify(r.recording.analysis, r.baseline, ctx, r.limits.applied_to({}));
    models::state_reference(r.finding, r.reference, r.baseline);
    r.velocity = velocity_finding(r.recording, zones);
    if (duty) {
        OperatingPointFinding of;
        of.resolved = std::move(*duty);
        models::grade_with_margin(r.finding, of.resolved.hydraulics);
        of.reading = models::read_margin(r.finding.verdict, of.resolved.hydraulics);
        of.baseline_differences = models::compare_with_baseline(r.baseline.operating_point, of.resolved.op);
        models::flag_operating_point_differences(r.finding, of.baseline_differences);
        r.operator_note = of.resolved.op.note;
        r.operating = std::move(of);
    }
    r.actions = models::plan_actions(r.finding, margin_context(r.operating));
    return r;
}

}  // namespace cavitas::app
