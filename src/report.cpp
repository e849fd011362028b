#include "src/report.hpp"

#include <cmath>
#include <cstdio>
#include <ostream>

#include "models/machine.hpp"

namespace cavitas::app {

using nlohmann::json;
using models::Verdict;

namespace {

const char* verdict_words(Verdict v) {
    switch (v) {
        case Verdict::normal: return "NORMAL - no cavitation found against the baseline";
        case Verdict::incipient: return "INCIPIENT cavitation - sparse bubble collapse has begun";
        case Verdict::developed: return "DEVELOPED cavitation - dense bubble collapse, damage likely if it persists";
        case Verdict::indeterminate: return "INDETERMINATE - this recording cannot support a verdict";
    }
    return "";
}

bool cavitating(Verdict v) { return v == Verdict::incipient || v == Verdict::developed; }

std::string num(double v, int decimals) {
    char b[64];
    std::snprintf(b, sizeof b, "%.*f", decimals, v);
    return b;
}

}  // namespace

void write_summary(std::ostream& out, const AnalyzeResult& r, const std::string& baseline_path) {
    const auto& in = r.recording.info;
    const auto& a = r.recording.analysis;
    const auto& f = r.finding;
    out << in.path << "  (channel " << in.channel << ", " << num(in.fs_hz, 0) << " Hz, " << num(a.duration_s, 1)
        << " s, " << a.series.segments() << " segments)\n";
    out << "  against " << baseline_path << "\n";
    out << "  verdict     " << verdict_words(f.verdict) << "\n";
    out << "  confidence  " << num(f.confidence, 2) << "\n";
    if (!f.reasons.empty()) {
        out << "  why indeterminate:\n";
        for (const auto& s : f.reasons) out << "    - " << s << "\n";
    }
    if (!f.evidence.empty()) {
        out << "  evidence:\n";
        for (const auto& s : f.evidence) out << "    - " << s << "\n";
    }
    if (!f.other_findings.empty()) {
        out << "  other findings:\n";
        for (const auto& s : f.other_findings) out << "    - " << s << "\n";
    }
    if (!f.warnings.empty()) {
        out << "  lowered confidence:\n";
        for (const auto& s : f.warnings) out << "    - " << s << "\n";
    }
    if (cavitating(f.verdict)) {
        out << "  caution:\n";
        for (const auto& s : models::cavitation_cautions()) out << "    ! " << s << "\n";
    }
}

json finding_to_json(const AnalyzeResult& r, const std::string& baseline_path) {
    const auto& in = r.recording.info;
    const auto& a = r.recording.analysis;
    const auto& f = r.finding;
    const auto& b = r.baseline;
    json indicators = json::object();
    for (const auto& c : f.comparisons)
        indicators[c.key] = {{"value", c.value},
                             {"p10", c.p10},
                             {"p90", c.p90},
                             {"baseline_median", c.baseline_median},
                             {"baseline_sigma", c.baseline_sigma},
                             {"change", c.change},
                             {"z", c.z}};
    indicators["kurtogram_band"] = {{"center_hz", a.kurtogram_band.center_hz},
                                    {"bandwidth_hz", a.kurtogram_band.bandwidth_hz},
                                    {"level", a.kurtogram_band.level},
                                    {"kurtosis", a.kurtogram_band.kurtosis}};
    json peaks = json::array();
    for (const auto& p : a.envelope_peaks)
        peaks.push_back({{"frequency_hz", p.hz}, {"order", p.order}, {"prominence_db", p.prominence_db}});
    const auto& q = a.quality;
    const std::string ukey = models::unit_key(in.calibration.unit);
    json checks = json::array();
    for (const auto& c : f.quality.checks)
        checks.push_back({{"check", c.name},
                          {"status", models::to_string(c.status)},
                          {"value", c.value},
                          {"unit", c.unit},
                          {"warn_at", c.warn_at},
                          {"fail_at", c.fail_at},
                          {"message", c.message}});
    json quality = {
        {"checks", checks},
        {"samples", q.samples},
        {"segments", a.series.segments()},
        {"non_finite_samples", q.non_finite},
        {"at_full_scale_share", q.samples ? static_cast<double>(q.at_full_scale) / static_cast<double>(q.samples) : 0.0},
        {"longest_flat_run_samples", q.longest_flat_run},
        {"dropout_share", q.samples ? static_cast<double>(q.dropout_samples) / static_cast<double>(q.samples) : 0.0},
        {"flat_top_share", q.samples ? static_cast<double>(q.flat_top_samples()) / static_cast<double>(q.samples) : 0.0},
        {"dc_offset_" + ukey, q.mean()},
        {"usable", f.verdict != Verdict::indeterminate},
        {"reasons", f.reasons},
        {"warnings", f.warnings},
    };
    const bool speed_known = a.rpm > 0.0;
    json speed = {
        {"rpm", a.rpm},
        {"source", !speed_known ? "unknown" : (a.rpm_estimated ? "estimated" : "given")},
        {"resolution_rpm", a.rpm_resolution},
        {"shaft_hz", models::shaft_hz(a.rpm)},
        {"vanes", a.vanes},
        {"bpf_hz", a.vanes > 0 ? models::blade_pass_hz(a.rpm, a.vanes) : 0.0},
        {"baseline_rpm", b.rpm},
    };
    json j = {
        {"schema", kFindingSchema},
        {"cavitas_version", kVersion},
        {"created_utc", utc_now()},
        {"verdict", models::to_string(f.verdict)},
        {"confidence", f.confidence},
        {"evidence", f.evidence},
        {"other_findings", f.other_findings},
        {"cautions", cavitating(f.verdict) ? json(models::cavitation_cautions()) : json::array()},
        {"indicators", indicators},
        {"bands",
         {{"hf_low_hz", a.setup.hf.low_hz},
          {"hf_high_hz", a.setup.hf.high_hz},
          {"lf_low_hz", a.setup.lf.low_hz},
          {"lf_high_hz", a.setup.lf.high_hz},
          {"segment_s", a.setup.segment_s},
          {"level_reference", "dB re 1 " + in.calibration.unit + " squared"}}},
        {"speed", speed},
        {"envelope_peaks", peaks},
        {"quality", quality},
        {"input",
         {{"path", in.path},
          {"sample_rate_hz", in.fs_hz},
          {"duration_s", a.duration_s},
          {"channel", in.channel},
          {"channels", in.channels},
          {"format", in.format},
          {"unit", in.calibration.unit},
          {"full_scale", in.calibration.full_scale},
          {"sha256", r.recording.sha256}}},
        {"baseline",
         {{"path", baseline_path},
          {"schema", b.schema},
          {"created_utc", b.created_utc},
          {"machine", b.machine},
          {"recordings", b.sources.size()},
          {"rpm", b.rpm}}},
    };
    return j;
}

}  // namespace cavitas::app
