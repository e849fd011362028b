#include "src/output/finding.hpp"

#include "src/io/baseline_io.hpp"
#include "src/io/calibration.hpp"
#include "src/io/datetime.hpp"
#include "src/output/format.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <ostream>
#include <span>

#include "models/hydraulics.hpp"
#include "models/machine.hpp"
#include "models/severity.hpp"

namespace cavitas::app {

void thin_by_largest(std::vector<double>& amplitude, double& bin_hz, std::size_t max_points) {
    while (amplitude.size() > max_points && max_points > 0) {
        for (std::size_t k = 0; 2 * k < amplitude.size(); ++k)
            amplitude[k] = std::max(amplitude[2 * k], 2 * k + 1 < amplitude.size() ? amplitude[2 * k + 1] : 0.0);
        amplitude.resize((amplitude.size() + 1) / 2);
        bin_hz *= 2.0;
    }
}

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

constexpr double kM3sToM3h = 3600.0;

std::string kpa(double pa) { return fixed(pa / 1000.0, 3) + " kPa"; }
std::string celsius(double k) { return fixed(k - 273.15, 2) + " C"; }

std::string reference_word(const models::OperatingPoint& op) {
    return op.pressure_reference && *op.pressure_reference == models::PressureReference::absolute ? "absolute" : "gauge";
}

// The operating-point block of analyze's summary.
void write_operating_point(std::ostream& out, const OperatingPointFinding& of) {
    const auto& op = of.resolved.op;
    const auto& h = of.resolved.hydraulics;
    std::string from;
    for (const auto& s : of.resolved.sources) from += (from.empty() ? "" : " + ") + s;
    out << "  operating point (" << from << "):\n";
    std::string duty;
    auto add = [&duty](const std::string& s) { duty += (duty.empty() ? "" : ", ") + s; };
    if (op.flow_m3_s) add(fixed(*op.flow_m3_s * kM3sToM3h, 1) + " m3/h");
    if (op.rpm) add(fixed(*op.rpm, 0) + " rpm");
    if (op.temperature_k) add(celsius(*op.temperature_k));
    if (h.absolute_suction_pa) add("suction " + kpa(*h.absolute_suction_pa) + " absolute");
    if (!duty.empty()) out << "    duty        " << duty << "\n";
    if (!of.reading.summary.empty()) out << "    NPSH        " << of.reading.summary << "\n";
    out << "    reading     " << models::agreement_words(models::to_string(of.reading.agreement)) << "\n";
    for (const auto& n : of.reading.notes) out << "    - " << n << "\n";
    // Differences from the baseline's duty are listed under "lowered confidence" above.
    for (const auto& n : h.notes) out << "    . " << n << "\n";
}

}  // namespace

std::optional<AbsoluteLevelReference> absolute_level_reference(const std::string& unit) {
    const std::optional<SignalUnit> u = signal_unit(unit);
    if (!u) return std::nullopt;
    if (u->quantity == SignalQuantity::acceleration)
        return AbsoluteLevelReference{"re_1um_s2", "dB re 1 µm/s²",
                                      models::reference_offset_db(u->si_per_unit, models::kIso1683AccelerationRefM_s2)};
    if (u->quantity == SignalQuantity::pressure)
        return AbsoluteLevelReference{"re_1upa", "dB re 1 µPa",
                                      models::reference_offset_db(u->si_per_unit, models::kIso1683WaterPressureRefPa)};
    return std::nullopt;
}

