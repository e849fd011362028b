// cavitas screen: one recording judged on its own, for a machine with no
// reference yet (models/screening.hpp says what is read and why).
#include "src/commands/commands.hpp"

#include <ostream>

#include "models/machine.hpp"
#include "models/screening.hpp"
#include "src/io/atomic_file.hpp"
#include "src/io/datetime.hpp"
#include "src/io/output_guard.hpp"
#include "src/output/finding.hpp"
#include "src/output/plain_text.hpp"

namespace cavitas::app {
namespace {

using nlohmann::json;

}  // namespace

ScreenResult screen_recording(const ScreenOptions& o, const Progress& progress) {
    ScreenResult r;
    r.analyst = o.analyst ? *o.analyst : identify_analyst(std::nullopt);
    // The operating point first: a mistyped reading fails before the analysis.
    r.duty = resolve_operating_point(o.operating, o.recording);
    models::MachineContext machine;
    machine.rpm = o.rpm;
    if (!machine.rpm && r.duty && r.duty->op.rpm) machine.rpm = r.duty->op.rpm;
    machine.vanes = o.vanes;
    const double limit = sensor_limit(o.sensor_max_hz, o.mount);
    r.recording = analyze_file(o.recording, o.read, o.calibration, std::nullopt, std::nullopt, limit, machine,
                               progress);
    models::RecordingContext ctx;
    ctx.unit = r.recording.info.calibration.unit;
    ctx.channel = o.read.channel;
    ctx.sensor_max_hz = limit;
    r.screening = models::screen(r.recording.analysis, ctx, r.duty ? &r.duty->hydraulics : nullptr);
    return r;
}

namespace {

json signs_to_json(const std::vector<models::ScreeningSign>& signs) {
    json list = json::array();
    for (const auto& s : signs)
        list.push_back({{"name", s.name},
                        {"state", models::to_string(s.state)},
                        {"value", s.value ? json(*s.value) : json(nullptr)},
                        {"threshold", s.threshold ? json(*s.threshold) : json(nullptr)},
                        {"unit", s.unit},
                        {"words", s.words}});
    return list;
}

json indicators_to_json(const models::RecordingAnalysis& a, const std::string& unit) {
    json j = json::object();
    const std::string ukey = models::unit_key(unit);
    for (std::size_t i = 0; i < models::kSegmentIndicatorCount; ++i)
        j[models::json_key(models::info(static_cast<models::SegmentIndicator>(i)), ukey)] =
            models::median(a.series.values[i]);
    for (std::size_t i = 0; i < models::kRecordingIndicatorCount; ++i)
        j[models::json_key(models::info(static_cast<models::RecordingIndicator>(i)), ukey)] = a.recording[i];
    return j;
}

json screening_to_json(const ScreenResult& r) {
    const auto& s = r.screening;
    const auto& a = r.recording.analysis;
    const auto& in = r.recording.info;
    json other = json::array();
    for (const auto& f : s.other_findings) other.push_back({{"concern", models::to_string(f.concern)}, {"text", f.text}});
    json checks = json::array();
    for (const auto& c : s.quality.checks)
        checks.push_back({{"check", c.name}, {"status", models::to_string(c.status)}, {"message", c.message}});
    json j = {
        {"schema", kScreeningSchema},
        {"cavitas_version", kVersion},
        {"created_utc", utc_now()},
        {"screening", models::to_string(s.call)},
        {"screening_words", models::words(s.call)},
        {"grade", models::to_string(s.grade)},
        {"grade_reasons", s.grade_reasons},
        {"reasons", s.reasons},
        {"signs", signs_to_json(s.signs)},
        {"acoustic_signs", s.acoustic_signs},
        {"acoustic_signs_needed", models::ScreeningConfig{}.signs_needed},
        {"hydraulic_sign", s.hydraulic_sign},
        {"other_findings", other},
        {"next_steps", models::screening_next_steps()},
        {"cautions", s.call == models::ScreeningCall::signs_of_cavitation ? json(models::cavitation_cautions())
                                                                           : json::array()},
        {"indicators", indicators_to_json(a, in.calibration.unit)},
        {"bands", bands_to_json(r.recording)},
        {"speed", speed_to_json(a)},
        {"quality",
         {{"usable", s.quality.usable()}, {"checks", checks}, {"warnings", s.warnings}}},
        {"input", input_to_json(r.recording)},
        {"provenance",
         {{"analyst", r.analyst.name},
          {"analyst_source", r.analyst.source},
          {"host", r.analyst.host},
          {"cavitas_version", kVersion}}},
    };
    if (r.duty) j["operating_point"] = hydraulics_to_json(*r.duty);
    return j;
}

const char* mark(models::SignState s) {
    switch (s) {
        case models::SignState::present: return "+";
        case models::SignState::absent: return "-";
        case models::SignState::claimed: return "~";
        case models::SignState::not_read: return "?";
    }
    return "?";
}

void write_screen_summary(std::ostream& out, const ScreenResult& r) {
    const auto& s = r.screening;
    out << for_terminal(r.recording.info.path) << ", channel " << r.recording.info.channel << "\n"
        << "screening, without a reference: " << models::words(s.call) << " (grade " << models::to_string(s.grade)
        << ")\n"
        << "signs read (+ present, - absent, ~ explained by a look-alike, ? not read; " << s.acoustic_signs
        << " acoustic of the " << models::ScreeningConfig{}.signs_needed << " needed):\n";
    for (const auto& g : s.signs) out << "  " << mark(g.state) << " " << g.words << "\n";
    for (const auto& w : s.reasons) out << "why not more: " << w << "\n";
    for (const auto& f : s.other_findings) out << "other finding: " << f.text << "\n";
    for (const auto& w : s.warnings) out << "quality warning: " << w << "\n";
    for (const auto& g : s.grade_reasons) out << "grade: " << g << "\n";
    for (const auto& n : models::screening_next_steps()) out << "next: " << n << "\n";
    if (s.call == models::ScreeningCall::signs_of_cavitation)
        for (const auto& c : models::cavitation_cautions()) out << "caution: " << c << "\n";
}

}  // namespace

void run_screen(const ScreenOptions& o, std::ostream& out, std::ostream& err) {
    if (o.json_output) {
        OutputGuard guard;
        guard.input(o.recording, "recording");
        guard_operating_inputs(guard, o.operating, o.recording);
        guard.output(*o.json_output);
    }
    const ScreenResult r = screen_recording(o, stderr_progress(o.recording, err));
    if (o.json_output) write_file_atomically(*o.json_output, json_text(screening_to_json(r), 2) + "\n");
    write_screen_summary(out, r);
}

}  // namespace cavitas::app
