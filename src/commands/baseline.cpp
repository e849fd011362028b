// cavitas baseline: learn a machine's known-good state from recordings.
#include "src/commands/commands.hpp"

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
#include "src/io/atomic_file.hpp"
#include "src/io/baseline_io.hpp"
#include "src/io/datetime.hpp"
#include "src/io/output_guard.hpp"
#include "src/io/plan_store.hpp"
#include "src/output/finding.hpp"
#include "src/output/format.hpp"
#include "src/output/plain_text.hpp"
#include "src/route/store.hpp"

#ifndef CAVITAS_VERSION
#define CAVITAS_VERSION "0.0.0"
#endif


namespace cavitas::app {

namespace {

// A suppression run's recording must state a margin the pump cannot cavitate
// at by the NPSH alone (MarginGuidance::large_ratio x NPSH3, the highest ratio
// of the margin guidance); anything less is refused naming the file.
void require_suppression_margin(const std::string& path, const std::optional<ResolvedOperatingPoint>& duty) {
    const double need = models::MarginGuidance{}.large_ratio;
    if (!duty || !duty->hydraulics.npsh)
        throw InputError(path + ": a suppression run needs its operating point (suction pressure, temperature and "
                                "NPSH3: flags, --operating-point or " + sidecar_path_for(path) + ") to show its margin");
    const auto& h = duty->hydraulics;
    if (!h.margin)
        throw InputError(path + ": a suppression run needs the pump's NPSH3 (--npsh3 or --npsh3-curve) to show that "
                                "NPSHa " + std::to_string(h.npsh->npsha_m).substr(0, 5) + " m is a large margin");
    if (h.margin->ratio < need) {
        char b[160];
        std::snprintf(b, sizeof b, "NPSHa %.2f m is %.2f x NPSH3 %.2f m, under the %.1f x a suppression run needs",
                      h.margin->npsha_m, h.margin->ratio, h.margin->npsh3_m, need);
        throw InputError(path + ": cannot serve as a suppression reference: " + b +
                         "; raise the suction head (pressurise the tank, raise the level, reduce the flow) and record again");
    }
}

models::SuppressionRun suppression_run(const std::vector<std::optional<models::Hydraulics>>& duties) {
    models::SuppressionRun s;
    bool first = true;
    for (const auto& d : duties) {
        if (!d || !d->margin) continue;
        const auto& m = *d->margin;
        s.npsha_low_m = first ? m.npsha_m : std::min(s.npsha_low_m, m.npsha_m);
        s.npsha_high_m = first ? m.npsha_m : std::max(s.npsha_high_m, m.npsha_m);
        if (first || m.ratio < s.ratio_low) {
            s.ratio_low = m.ratio;
            s.npsh3_m = m.npsh3_m;
        }
        first = false;
    }
    return s;
}

// One known-good recording analysed for a baseline, with its stated duty.
struct LearnedSource {
    models::BaselineSource source;
    models::RecordingAnalysis analysis;
    std::optional<ResolvedOperatingPoint> duty;
};

LearnedSource learn_source(const BaselineOptions& o, std::size_t index, std::optional<StoredCalibration>& cal,
                           std::optional<models::AnalysisSetup>& setup, double sensor_max,
                           models::MachineContext& machine, std::ostream& err) {
    // The operating point first: a mistyped reading fails before minutes of analysis.
    const std::string& path = o.recordings[index];
    LearnedSource l;
    l.duty = resolve_operating_point(o.operating, path);
    if (o.suppression) require_suppression_margin(path, l.duty);
    models::MachineContext this_machine = machine;
    if (!o.rpms.empty()) this_machine.rpm = o.rpms[index];
    if (!this_machine.rpm && l.duty && l.duty->op.rpm) this_machine.rpm = l.duty->op.rpm;
    if (!setup) {
        // The first recording fixes the bands and the segment length (--segment).
        const auto probe = open_recording(path, o.read, Calibration{});
        try {
            setup = models::choose_setup(probe->info().fs_hz, sensor_max, o.segment_s);
        } catch (const std::invalid_argument& e) {
            throw InputError(path + ": " + e.what());
        }
    }
    // The first recording fixes the calibration (or the baseline added to
    // does); every other one must come out the same.
    AnalyzedRecording r = analyze_file(path, o.read, o.calibration, cal, setup, sensor_max, this_machine,
                                       stderr_progress(path, err));
    const Calibration& got = r.info.calibration;
    if (!cal) {
        cal = StoredCalibration{got, r.info.stated_unit};
    } else if (got.unit != cal->calibration.unit ||
               std::abs(got.full_scale - cal->calibration.full_scale) > 1e-9 * cal->calibration.full_scale) {
        const std::string what = path + ": comes out as " + std::to_string(got.full_scale) + " " + got.unit +
                                 " per unit of its values, the baseline's other recordings as " +
                                 std::to_string(cal->calibration.full_scale) + " " + cal->calibration.unit +
                                 "; a baseline needs recordings calibrated alike";
        if (o.add_to && !o.calibration.empty())
            throw UsageError("the calibration given (--full-scale, --sensitivity, --gain, --unit) differs from the "
                             "one of " + *o.add_to + ": " + what);
        throw InputError(what);
    }
    if (r.info.fs_hz != setup->fs_hz)
        throw InputError(path + ": sample rate " + std::to_string(static_cast<int>(r.info.fs_hz)) +
                         " Hz differs from the baseline's " + std::to_string(static_cast<int>(setup->fs_hz)) +
                         " Hz; a baseline needs recordings made the same way");
    // A baseline must be learned from clean recordings: the checks that need
    // no reference (NaN, a dead or stuck signal, clipping, dropouts, DC,
    // ski slope, length) are run against the recording's own statistics.
    models::Baseline self = models::learn_baseline({r.analysis});
    self.unit = got.unit;
    self.full_scale = got.full_scale;
    self.channel = o.read.channel;
    models::RecordingContext ctx;
    ctx.unit = got.unit;
    ctx.channel = o.read.channel;
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
        << (b.suppression ? "  a suppression reference: NPSHa " + fixed(b.suppression->npsha_low_m, 2) + "-" +
                                  fixed(b.suppression->npsha_high_m, 2) + " m, at least " +
                                  fixed(b.suppression->ratio_low, 1) + " x NPSH3 " + fixed(b.suppression->npsh3_m, 2) +
                                  " m\n"
                            : std::string())
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
        o.read.channel = m.channel;
    }
    // Calibration, vane count and mount as the baseline those visits were judged against, unless given.
    std::error_code ec2;
    if (fs::is_regular_file(normal.back().baseline, ec2)) {
        const models::Baseline used = read_baseline_file(normal.back().baseline);
        if (o.calibration.empty()) o.stored_calibration = stored_calibration(used);
        if (o.vanes == 0) o.vanes = used.vanes;
        if (o.mount.empty()) o.mount = used.mount;
    }
    // A speed unknown for one visit: let every visit's speed come from its sidecar or the spectrum.
    if (std::find(o.rpms.begin(), o.rpms.end(), 0.0) != o.rpms.end()) o.rpms.clear();
    return o;
}

// The channels to learn: --channel's (all: every channel of the first
// recording), else those of the baseline added to, else o.read.channel.
std::vector<int> learned_channels(const BaselineOptions& o) {
    if (o.channels) {
        const auto first = open_recording(o.recordings.front(), o.read, Calibration{});
        return channels_of(*o.channels, first->info().channels, o.recordings.front());
    }
    if (o.add_to) {
        std::vector<int> list;
        for (const auto& b : read_baseline_channels(*o.add_to)) list.push_back(b.channel);
        if (list.size() > 1) return list;
    }
    return {o.read.channel};
}

// One channel's baseline from o.recordings (o.read.channel), added to
// `earlier` when given. `stated`: how many recordings stated a duty.
models::Baseline learn_channel(const BaselineOptions& o, const std::optional<models::Baseline>& earlier,
                               std::ostream& err, std::size_t& stated_count) {
    const double sensor_max = sensor_limit(o.sensor_max_hz, o.mount);
    std::optional<StoredCalibration> cal = o.stored_calibration;
    if (earlier) {
        cal = stored_calibration(*earlier);
        if (earlier->sources.empty() || earlier->sources.front().series.segments() == 0)
            throw InputError(*o.add_to + ": made by an older cavitas, it keeps no per-recording values to add to; "
                             "relearn it from its recordings");
        if (earlier->suppression.has_value() != o.suppression)
            throw UsageError(*o.add_to + (o.suppression ? " was not learned from a suppression run: add these without "
                                                          "--suppression, or learn a suppression baseline of its own"
                                                        : " was learned from a suppression run: add to it with "
                                                          "--suppression"));
        if (o.read.channel != earlier->channel)
            throw UsageError("--channel " + std::to_string(o.read.channel) + " differs from the channel " +
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
    if (o.suppression) {
        b.suppression = suppression_run(duties);
        if (earlier && earlier->suppression) {  // the visits added to keep their margins
            const models::SuppressionRun& e = *earlier->suppression;
            b.suppression->npsha_low_m = std::min(b.suppression->npsha_low_m, e.npsha_low_m);
            b.suppression->npsha_high_m = std::max(b.suppression->npsha_high_m, e.npsha_high_m);
            if (e.ratio_low < b.suppression->ratio_low) {
                b.suppression->ratio_low = e.ratio_low;
                b.suppression->npsh3_m = e.npsh3_m;
            }
        }
    }
    b.cavitas_version = kVersion;
    b.created_utc = utc_now();
    b.channel = o.read.channel;
    b.unit = cal->calibration.unit;
    b.full_scale = cal->calibration.full_scale;
    b.values_unit = cal->values_unit;
    b.calibration_account = cal->calibration.account;
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
    stated_count = stated.size();
    return b;
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
    const std::vector<int> channels = learned_channels(o);
    std::optional<std::vector<models::Baseline>> earlier;
    if (o.add_to) earlier = read_baseline_channels(*o.add_to);
    if (earlier && earlier->size() > 1 && earlier->size() != channels.size())
        throw UsageError("--channel: " + *o.add_to + " holds " + std::to_string(earlier->size()) +
                         " channels; add recordings of the same channels");
    std::vector<models::Baseline> learned;
    std::size_t stated = 0;
    for (int channel : channels) {
        BaselineOptions one = o;
        one.read.channel = channel;
        std::optional<models::Baseline> before;
        if (earlier) before = earlier->size() == 1 ? earlier->front() : read_baseline_file(*o.add_to, channel);
        if (channels.size() > 1) err << "channel " << channel << ":\n";
        learned.push_back(learn_channel(one, before, err, stated));
    }
    write_file_atomically(output, json_text(baseline_channels_to_json(learned), 2) + "\n");
    for (const auto& b : learned) write_baseline_summary(out, output, b, stated);
}

}  // namespace cavitas::app