json velocity_to_json(const VelocityFinding& v) {
    if (!v.overall_rms_mm_s) return {{"unavailable", v.unavailable}};
    json j = {{"overall_rms_mm_s", *v.overall_rms_mm_s},
              {"band_low_hz", v.band_low_hz},
              {"band_high_hz", v.band_high_hz},
              {"low_cut_hz", v.low_cut_hz},
              {"how", "the averaged acceleration spectrum integrated line by line, v = a / (2 pi f), above the low cut"}};
    if (v.zones && v.zone) {
        const auto& z = *v.zones;
        j["zone"] = {{"name", models::zone_letter(*v.zone)},
                     {"meaning", models::zone_meaning(*v.zone)},
                     {"source", z.source},
                     {"a_b_mm_s", z.a_b_mm_s},
                     {"b_c_mm_s", z.b_c_mm_s},
                     {"c_d_mm_s", z.c_d_mm_s},
                     {"boundary_rule", "a value on a boundary belongs to the upper zone"},
                     {"note", "severity zones are context from the analyst's zone file; they do not change the "
                              "cavitation verdict"}};
    }
    return j;
}

json amplitude_spectrum_to_json(const AnalyzeResult& r) {
    const auto& a = r.recording.analysis;
    const std::string& unit = r.recording.info.calibration.unit;
    if (a.mean_psd.empty() || !(a.psd_bin_hz > 0.0)) return json::object();
    // Up to the analysis's usable top (the HF band's top edge).
    const std::size_t keep =
        std::min(a.mean_psd.size(), static_cast<std::size_t>(std::floor(a.setup.hf.high_hz / a.psd_bin_hz)) + 1);
    const std::span<const double> psd(a.mean_psd.data(), keep);
    std::vector<double> amplitude = models::line_rms(psd, a.psd_enbw_hz);
    double bin_hz = a.psd_bin_hz;
    json j = {{"line_hz", a.psd_bin_hz},
              {"enbw_hz", a.psd_enbw_hz},
              {"unit", unit.empty() ? "raw" : unit},
              {"amplitude_reference", "RMS amplitude per line, " + (unit.empty() ? std::string("raw") : unit) +
                                          " (sqrt of PSD x the window's noise bandwidth)"}};
    const std::optional<SignalUnit> u = signal_unit(unit);
    if (u && u->quantity == SignalQuantity::acceleration) {
        const double si2 = u->si_per_unit * u->si_per_unit;
        std::vector<double> psd_si(psd.begin(), psd.end());
        for (double& v : psd_si) v *= si2;
        // Velocity lines up to the velocity band's top only: above it they are not used.
        psd_si.resize(std::min(psd_si.size(),
                               static_cast<std::size_t>(std::floor(r.velocity.band_high_hz / a.psd_bin_hz)) + 1));
        std::vector<double> velocity = models::line_rms(models::velocity_psd(psd_si, a.psd_bin_hz, r.velocity.low_cut_hz),
                                                        a.psd_enbw_hz);
        for (double& v : velocity) v *= 1000.0;  // m/s -> mm/s
        double vbin = a.psd_bin_hz;
        thin_by_largest(velocity, vbin, kAmplitudePointsWritten);
        j["velocity_rms_mm_s"] = velocity;
        j["velocity_bin_hz"] = vbin;
        j["velocity_low_cut_hz"] = r.velocity.low_cut_hz;
    }
    thin_by_largest(amplitude, bin_hz, kAmplitudePointsWritten);
    j["bin_hz"] = bin_hz;
    j["rms"] = amplitude;
    if (const auto ref = absolute_level_reference(unit)) j["absolute_reference"] = ref->text;
    return j;
}

