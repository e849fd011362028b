// cavitas inception: the acoustic NPSH test (src/commands/inception.hpp).
#include "src/commands/inception.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <ostream>

#include "models/classifier.hpp"
#include "models/inception.hpp"
#include "models/text.hpp"
#include "src/analysis/analysis.hpp"
#include "src/commands/commands.hpp"
#include "src/io/atomic_file.hpp"
#include "src/io/manifest.hpp"
#include "src/io/output_guard.hpp"
#include "src/io/units.hpp"
#include "src/output/format.hpp"
#include "src/output/plain_text.hpp"
#include "src/report/report_options.hpp"

namespace cavitas::app {

namespace {

using nlohmann::ordered_json;
using models::fmt;

/// Rows whose NPSHa agree within this are one step (our choice: a gauge read to
/// 0.5 kPa moves NPSHa by 0.05 m of water).
constexpr double kStepToleranceM = 0.05;

struct SweepRow {
    const ManifestRow* row = nullptr;
    double npsha_m = 0.0;
    double rpm = 0.0;
    std::optional<double> head_m;
    AnalyzedRecording rec;
};

struct Step {
    std::vector<SweepRow*> rows;
    double npsha_m = 0.0;
};

std::string where(const Manifest& m, const ManifestRow& r) { return m.path + ":" + std::to_string(r.line); }

// The rows of one machine, point and channel, each with its NPSHa, speed and head (not yet analysed).
void check_row(const Manifest& m, const ManifestRow& r, const ManifestRow& first) {
    if (!r.error.empty()) throw InputError(where(m, r) + ": " + r.error);
    if (r.channels.all || r.channels.channels.size() > 1)
        throw InputError(where(m, r) + ": channel cell names several channels; a sweep is one channel");
    const std::pair<const char*, std::pair<std::string, std::string>> same[] = {
        {"machine", {r.machine, first.machine}},
        {"point", {r.point, first.point}},
        {"channel", {std::to_string(r.channel), std::to_string(first.channel)}}};
    for (const auto& [what, v] : same)
        if (v.first != v.second)
            throw InputError(where(m, r) + ": " + what + " '" + v.first + "' differs from the sweep's '" + v.second +
                             "' (line " + std::to_string(first.line) + "); a sweep is one machine, point and channel");
    if (!r.rpm)
        throw InputError(where(m, r) + ": no rpm; a sweep needs each row's shaft speed (the rpm column)");
}

SweepRow read_row(const Manifest& m, const ManifestRow& r) {
    SweepRow s;
    s.row = &r;
    s.rpm = *r.rpm;
    OperatingPointFlags flags;
    for (const auto& [k, v] : r.operating) flags.values[k] = v;
    TextOrigin origin;
    origin.file = where(m, r);
    origin.base_dir = m.dir;
    flags.origin = origin;
    const auto duty = resolve_operating_point(flags, r.path);
    if (!duty || !duty->hydraulics.npsh)
        throw InputError(where(m, r) + ": no NPSHa: a sweep row needs suction_pressure and temperature (and "
                         "elevation or barometric for a gauge reading) to compute it");
    s.npsha_m = duty->hydraulics.npsh->npsha_m;
    for (const auto& [k, v] : r.extra) {
        if (k != "head" || v.empty()) continue;
        try {
            s.head_m = parse_quantity(v, Quantity::length);
        } catch (const std::invalid_argument& e) {
            throw InputError(where(m, r) + ": head '" + v + "': " + e.what());
        }
        if (!(*s.head_m > 0.0)) throw InputError(where(m, r) + ": head '" + v + "' must be above 0");
    }
    return s;
}

// The bands of the sweep: those of the first row's rate; every file must have that rate.
models::AnalysisSetup sweep_setup(const Manifest& m, const std::vector<SweepRow>& rows, const InceptionOptions& o) {
    double fs0 = 0.0;
    for (const auto& s : rows) {
        double fs = 0.0;
        try {
            fs = open_recording(s.row->path, read_request_of(*s.row), Calibration{})->info().fs_hz;
        } catch (const std::exception& e) {
            throw InputError(where(m, *s.row) + ": " + e.what());
        }
        if (fs0 == 0.0) fs0 = fs;
        if (fs != fs0)
            throw InputError(where(m, *s.row) + ": " + s.row->file + " is sampled at " + fixed(fs, 0) + " Hz, the sweep's "
                             "first recording at " + fixed(fs0, 0) + " Hz; a sweep is read in one set of bands, at one rate");
    }
    const ManifestRow& first = *rows.front().row;
    const double stated = o.sensor_max_hz > 0.0 ? o.sensor_max_hz : first.sensor_max_hz;
    try {
        return models::choose_setup(fs0, sensor_limit(stated, o.mount.empty() ? first.mount : o.mount));
    } catch (const std::invalid_argument& e) {
        throw InputError(where(m, first) + ": " + e.what());
    }
}

void analyse_rows(const Manifest& m, std::vector<SweepRow>& rows, const models::AnalysisSetup& setup, std::ostream& err) {
    std::string unit;
    for (auto& s : rows) {
        models::MachineContext machine;
        machine.rpm = s.rpm;
        machine.vanes = s.row->vanes.value_or(0);
        try {
            s.rec = analyze_file(s.row->path, read_request_of(*s.row), s.row->calibration, std::nullopt, setup, 0.0, machine,
                                 stderr_progress(s.row->path, err));
        } catch (const std::exception& e) {
            throw InputError(where(m, *s.row) + ": " + e.what());
        }
        const std::string u = s.rec.info.calibration.unit;
        if (&s == &rows.front()) unit = u;
        if (u != unit)
            throw InputError(where(m, *s.row) + ": levels in " + (u.empty() ? "FS" : u) + ", the sweep's first row's in " +
                             (unit.empty() ? "FS" : unit) + "; give every row the same calibration");
    }
}

// Rows sorted by NPSHa, falling; those within kStepToleranceM of a step's first row join it.
std::vector<Step> group_steps(std::vector<SweepRow>& rows) {
    std::vector<SweepRow*> order;
    for (auto& r : rows) order.push_back(&r);
    std::stable_sort(order.begin(), order.end(), [](const SweepRow* a, const SweepRow* b) { return a->npsha_m > b->npsha_m; });
    std::vector<Step> steps;
    for (SweepRow* r : order) {
        if (steps.empty() || steps.back().rows.front()->npsha_m - r->npsha_m > kStepToleranceM) steps.emplace_back();
        steps.back().rows.push_back(r);
    }
    for (auto& st : steps) {
        double sum = 0.0;
        for (const auto* r : st.rows) sum += r->npsha_m;
        st.npsha_m = sum / static_cast<double>(st.rows.size());
    }
    return steps;
}

std::vector<double> step_values(const Step& st, models::SegmentIndicator which) {
    std::vector<double> v;
    for (const auto* r : st.rows)
        for (double x : r->rec.analysis.series[which]) v.push_back(x);
    return v;
}

models::SweepStep model_step(const Step& st) {
    models::SweepStep s;
    s.npsha_m = st.npsha_m;
    std::vector<double> rpm, head;
    for (const auto* r : st.rows) {
        s.hf_level_db.push_back(r->rec.analysis.series[models::SegmentIndicator::hf_band_level]);
        rpm.push_back(r->rpm);
        if (r->head_m) head.push_back(*r->head_m);
    }
    s.rpm = models::median(rpm);
    if (!head.empty()) s.head_m = models::median(head);
    return s;
}

ordered_json number_or_null(const std::optional<double>& v) { return v ? ordered_json(*v) : ordered_json(nullptr); }

ordered_json pair_or_null(const std::optional<std::pair<double, double>>& p) {
    return p ? ordered_json::array({p->first, p->second}) : ordered_json(nullptr);
}

ordered_json steps_json(const std::vector<Step>& steps, const std::vector<models::SweepStep>& in,
                        const models::InceptionResult& r) {
    ordered_json a = ordered_json::array();
    for (const auto& sr : r.steps) {  // in falling NPSHa at the reference speed
        const std::size_t i = sr.step;
        ordered_json recs = ordered_json::array();
        for (const auto* row : steps[i].rows)
            recs.push_back({{"file", row->row->file},
                            {"line", row->row->line},
                            {"sha256", row->rec.sha256},
                            {"npsha_m", row->npsha_m},
                            {"segments", row->rec.analysis.series.segments()}});
        ordered_json s = {{"npsha_m", in[i].npsha_m},
                          {"npsha_scaled_m", sr.npsha_scaled_m},
                          {"rpm", in[i].rpm},
                          {"recordings", recs},
                          {"segments", sr.segments},
                          {"hf_level_db", sr.hf_level_db},
                          {"hf_level_p10_db", sr.hf_low_db},
                          {"hf_level_p90_db", sr.hf_high_db},
                          {"level_shift_db", sr.level_shift_db},
                          {"hf_rise_db", sr.hf_rise_db},
                          {"hf_kurtosis", models::median(step_values(steps[i], models::SegmentIndicator::hf_kurtosis))},
                          {"lf_level_db", models::median(step_values(steps[i], models::SegmentIndicator::lf_band_level))},
                          {"head_m", number_or_null(in[i].head_m)},
                          {"head_scaled_m", number_or_null(sr.head_scaled_m)},
                          {"fitted", sr.fitted},
                          {"past_peak", sr.past_peak}};
        a.push_back(std::move(s));
    }
    return a;
}

std::string level_unit(const std::string& unit) { return "dB re 1 (" + (unit.empty() ? std::string("FS") : unit) + ")^2"; }

const char* kScalingBasis =
    "NPSHa x (n_ref / n)^2 (affinity, NPSHR ~ N^2) and head x (n_ref / n)^2; HF levels shifted by -20 m log10(n / "
    "n_ref) dB with m = 2, assumed (no published exponent for pump vibration at 1-10 kHz; methods review A2)";

std::string advice(const models::InceptionResult& r) {
    if (r.located != models::Located::between_steps) return "";
    return fmt("Only one step lies on the risen side of the knee: inception lies between %.2f and %.2f m. Test more "
               "steps inside that range to place it.", r.bracket_m->first, r.bracket_m->second);
}

ordered_json to_json(const Manifest& m, const std::vector<Step>& steps, const std::vector<models::SweepStep>& in,
                     const models::InceptionResult& r, const models::InceptionConfig& c, const models::AnalysisSetup& setup,
                     const std::string& unit) {
    const ManifestRow& first = *steps.front().rows.front()->row;
    ordered_json j;
    j["schema"] = "cavitas.inception/1";
    j["cavitas_version"] = kVersion;
    j["sweep"] = {{"path", m.path}, {"sha256", m.sha256}, {"machine", first.machine}, {"point", first.point},
                  {"channel", first.channel}, {"rows", m.rows.size()}};
    j["npshi_m"] = number_or_null(r.npshi_m);
    if (!r.npshi_m) j["npshi_reason"] = r.reason;
    j["npshi_interval_m"] = pair_or_null(r.interval_m);
    j["located"] = models::to_string(r.located);
    if (r.bracket_m) j["bracket_m"] = pair_or_null(r.bracket_m);
    if (!advice(r).empty()) j["advice"] = advice(r);
    j["npsh3_m"] = number_or_null(r.npsh3.npsh3_m);
    if (!r.npsh3.npsh3_m) j["npsh3_reason"] = r.npsh3.reason;
    if (r.npsh3.npsh3_m) j["reference_head_m"] = r.npsh3.reference_head_m;
    const bool ratio = r.npshi_m && r.npsh3.npsh3_m && *r.npsh3.npsh3_m > 0.0;
    j["npshi_to_npsh3"] = ratio ? ordered_json(*r.npshi_m / *r.npsh3.npsh3_m) : ordered_json(nullptr);
    j["npshi_to_npsh3_note"] = "published inception ratios NPSHi / NPSH3 run from 2 to 20 (A. Budris, WaterWorld; "
                               "methods review A1); larger at part load";
    j["plateau_level_db"] = r.fit ? ordered_json(r.fit->plateau_db) : ordered_json(nullptr);
    j["rise_db_per_m"] = r.fit ? ordered_json(r.fit->slope_db_per_m) : ordered_json(nullptr);
    j["knee_m"] = r.fit ? ordered_json(r.fit->knee_m) : ordered_json(nullptr);
    j["rise_db"] = r.rise_db;
    j["rise_threshold_db"] = c.rise_threshold_db;
    j["rise_threshold_basis"] = "the HF alert level of the verdict (ClassifierConfig::hf_alert_db): twice the HF band power";
    j["clear_share"] = r.clear_share;
    j["clear_share_required"] = c.clear_share;
    j["bootstrap"] = {{"replicates", r.replicates}, {"seed", c.seed}, {"percentiles", {2.5, 97.5}},
                      {"resampled", "recordings within each step, segments within each recording, with replacement"}};
    j["level_unit"] = level_unit(unit);
    j["unit"] = unit.empty() ? "FS" : unit;
    j["bands"] = {{"hf_low_hz", setup.hf.low_hz}, {"hf_high_hz", setup.hf.high_hz}, {"lf_low_hz", setup.lf.low_hz},
                  {"lf_high_hz", setup.lf.high_hz}, {"sample_rate_hz", setup.fs_hz}, {"segment_s", setup.segment_s}};
    j["grouping"] = fmt("rows whose NPSHa agree within %.2f m are one step", kStepToleranceM);
    j["speed_scaling"] = {{"applied", r.scaling.applied},
                          {"reference_rpm", r.scaling.reference_rpm},
                          {"npsh_exponent", r.scaling.npsh_exponent},
                          {"level_exponent", r.scaling.level_exponent},
                          {"level_db_per_decade", r.scaling.level_db_per_decade()},
                          {"exponent_basis", "assumed"},
                          {"how", kScalingBasis}};
    j["steps"] = steps_json(steps, in, r);
    j["cautions"] = models::inception_cautions();
    j["sources"] = {
        "NPSHa of each row: suction pressure, temperature and the rest of its operating point (IAPWS-IF97 water, "
        "ISO 2533 atmosphere; cavitas npsh --help)",
        "HF level: the HF band power of each analysis segment; a step's level is the median of its segments",
        "knee: least squares of y = a + b max(0, k - NPSHa) over every segment of the fitted steps (methods review A1)",
        "interval: percentiles 2.5 and 97.5 of the knee over the bootstrap replicates",
        "NPSH3: the 3 % head drop from the median head of the steps above the knee, interpolated linearly (ANSI/HI "
        "14.6, ISO 9906)"};
    return j;
}

void write_account(std::ostream& out, const ordered_json& j, const models::InceptionResult& r) {
    const auto& s = j["sweep"];
    out << "sweep of " << s["machine"].get<std::string>() << " " << s["point"].get<std::string>() << " channel "
        << s["channel"].get<int>() << ": " << r.steps.size() << " steps\n";
    out << "HF band " << fixed(j["bands"]["hf_low_hz"].get<double>(), 0) << "-" << fixed(j["bands"]["hf_high_hz"].get<double>(), 0)
        << " Hz, levels in " << j["level_unit"].get<std::string>() << "\n";
    if (r.scaling.applied)
        out << "read at " << fixed(r.scaling.reference_rpm, 0) << " rpm: " << kScalingBasis << "\n";
    const bool heads = r.npsh3.reason.rfind("no head was given", 0) != 0;
    out << "  NPSHa m    rpm   HF dB   rise dB" << (heads ? "   head m" : "") << "\n";
    for (std::size_t i = 0; i < r.steps.size(); ++i) {
        const auto& st = j["steps"][i];
        const auto& sr = r.steps[i];
        const double rise_db = std::abs(sr.hf_rise_db) < 0.05 ? 0.0 : sr.hf_rise_db;  // no "-0.0"
        out << fmt("  %7.2f  %5.0f  %6.1f  %+8.1f", sr.npsha_scaled_m, st["rpm"].get<double>(), sr.hf_level_db, rise_db);
        if (heads) out << (sr.head_scaled_m ? fmt("  %7.2f", *sr.head_scaled_m) : std::string("        -"));
        if (sr.past_peak) out << "  past the peak, not fitted";
        out << "\n";
    }
    if (r.npshi_m) {
        out << fmt("NPSHi %.2f m (95 %% interval %.2f-%.2f m), ", *r.npshi_m, r.interval_m->first, r.interval_m->second)
            << (r.located == models::Located::fitted ? "located by the fit" : "between two steps") << fmt(
                   ": a rise of %.1f dB at the lowest fitted step, %.0f %% of %zu resampled sweeps reach %.0f dB\n",
                   r.rise_db, 100.0 * r.clear_share, r.replicates, j["rise_threshold_db"].get<double>());
        if (j.contains("advice")) out << j["advice"].get<std::string>() << "\n";
    } else {
        out << "NPSHi not found: " << r.reason << "\n";
    }
    if (r.npsh3.npsh3_m)
        out << fmt("NPSH3 %.2f m (3 %% head drop from %.2f m)", *r.npsh3.npsh3_m, r.npsh3.reference_head_m)
            << (j["npshi_to_npsh3"].is_number() ? fmt("; NPSHi / NPSH3 = %.2f (published ratios run 2-20, Budris)",
                                                      j["npshi_to_npsh3"].get<double>())
                                                : std::string())
            << "\n";
    else
        out << "NPSH3 not found: " << r.npsh3.reason << "\n";
    out << "Cautions:\n";
    for (const auto& c : models::inception_cautions()) out << "  - " << c << "\n";
}

void guard_files(const InceptionOptions& o, const Manifest& m) {
    OutputGuard guard;
    guard.input(o.sweep, "sweep");
    for (const auto& r : m.rows) {
        guard.input(r.path, "recording");
        guard.input(sidecar_path_for(r.path), "sidecar");
    }
    for (const auto* p : {&o.json_output, &o.html, &o.pdf})
        if (*p) guard.output(**p);
}

}  // namespace

void run_inception(const InceptionOptions& o, std::ostream& out, std::ostream& err) {
    if (o.paper != "a4" && o.paper != "letter") throw UsageError("--paper '" + o.paper + "': use a4 or letter");
    const Manifest m = read_manifest(o.sweep);
    guard_files(o, m);
    if (m.rows.empty()) throw InputError(o.sweep + ": no recording rows; a sweep lists one recording a row");
    std::vector<SweepRow> rows;
    for (const auto& r : m.rows) {
        check_row(m, r, m.rows.front());
        rows.push_back(read_row(m, r));
    }
    std::vector<Step> steps = group_steps(rows);
    if (steps.size() < 3)
        throw InputError(o.sweep + ": " + std::to_string(steps.size()) + " NPSHa step" + (steps.size() == 1 ? "" : "s") +
                         " (rows within " + fixed(kStepToleranceM, 2) + " m are one step); a sweep needs at least 3");
    const models::AnalysisSetup setup = sweep_setup(m, rows, o);
    analyse_rows(m, rows, setup, err);
    std::vector<models::SweepStep> in;
    for (const auto& st : steps) in.push_back(model_step(st));
    models::InceptionConfig c;
    c.rise_threshold_db = models::ClassifierConfig{}.hf_alert_db;
    c.replicates = o.replicates;
    models::InceptionResult r;
    try {
        r = models::find_inception(in, c, o.at_rpm);
    } catch (const std::invalid_argument& e) {
        throw InputError(o.sweep + ": " + e.what());
    }
    const ordered_json j = to_json(m, steps, in, r, c, setup, rows.front().rec.info.calibration.unit);
    const std::string text = json_text(j, 2) + "\n";
    if (o.html || o.pdf) {
        ReportOptions ro;
        ro.input = o.sweep;
        ro.input_text = text;
        ro.html = o.html;
        ro.pdf = o.pdf;
        ro.paper = o.paper;
        ro.input_output = o.json_output;  // the JSON with the reports, all or none
        run_report(ro, out);
    } else if (o.json_output) {
        write_file_atomically(*o.json_output, text);
    }
    write_account(out, j, r);
}

}  // namespace cavitas::app