void write_levels_summary(std::ostream& out, const AnalyzeResult& r) {
    const auto& a = r.recording.analysis;
    const std::string& unit = r.recording.info.calibration.unit;
    const std::optional<AbsoluteLevelReference> ref = absolute_level_reference(unit);
    auto level = [&](const char* key) -> std::optional<double> {
        for (const auto& c : r.finding.comparisons)
            if (c.key == key) return c.value;
        return std::nullopt;
    };
    auto shown = [&](double db) {
        return ref ? fixed(db + ref->offset_db, 1) + " " + ref->text
                   : fixed(db, 1) + " dB re 1 " + (unit.empty() ? std::string("raw") : unit) + "²";
    };
    const auto hf = level("hf_band_level_db"), lf = level("lf_band_level_db");
    if (hf || lf) {
        out << "  levels     ";
        if (hf) out << " HF " << fixed(a.setup.hf.low_hz, 0) << "-" << fixed(a.setup.hf.high_hz, 0) << " Hz " << shown(*hf);
        if (hf && lf) out << ",";
        if (lf) out << " LF " << fixed(a.setup.lf.low_hz, 0) << "-" << fixed(a.setup.lf.high_hz, 0) << " Hz " << shown(*lf);
        out << " (rises above are dB re baseline)\n";
    }
    const auto& v = r.velocity;
    if (!v.overall_rms_mm_s) {
        out << "  velocity    not given: " << v.unavailable << "\n";
        return;
    }
    out << "  velocity    overall velocity " << fixed(*v.overall_rms_mm_s, 2) << " mm/s RMS (" << fixed(v.band_low_hz, 0)
        << "-" << fixed(v.band_high_hz, 0) << " Hz)";
    if (v.zones && v.zone)
        out << ": zone " << models::zone_letter(*v.zone) << " by " << v.zones->source << " (your zone file)\n"
            << "              zone " << models::zone_letter(*v.zone) << ": " << models::zone_meaning(*v.zone)
            << "; context only, it does not change the cavitation verdict";
    out << "\n";
}

std::vector<double> rounded_to_peak(const std::vector<float>& x, int digits) {
    double peak = 0.0;
    for (const float v : x) peak = std::max(peak, std::abs(static_cast<double>(v)));
    std::vector<double> out(x.begin(), x.end());
    if (!(peak > 0.0) || !std::isfinite(peak)) return out;
    // Decimals that give the peak `digits` significant digits; dividing an integer by
    // an exact power of ten gives the double nearest that decimal, which the JSON
    // writer prints in its shortest form.
    const int decimals = digits - 1 - static_cast<int>(std::floor(std::log10(peak)));
    const double scale = std::pow(10.0, std::abs(decimals));
    for (double& v : out) v = decimals >= 0 ? std::round(v * scale) / scale : std::round(v / scale) * scale;
    return out;
}

json waveform_to_json(const AnalyzeResult& r) {
    const auto& e = r.recording.analysis.excerpt;
    if (e.empty()) return nullptr;
    return {{"start_s", e.start_s},
            {"sample_rate_hz", e.fs_hz},
            {"unit", r.recording.info.calibration.unit},
            {"segment", e.segment},
            {"segment_kurtosis", e.segment_kurtosis},
            {"hf_low_hz", e.band.low_hz},
            {"hf_high_hz", e.band.high_hz},
            {"raw", rounded_to_peak(e.raw, kWaveformDigits)},
            {"hf", rounded_to_peak(e.hf, kWaveformDigits)}};
}

json plots_to_json(const AnalyzeResult& r) {
    const auto& a = r.recording.analysis;
    const auto& b = r.baseline;
    json spectrum = json::object();
    const std::size_t nb = a.spectrum.bands(), ns = a.spectrum.segments();
    if (nb > 0 && ns > 0) {
        std::vector<double> p10(nb), p90(nb);
        for (std::size_t k = 0; k < nb; ++k) {
            std::vector<double> v(ns);
            for (std::size_t s2 = 0; s2 < ns; ++s2) v[s2] = a.spectrum.segment_db[s2 * nb + k];
            p10[k] = models::quantile(v, 0.10);
            p90[k] = models::quantile(v, 0.90);
        }
        spectrum = {{"center_hz", a.spectrum.center_hz}, {"level_db", a.spectrum.mean_db()}, {"p10_db", p10},
                    {"p90_db", p90}};
        if (!b.spectrum.empty() && b.spectrum.center_hz.size() == nb) {
            spectrum["baseline_median_db"] = b.spectrum.median_db;
            spectrum["baseline_p10_db"] = b.spectrum.p10_db;
            spectrum["baseline_p90_db"] = b.spectrum.p90_db;
        }
        spectrum["level_reference"] = "dB re 1 " + r.recording.info.calibration.unit + "^2/Hz";
        spectrum["hf_low_hz"] = a.setup.hf.low_hz;
        spectrum["hf_high_hz"] = a.setup.hf.high_hz;
    }
    std::vector<double> envelope = a.envelope_spectrum;
    double envelope_bin_hz = a.envelope_bin_hz;
    thin_by_largest(envelope, envelope_bin_hz, kEnvelopePointsWritten);
    json rows = json::array();
    for (const auto& kr : a.kurtogram_map)
        rows.push_back({{"level", kr.level}, {"bandwidth_hz", kr.bandwidth_hz}, {"mean", kr.mean}});
    json plots = {
        {"spectrum", spectrum},
        {"envelope_spectrum",
         {{"bin_hz", envelope_bin_hz},
          {"amplitude", envelope},
          {"mean_squared_envelope", a.mean_squared_envelope},
          {"shaft_hz", a.rpm > 0.0 ? models::shaft_hz(a.rpm) : 0.0},
          {"bpf_hz", a.rpm > 0.0 && a.vanes > 0 ? models::blade_pass_hz(a.rpm, a.vanes) : 0.0}}},
        {"amplitude_spectrum", amplitude_spectrum_to_json(r)},
        {"kurtogram",
         {{"rows", rows},
          {"chosen",
           {{"center_hz", a.kurtogram_band.center_hz},
            {"bandwidth_hz", a.kurtogram_band.bandwidth_hz},
            {"level", a.kurtogram_band.level},
            {"kurtosis", a.kurtogram_band.kurtosis}}},
          {"hf_low_hz", a.setup.hf.low_hz},
          {"hf_high_hz", a.setup.hf.high_hz}}},
    };
    if (json w = waveform_to_json(r); !w.is_null()) plots["waveform"] = std::move(w);
    return plots;
}

void write_summary(std::ostream& out, const AnalyzeResult& r, const std::string& baseline_path) {
    const auto& in = r.recording.info;
    const auto& a = r.recording.analysis;
    const auto& f = r.finding;
    out << in.path << "  (channel " << in.channel << ", " << fixed(in.fs_hz, 0) << " Hz, " << fixed(a.duration_s, 1)
        << " s, " << a.series.segments() << " segments)\n";
    out << "  against " << baseline_path;
    if (r.reference.kind == models::ReferenceKind::sister)
        out << " (a sister machine's baseline" << (r.reference.machine.empty() ? "" : ", " + r.reference.machine) << ")";
    else if (r.reference.kind == models::ReferenceKind::suppression)
        out << " (a suppression reference)";
    out << "\n";
    out << "  verdict     " << verdict_words(f.verdict) << "\n";
    if (f.verdict != models::Verdict::indeterminate) {
        out << "  confidence  " << models::to_string(f.grade) << "\n";
        for (const auto& why : f.grade_reasons) out << "    because " << why << "\n";
    }
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
        for (const auto& o : f.other_findings) out << "    - " << o.text << "\n";
    }
    if (!r.operator_note.empty()) out << "  operator's note: " << r.operator_note << "\n";
    if (!r.actions.empty()) {
        out << "  what to do (priority, re-check within):\n";
        for (const auto& act : r.actions)
            out << "    > " << models::to_string(act.priority) << ", " << act.recheck_days << " d: " << act.step << "\n";
    }
    if (!f.baseline_warnings.empty()) {
        out << "  baseline warnings (from " << baseline_path << "):\n";
        for (const auto& w : f.baseline_warnings) out << "    - " << w.message << "\n";
    }
    out << "  limits      " << r.limits.words() << "\n";
    write_levels_summary(out, r);
    if (r.operating) write_operating_point(out, *r.operating);
    if (cavitating(f.verdict)) {
        out << "  caution:\n";
        for (const auto& s : models::cavitation_cautions()) out << "    ! " << s << "\n";
    }
}

namespace {

// The bands' levels in dB re the ISO 1683 reference of the unit, beside the
// existing levels in dB re 1 unit squared; rises are dB re baseline.
void add_absolute_band_levels(json& bands, const AnalyzeResult& r) {
    bands["rise_reference"] = "dB re baseline";
    const auto ref = absolute_level_reference(r.recording.info.calibration.unit);
    if (!ref) return;
    bands["absolute_level_reference"] = ref->text + " (ISO 1683:2015)";
    for (const auto& c : r.finding.comparisons) {
        if (c.key == "hf_band_level_db") bands["hf_level_db_" + ref->key_suffix] = c.value + ref->offset_db;
        if (c.key == "lf_band_level_db") bands["lf_level_db_" + ref->key_suffix] = c.value + ref->offset_db;
    }
}

json other_findings_to_json(const std::vector<models::OtherFinding>& found) {
    json out = json::array();
    for (const auto& o : found) out.push_back(o.text);
    return out;
}

json actions_to_json(const std::vector<models::Action>& actions) {
    json out = json::array();
    for (const auto& a : actions) {
        json j = {{"topic", models::to_string(a.topic)},
                  {"priority", models::to_string(a.priority)},
                  {"priority_rank", models::rank(a.priority)},
                  {"recheck_days", a.recheck_days},
                  {"step", a.step},
                  {"basis", a.basis}};
        if (a.concern) j["concern"] = models::to_string(*a.concern);
        out.push_back(std::move(j));
    }
    return out;
}

}  // namespace

json speed_to_json(const models::RecordingAnalysis& a) {
    const bool speed_known = a.rpm > 0.0;
    return {
        {"rpm", a.rpm},
        {"source", !speed_known ? "unknown" : (a.rpm_estimated ? "estimated" : "given")},
        {"resolution_rpm", a.rpm_resolution},
        {"confirmed", a.speed_confirmed},
        {"confirmation", a.rpm_estimated || !speed_known ? a.speed_how : "given"},
        {"search_low_rpm", a.speed_search_low_rpm},
        {"search_high_rpm", a.speed_search_high_rpm},
        {"shaft_hz", models::shaft_hz(a.rpm)},
        {"vanes", a.vanes},
        {"bpf_hz", a.vanes > 0 ? models::blade_pass_hz(a.rpm, a.vanes) : 0.0},
    };
}

json bands_to_json(const AnalyzedRecording& rec) {
    const auto& s = rec.analysis.setup;
    return {{"hf_low_hz", s.hf.low_hz},
            {"hf_high_hz", s.hf.high_hz},
            {"lf_low_hz", s.lf.low_hz},
            {"lf_high_hz", s.lf.high_hz},
            {"segment_s", s.segment_s},
            {"level_reference", "dB re 1 " + rec.info.calibration.unit + " squared"}};
}

json input_to_json(const AnalyzedRecording& rec) {
    const auto& in = rec.info;
    return {{"path", in.path},
            {"sample_rate_hz", in.fs_hz},
            {"duration_s", rec.analysis.duration_s},
            {"channel", in.channel},
            {"channels", in.channels},
            {"format", in.format},
            {"unit", in.calibration.unit},
            {"full_scale", in.calibration.full_scale},
            {"sha256", rec.sha256}};
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
    json speed = speed_to_json(a);
    speed["baseline_rpm"] = b.rpm;
    json j = {
        {"schema", kFindingSchema},
        {"cavitas_version", kVersion},
        {"created_utc", utc_now()},
        {"verdict", models::to_string(f.verdict)},
        {"confidence", f.confidence},
        {"raw_score", f.raw_score},
        {"confidence_grade", models::to_string(f.grade)},
        {"confidence_reasons", f.grade_reasons},
        {"evidence", f.evidence},
        {"other_findings", other_findings_to_json(f.other_findings)},
        {"actions", actions_to_json(r.actions)},
        {"operator_note", r.operator_note},
        {"baseline_warnings", warnings_to_json(f.baseline_warnings)},
        {"cautions", cavitating(f.verdict) ? json(models::cavitation_cautions()) : json::array()},
        {"indicators", indicators},
        {"bands", bands_to_json(r.recording)},
        {"speed", speed},
        {"envelope_peaks", peaks},
        {"quality", quality},
        {"input", input_to_json(r.recording)},
        {"baseline",
         {{"path", baseline_path},
          {"schema", b.schema},
          {"created_utc", b.created_utc},
          {"machine", b.machine},
          {"recordings", b.sources.size()},
          {"rpm", b.rpm}}},
    };
    json mismatches = json::array();
    for (const auto& m : r.reference.mismatches)
        mismatches.push_back({{"field", m.field}, {"recording", m.recording}, {"reference", m.reference}});
    j["reference"] = {{"kind", models::to_string(r.reference.kind)},
                      {"machine", r.reference.machine},
                      {"mismatches", mismatches},
                      {"level_floor_db", r.reference.level_floor_db}};
    if (b.suppression)
        j["reference"]["suppression"] = {{"npsha_low_m", b.suppression->npsha_low_m},
                                         {"npsha_high_m", b.suppression->npsha_high_m},
                                         {"ratio_low", b.suppression->ratio_low},
                                         {"npsh3_m", b.suppression->npsh3_m}};
    j["provenance"] = provenance_to_json(r, baseline_path);
    j["limits"] = {{"hf_alert_db", r.limits.hf_alert_db},
                   {"hf_developed_db", r.limits.hf_developed_db},
                   {"lf_alert_db", r.limits.lf_alert_db},
                   {"source", r.limits.source.empty() ? std::string("cavitas defaults (models/classifier.hpp)")
                                                      : r.limits.source},
                   {"reason", r.limits.reason}};
    j["velocity"] = velocity_to_json(r.velocity);
    add_absolute_band_levels(j["bands"], r);
    j["plots"] = plots_to_json(r);
    if (r.operating) {
        json op = hydraulics_to_json(r.operating->resolved);
        op["agreement"] = models::to_string(r.operating->reading.agreement);
        op["summary"] = r.operating->reading.summary;
        op["reading_notes"] = r.operating->reading.notes;
        json differences = json::array();
        for (const auto& d : r.operating->baseline_differences) differences.push_back(d.text);
        op["baseline_differences"] = differences;
        j["operating_point"] = op;
    }
    return j;
}

json provenance_to_json(const AnalyzeResult& r, const std::string& baseline_path) {
    return {{"analyst", r.analyst.name},
            {"analyst_source", r.analyst.source},
            {"host", r.analyst.host},
            {"cavitas_version", kVersion},
            {"baseline_path", baseline_path},
            {"baseline_sha256", r.baseline_sha256},
            {"baseline_created_utc", r.baseline.created_utc}};
}

json hydraulics_to_json(const ResolvedOperatingPoint& duty) {
    const auto& op = duty.op;
    const auto& h = duty.hydraulics;
    json stated = json::object();
    if (op.suction_pressure_pa) {
        stated["suction_pressure_pa"] = *op.suction_pressure_pa;
        stated["pressure_reference"] = reference_word(op);
    }
    if (op.barometric_pa) stated["barometric_pa"] = *op.barometric_pa;
    if (op.elevation_m) stated["elevation_m"] = *op.elevation_m;
    if (op.temperature_k) stated["temperature_k"] = *op.temperature_k;
    if (op.gauge_height_m) stated["gauge_height_m"] = *op.gauge_height_m;
    if (op.flow_m3_s) stated["flow_m3_s"] = *op.flow_m3_s;
    if (op.bore_m) stated["bore_m"] = *op.bore_m;
    if (op.npsh3_m) stated["npsh3_m"] = *op.npsh3_m;
    if (op.npsh3_curve) {
        json pts = json::array();
        for (const auto& p : op.npsh3_curve->points()) pts.push_back({{"flow_m3_s", p.flow_m3_s}, {"npsh3_m", p.npsh3_m}});
        stated["npsh3_curve"] = {{"file", op.npsh3_curve_name}, {"points", pts}};
    }
    if (op.vapour_pressure_pa) stated["vapour_pressure_pa"] = *op.vapour_pressure_pa;
    if (op.density_kg_m3) stated["density_kg_m3"] = *op.density_kg_m3;
    if (op.rpm) stated["rpm"] = *op.rpm;
    if (op.runner_setting_m) stated["runner_setting_m"] = *op.runner_setting_m;
    if (op.net_head_m) stated["net_head_m"] = *op.net_head_m;
    if (op.sigma_critical) stated["sigma_critical"] = *op.sigma_critical;
    if (!op.note.empty()) stated["note"] = op.note;

    json j = json::object();
    j["sources"] = duty.sources;
    j["stated"] = stated;
    if (h.barometric_pa) {
        j["barometric_pa"] = *h.barometric_pa;
        j["barometric_source"] = h.barometric_source;
    }
    if (h.liquid) {
        j["vapour_pressure_pa"] = h.liquid->vapour_pressure_pa;
        j["density_kg_m3"] = h.liquid->density_kg_m3;
        j["liquid_source"] = h.liquid->source;
    }
    if (h.absolute_suction_pa) j["absolute_suction_pa"] = *h.absolute_suction_pa;
    if (h.velocity_m_s) j["velocity_m_s"] = *h.velocity_m_s;
    if (h.npsh) {
        j["pressure_head_m"] = h.npsh->pressure_head_m;
        j["velocity_head_m"] = h.npsh->velocity_head_m;
        j["elevation_head_m"] = h.npsh->elevation_head_m;
        j["npsha_m"] = h.npsh->npsha_m;
    }
    if (h.npsh3_m) {
        j["npsh3_m"] = *h.npsh3_m;
        j["npsh3_source"] = h.npsh3_source;
    }
    if (h.margin) {
        j["margin_m"] = h.margin->margin_m;
        j["margin_ratio"] = h.margin->ratio;
        j["margin_class"] = models::to_string(h.margin->margin_class);
        j["required_npsha_m"] = h.margin->required_m;
        j["margin_guidance"] = models::margin_guidance_text();
    }
    if (h.margin_unavailable) j["margin_unavailable"] = *h.margin_unavailable;
    if (h.thoma_sigma) j["thoma_sigma"] = *h.thoma_sigma;
    if (h.thoma_ratio) j["thoma_ratio_to_critical"] = *h.thoma_ratio;
    j["notes"] = h.notes;
    return j;
}

json npsh_to_json(const ResolvedOperatingPoint& duty) {
    json j = {{"schema", kNpshSchema}, {"cavitas_version", kVersion}, {"created_utc", utc_now()}};
    j.update(hydraulics_to_json(duty));
    return j;
}

namespace {

constexpr double kFoot_m = 0.3048;

// "13.05 m (42.82 ft)": heads in both, for readers of either kind of pump curve.
std::string head(double m) { return fixed(m, 2) + " m (" + fixed(m / kFoot_m, 2) + " ft)"; }

// One term of the NPSH sum, right-aligned: "      12.070 m   (p_abs - p_v) / (rho g)".
std::string term(double m, bool with_sign = false) {
    char b[64];
    std::snprintf(b, sizeof b, with_sign ? "%+9.3f m" : "%9.3f m", m);
    return b;
}

}  // namespace

void write_npsh_account(std::ostream& out, const ResolvedOperatingPoint& duty) {
    const auto& op = duty.op;
    const auto& h = duty.hydraulics;
    if (h.npsh) {
        const auto& n = *h.npsh;
        out << "NPSH available  " << head(n.npsha_m) << " of liquid at the impeller-eye datum\n";
        out << "  suction pressure  " << kpa(*h.absolute_suction_pa) << " absolute";
        if (reference_word(op) == "gauge")
            out << " = " << kpa(*op.suction_pressure_pa) << " gauge + " << kpa(*h.barometric_pa) << " barometric ("
                << h.barometric_source << ")";
        out << "\n";
        out << "  liquid            " << h.liquid->source;
        if (op.temperature_k && h.liquid->source != "given") out << " at " << celsius(*op.temperature_k);
        out << ": vapour pressure " << kpa(h.liquid->vapour_pressure_pa) << ", density "
            << fixed(h.liquid->density_kg_m3, 2) << " kg/m3\n";
        out << "  pressure head     " << term(n.pressure_head_m) << "   (p_abs - p_v) / (rho g)\n";
        out << "  velocity head     " << term(n.velocity_head_m);
        if (h.velocity_m_s)
            out << "   v^2 / 2g, v = " << fixed(*h.velocity_m_s, 2) << " m/s (" << fixed(*op.flow_m3_s * kM3sToM3h, 1)
                << " m3/h in a " << fixed(*op.bore_m * 1000.0, 1) << " mm bore)";
        else
            out << "   (not included)";
        out << "\n";
        out << "  gauge height      " << term(n.elevation_head_m, true) << "   above the datum\n";
        out << "  NPSHa             " << term(n.npsha_m) << "\n";
    }
    if (h.npsh3_m) {
        out << "NPSH3           " << head(*h.npsh3_m) << " (" << h.npsh3_source << ")\n";
        if (h.margin) {
            const auto& m = *h.margin;
            out << "margin          " << signed_fixed(m.margin_m, 2) << " m (" << signed_fixed(m.margin_m / kFoot_m, 2)
                << " ft), NPSHa/NPSH3 = " << fixed(m.ratio, 2) << ": " << models::to_string(m.margin_class)
                << " (guidance minimum " << fixed(m.required_m, 2) << " m)\n";
            out << "  " << models::margin_guidance_text() << "\n";
        }
    }
    if (h.thoma_sigma) {
        const double rho_g = h.liquid->density_kg_m3 * models::kStandardGravityM_s2;
        out << "Thoma number (plant)  " << fixed(*h.thoma_sigma, 4) << " = (H_atm " << fixed(*h.barometric_pa / rho_g, 3)
            << " m - H_v " << fixed(h.liquid->vapour_pressure_pa / rho_g, 3) << " m - H_s "
            << fixed(*op.runner_setting_m, 3) << " m) / H " << fixed(*op.net_head_m, 3) << " m\n";
        out << "  barometric " << kpa(*h.barometric_pa) << " (" << h.barometric_source << "), " << h.liquid->source;
        if (op.temperature_k && h.liquid->source != "given") out << " at " << celsius(*op.temperature_k);
        out << "\n";
        if (h.thoma_ratio)
            out << "  " << fixed(*h.thoma_ratio, 2) << " x the critical value " << fixed(*op.sigma_critical, 4)
                << (*h.thoma_ratio < 1.0 ? ": below it, cavitation is expected at this setting" : "") << "\n";
    }
    if (!h.notes.empty()) {
        out << "notes:\n";
        for (const auto& n : h.notes) out << "  - " << n << "\n";
    }
}

void write_operating_point_summary(std::ostream& out, const models::OperatingPointSummary& s, std::size_t stated,
                                   std::size_t recordings) {
    if (s.empty()) {
        out << "  operating point not stated: give the flow, suction pressure and temperature (flags or NAME.op.toml "
               "beside each recording) so that later findings can be read against the duty\n";
        return;
    }
    std::string duty;
    auto add = [&duty](const std::string& t) { duty += (duty.empty() ? "" : ", ") + t; };
    if (s.flow_m3_s) add(fixed(*s.flow_m3_s * kM3sToM3h, 1) + " m3/h");
    if (s.rpm) add(fixed(*s.rpm, 0) + " rpm");
    if (s.temperature_k) add(celsius(*s.temperature_k));
    if (s.npsha_m) add("NPSHa " + fixed(*s.npsha_m, 2) + " m");
    if (s.margin_ratio) add("NPSHa/NPSH3 " + fixed(*s.margin_ratio, 2));
    out << "  operating point (median of " << stated << " of " << recordings << " recording(s)): " << duty << "\n";
}

}  // namespace cavitas::app
