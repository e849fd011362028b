#include "src/io/baseline_io.hpp"

#include <cmath>
#include <filesystem>
#include <fstream>
#include <sstream>

#include "src/io/calibration.hpp"
#include "src/io/errors.hpp"
#include "src/io/text_file.hpp"

namespace cavitas::app {

using nlohmann::json;
using namespace cavitas::models;

namespace {

json stat_json(const RobustStat& s) {
    return {{"median", s.median}, {"sigma", s.sigma}, {"p10", s.p10}, {"p90", s.p90}, {"count", s.count}};
}

double num(const json& j, const char* key, const std::string& where) {
    if (!j.contains(key) || !j.at(key).is_number())
        throw InputError(where + ": missing or non-numeric field '" + key + "'");
    const double v = j.at(key).get<double>();
    if (!std::isfinite(v)) throw InputError(where + ": field '" + std::string(key) + "' is not finite");
    return v;
}

// No indicator cavitas computes comes near these (dB levels, kurtosis, rates,
// ratios); within them, a z-score or a power 10^(dB/10) stays finite (a median
// of 1.7e308 once made z infinite, written as null).
constexpr double kIndicatorLimit = 1e9;
constexpr double kLevelLimitDb = 1000.0;

double indicator(const json& j, const char* key, const std::string& where, double limit = kIndicatorLimit) {
    const double v = num(j, key, where);
    if (std::fabs(v) > limit) {
        std::ostringstream m;
        m << where << ": '" << key << "' = " << v << " is outside -" << limit << " .. " << limit
          << ", beyond any value of this indicator";
        throw InputError(m.str());
    }
    return v;
}

RobustStat stat_from(const json& j, const std::string& where) {
    if (!j.is_object()) throw InputError(where + ": expected an object of statistics");
    RobustStat s;
    s.median = indicator(j, "median", where);
    s.sigma = indicator(j, "sigma", where);
    s.p10 = indicator(j, "p10", where);
    s.p90 = indicator(j, "p90", where);
    const double c = num(j, "count", where);
    if (!(c >= 0 && c <= 1e12)) throw InputError(where + ": count is outside 0 .. 1e12");
    s.count = static_cast<std::size_t>(c);
    return s;
}

// The operating point a baseline was learned at: only what was stated.
json operating_point_json(const OperatingPointSummary& s) {
    json j = json::object();
    if (s.rpm) j["rpm"] = *s.rpm;
    if (s.flow_m3_s) j["flow_m3_s"] = *s.flow_m3_s;
    if (s.temperature_k) j["temperature_k"] = *s.temperature_k;
    if (s.absolute_suction_pa) j["absolute_suction_pa"] = *s.absolute_suction_pa;
    if (s.npsha_m) j["npsha_m"] = *s.npsha_m;
    if (s.margin_ratio) j["margin_ratio"] = *s.margin_ratio;
    return j;
}

}  // namespace

json warnings_to_json(const std::vector<BaselineWarning>& warnings) {
    json a = json::array();
    for (const auto& w : warnings)
        a.push_back({{"check", w.check}, {"file", w.file}, {"time_s", w.time_s}, {"message", w.message}});
    return a;
}

json baseline_to_json(const Baseline& b) {
    json seg = json::object();
    for (std::size_t i = 0; i < kSegmentIndicatorCount; ++i)
        seg[std::string(info(static_cast<SegmentIndicator>(i)).name)] = stat_json(b.segment[i]);
    json rec = json::object();
    for (std::size_t i = 0; i < kRecordingIndicatorCount; ++i)
        rec[std::string(info(static_cast<RecordingIndicator>(i)).name)] = stat_json(b.recording[i]);
    json sources = json::array();
    for (const auto& s : b.sources) {
        json values = json::object();
        for (std::size_t i = 0; i < kSegmentIndicatorCount; ++i)
            values[std::string(info(static_cast<SegmentIndicator>(i)).name)] = s.series.values[i];
        json recv = json::object();
        for (std::size_t i = 0; i < kRecordingIndicatorCount; ++i)
            recv[std::string(info(static_cast<RecordingIndicator>(i)).name)] = s.recording[i];
        sources.push_back({{"file", s.file},
                           {"sha256", s.sha256},
                           {"duration_s", s.duration_s},
                           {"rpm", s.rpm},
                           {"segment_values", values},
                           {"recording_values", recv},
                           {"spectrum_median_db", s.spectrum_median_db}});
    }
    const json warnings = warnings_to_json(b.warnings);
    const SpeedModel& m = b.speed;
    json doc = {
        {"schema", b.schema},
        {"cavitas_version", b.cavitas_version},
        {"created_utc", b.created_utc},
        {"context",
         {{"machine", b.machine},
          {"sample_rate_hz", b.setup.fs_hz},
          {"channel", b.channel},
          {"rpm", b.rpm},
          {"rpm_estimated", b.rpm_estimated},
          {"vanes", b.vanes},
          {"unit", b.unit},
          {"full_scale", b.full_scale},
          {"values_unit", b.values_unit},
          {"calibration", b.calibration_account},
          {"mount", b.mount}}},
        {"warnings", warnings},
        {"speed_model",
         {{"rpm_ref", m.rpm_ref},
          {"rpm_low", m.rpm_low},
          {"rpm_high", m.rpm_high},
          {"speeds", m.speeds},
          {"fitted", m.fitted},
          {"hf_slope_db_per_decade", m.hf_slope_db_per_decade},
          {"lf_slope_db_per_decade", m.lf_slope_db_per_decade},
          {"covered_low_rpm", m.covered_low_rpm()},
          {"covered_high_rpm", m.covered_high_rpm()}}},
        {"setup",
         {{"segment_s", b.setup.segment_s},
          {"hf_low_hz", b.setup.hf.low_hz},
          {"hf_high_hz", b.setup.hf.high_hz},
          {"lf_low_hz", b.setup.lf.low_hz},
          {"lf_high_hz", b.setup.lf.high_hz},
          {"sensor_max_hz", b.setup.sensor_max_hz}}},
        {"segments", b.segments},
        {"sources", sources},
        {"segment_indicators", seg},
        {"recording_indicators", rec},
        {"operating_point", operating_point_json(b.operating_point)},
        {"spectrum",
         {{"center_hz", b.spectrum.center_hz},
          {"median_db", b.spectrum.median_db},
          {"p10_db", b.spectrum.p10_db},
          {"p90_db", b.spectrum.p90_db}}},
    };
    if (b.suppression)
        doc["suppression"] = {{"npsha_low_m", b.suppression->npsha_low_m},
                              {"npsha_high_m", b.suppression->npsha_high_m},
                              {"ratio_low", b.suppression->ratio_low},
                              {"npsh3_m", b.suppression->npsh3_m}};
    return doc;
}

namespace {

// A number within [lo, hi], or an InputError naming the field, the value and the range.
double in_range(double v, double lo, double hi, const char* field, const std::string& where) {
    if (!(v >= lo && v <= hi)) {
        std::ostringstream m;
        m << where << ": '" << field << "' = " << v << " is outside " << lo << " .. " << hi;
        throw InputError(m.str());
    }
    return v;
}

void check_ranges(const Baseline& b, const std::string& origin) {
    const std::string wc = origin + " (context)", ws = origin + " (setup)";
    in_range(b.setup.fs_hz, 100.0, 5.0e6, "sample_rate_hz", wc);
    in_range(b.rpm, 0.0, 100000.0, "rpm", wc);
    in_range(b.full_scale, 1e-12, 1e12, "full_scale", wc);
    if (b.unit != "g" && b.unit != "m/s2" && b.unit != "Pa" && b.unit != "FS")
        throw InputError(wc + ": 'unit' = '" + b.unit + "' is not one of g, m/s2, Pa, FS");
    const double nyq = b.setup.fs_hz / 2.0;
    in_range(b.setup.segment_s, 0.25, 10.0, "segment_s", ws);
    in_range(b.setup.hf.low_hz, 0.0, nyq, "hf_low_hz", ws);
    in_range(b.setup.hf.high_hz, b.setup.hf.low_hz + 1.0, nyq, "hf_high_hz", ws);
    in_range(b.setup.lf.low_hz, 0.0, nyq, "lf_low_hz", ws);
    in_range(b.setup.lf.high_hz, b.setup.lf.low_hz + 1.0, nyq, "lf_high_hz", ws);
    in_range(b.setup.sensor_max_hz, 0.0, 1.0e6, "sensor_max_hz", ws);
}

std::string str(const json& j, const char* key, const std::string& where) {
    if (!j.contains(key) || !j.at(key).is_string()) throw InputError(where + ": missing or non-text field '" + key + "'");
    return j.at(key).get<std::string>();
}

std::vector<double> finite_array(const json& j, const std::string& where, std::size_t max,
                                 double limit = kIndicatorLimit) {
    if (!j.is_array()) throw InputError(where + ": expected an array of numbers");
    if (j.size() > max) throw InputError(where + ": more than " + std::to_string(max) + " values");
    std::vector<double> v;
    for (const auto& x : j) {
        if (!x.is_number() || !std::isfinite(x.get<double>()))
            throw InputError(where + ": holds a value that is not a finite number");
        if (std::fabs(x.get<double>()) > limit)
            throw InputError(where + ": holds " + std::to_string(x.get<double>()) + ", beyond any value it can take");
        v.push_back(x.get<double>());
    }
    return v;
}

// One visit. Older baselines have file, sha256, duration and rpm only.
BaselineSource source_from(const json& e, const std::string& origin) {
    const std::string w = origin + " (sources)";
    if (!e.is_object()) throw InputError(w + ": an entry is not an object");
    BaselineSource src;
    if (e.contains("file") && e["file"].is_string()) src.file = e["file"];
    if (e.contains("sha256") && e["sha256"].is_string()) src.sha256 = e["sha256"];
    if (e.contains("duration_s") && e["duration_s"].is_number()) src.duration_s = e["duration_s"];
    if (e.contains("rpm")) src.rpm = in_range(num(e, "rpm", w), 0.0, 100000.0, "rpm", w);
    if (!e.contains("segment_values")) return src;
    const json& sv = e["segment_values"];
    if (!sv.is_object()) throw InputError(w + ": 'segment_values' is not an object");
    std::size_t n = 0;
    for (std::size_t i = 0; i < kSegmentIndicatorCount; ++i) {
        const std::string name(info(static_cast<SegmentIndicator>(i)).name);
        if (!sv.contains(name)) throw InputError(w + ": segment values of '" + name + "' missing");
        src.series.values[i] = finite_array(sv[name], w + " (" + name + ")", 1000000);
        if (i > 0 && src.series.values[i].size() != n)
            throw InputError(w + ": segment values of '" + name + "' differ in count from the others");
        n = src.series.values[i].size();
    }
    const json& rv = e.contains("recording_values") ? e["recording_values"] : json::object();
    if (!rv.is_object()) throw InputError(w + ": 'recording_values' is not an object");
    for (std::size_t i = 0; i < kRecordingIndicatorCount; ++i) {
        const std::string name(info(static_cast<RecordingIndicator>(i)).name);
        src.recording[i] = indicator(rv, name.c_str(), w);
    }
    if (e.contains("spectrum_median_db")) src.spectrum_median_db = finite_array(e["spectrum_median_db"], w, 10000, kLevelLimitDb);
    return src;
}

}  // namespace

Baseline baseline_from_json_unchecked(const json& j, const std::string& origin) {
    if (!j.is_object()) throw InputError(origin + ": not a cavitas baseline (expected a JSON object)");
    if (!j.contains("schema") || !j.at("schema").is_string())
        throw InputError(origin + ": not a cavitas baseline (no \"schema\" field)");
    const std::string schema = j.at("schema").get<std::string>();
    if (schema != Baseline::kSchema && schema != Baseline::kOlderSchema) {
        if (schema.rfind("cavitas.baseline/", 0) == 0)
            throw InputError(origin + ": baseline schema '" + schema + "' is not supported by this cavitas (reads '" +
                             Baseline::kSchema + "'); relearn the baseline or update cavitas");
        throw InputError(origin + ": not a cavitas baseline (schema '" + schema + "')");
    }
    Baseline b;
    b.schema = schema;
    if (j.contains("cavitas_version") && j["cavitas_version"].is_string()) b.cavitas_version = j["cavitas_version"];
    if (j.contains("created_utc") && j["created_utc"].is_string()) b.created_utc = j["created_utc"];
    if (!j.contains("context") || !j["context"].is_object()) throw InputError(origin + ": missing 'context'");
    if (!j.contains("setup") || !j["setup"].is_object()) throw InputError(origin + ": missing 'setup'");
    const json& c = j["context"];
    const json& s = j["setup"];
    const std::string wc = origin + " (context)", ws = origin + " (setup)";
    if (c.contains("machine")) {
        if (!c["machine"].is_string()) throw InputError(wc + ": 'machine' is not a string");
        b.machine = c["machine"];
    }
    b.setup.fs_hz = num(c, "sample_rate_hz", wc);
    b.channel = static_cast<int>(in_range(num(c, "channel", wc), 0, 1023, "channel", wc));
    b.rpm = num(c, "rpm", wc);
    if (c.contains("rpm_estimated")) {
        if (!c["rpm_estimated"].is_boolean()) throw InputError(wc + ": 'rpm_estimated' is not true or false");
        b.rpm_estimated = c["rpm_estimated"].get<bool>();
    }
    b.vanes = static_cast<int>(in_range(num(c, "vanes", wc), 0, 200, "vanes", wc));
    if (!c.contains("unit") || !c["unit"].is_string()) throw InputError(wc + ": missing 'unit'");
    b.unit = c["unit"];
    b.full_scale = num(c, "full_scale", wc);
    // Optional: the unit of the learned files' values and how the calibration was found (absent: sound files).
    if (c.contains("values_unit")) {
        if (!c["values_unit"].is_string() || !signal_unit(c["values_unit"].get<std::string>()))
            throw InputError(wc + ": 'values_unit' is not a unit cavitas reads (g, m/s2, Pa, V, FS, raw)");
        b.values_unit = signal_unit(c["values_unit"].get<std::string>())->name;
    }
    if (c.contains("calibration")) {
        if (!c["calibration"].is_string() || c["calibration"].get<std::string>().size() > 200)
            throw InputError(wc + ": 'calibration' is not a text of at most 200 bytes");
        b.calibration_account = c["calibration"].get<std::string>();
    }
    b.setup.segment_s = num(s, "segment_s", ws);
    b.setup.hf.low_hz = num(s, "hf_low_hz", ws);
    b.setup.hf.high_hz = num(s, "hf_high_hz", ws);
    b.setup.lf.low_hz = num(s, "lf_low_hz", ws);
    b.setup.lf.high_hz = num(s, "lf_high_hz", ws);
    b.setup.sensor_max_hz = num(s, "sensor_max_hz", ws);
    check_ranges(b, origin);
    b.segments = static_cast<std::size_t>(in_range(num(j, "segments", origin), 0, 1e9, "segments", origin));
    if (j.contains("sources") && j["sources"].is_array()) {
        if (j["sources"].size() > 10000) throw InputError(origin + ": more than 10 000 sources");
        for (const auto& e : j["sources"]) b.sources.push_back(source_from(e, origin));
    }
    if (c.contains("mount")) {
        if (!c["mount"].is_string()) throw InputError(wc + ": 'mount' is not a string");
        b.mount = c["mount"];
    }
    if (j.contains("warnings")) {
        if (!j["warnings"].is_array()) throw InputError(origin + ": 'warnings' is not an array");
        for (const auto& w : j["warnings"]) {
            const std::string ww = origin + " (warnings)";
            if (!w.is_object()) throw InputError(ww + ": an entry is not an object");
            BaselineWarning bw;
            bw.check = str(w, "check", ww);
            bw.file = str(w, "file", ww);
            bw.message = str(w, "message", ww);
            bw.time_s = num(w, "time_s", ww);
            b.warnings.push_back(bw);
        }
    }
    // The speed model follows from the visits; relearned rather than trusted from the file.
    {
        bool visits = !b.sources.empty();
        for (const auto& v : b.sources) visits = visits && v.series.segments() > 0;
        if (visits) {
            std::vector<BaselineSource> copy = b.sources;
            b.speed = learn_from_sources(std::move(copy), b.setup, b.vanes).speed;
        } else {
            // An older baseline: its sources carry no values; one speed, pooled statistics.
            b.speed.rpm_ref = b.speed.rpm_low = b.speed.rpm_high = b.rpm;
            b.speed.speeds = b.rpm > 0.0 ? 1 : 0;
        }
    }
    // Optional (older baselines have none): the operating point it was learned at.
    if (j.contains("operating_point")) {
        const json& o = j["operating_point"];
        const std::string wo = origin + " (operating_point)";
        if (!o.is_object()) throw InputError(wo + ": expected an object");
        auto opt = [&](const char* key, double lo, double hi) -> std::optional<double> {
            if (!o.contains(key)) return std::nullopt;
            return in_range(num(o, key, wo), lo, hi, key, wo);
        };
        b.operating_point.rpm = opt("rpm", 0.0, 100000.0);
        b.operating_point.flow_m3_s = opt("flow_m3_s", 0.0, 1e4);
        b.operating_point.temperature_k = opt("temperature_k", 0.0, 2000.0);
        b.operating_point.absolute_suction_pa = opt("absolute_suction_pa", 0.0, 1e9);
        b.operating_point.npsha_m = opt("npsha_m", -1e5, 1e5);
        b.operating_point.margin_ratio = opt("margin_ratio", -1e5, 1e5);
    }
    // Optional: learned from a suppression run (baseline --suppression).
    if (j.contains("suppression")) {
        const json& o = j["suppression"];
        const std::string wo = origin + " (suppression)";
        if (!o.is_object()) throw InputError(wo + ": expected an object");
        SuppressionRun run;
        run.npsha_low_m = in_range(num(o, "npsha_low_m", wo), 0.0, 1e5, "npsha_low_m", wo);
        run.npsha_high_m = in_range(num(o, "npsha_high_m", wo), run.npsha_low_m, 1e5, "npsha_high_m", wo);
        run.ratio_low = in_range(num(o, "ratio_low", wo), 0.0, 1e5, "ratio_low", wo);
        run.npsh3_m = in_range(num(o, "npsh3_m", wo), 0.0, 1e5, "npsh3_m", wo);
        b.suppression = run;
    }
    // Optional: the spectrum profile statistics (for reports).
    if (j.contains("spectrum")) {
        const json& sp = j["spectrum"];
        const std::string wsp = origin + " (spectrum)";
        if (!sp.is_object()) throw InputError(wsp + ": expected an object");
        auto arr = [&](const char* key) {
            if (!sp.contains(key) || !sp[key].is_array()) throw InputError(wsp + ": missing array '" + key + "'");
            return finite_array(sp[key], wsp + " (" + key + ")", 10000,
                                std::string(key) == "center_hz" ? kIndicatorLimit : kLevelLimitDb);
        };
        b.spectrum.center_hz = arr("center_hz");
        b.spectrum.median_db = arr("median_db");
        b.spectrum.p10_db = arr("p10_db");
        b.spectrum.p90_db = arr("p90_db");
        const std::size_t n = b.spectrum.center_hz.size();
        if (b.spectrum.median_db.size() != n || b.spectrum.p10_db.size() != n || b.spectrum.p90_db.size() != n)
            throw InputError(wsp + ": the arrays differ in length");
    }
    for (const char* part : {"segment_indicators", "recording_indicators"})
        if (!j.contains(part) || !j[part].is_object()) throw InputError(origin + ": missing '" + part + "'");
    for (std::size_t i = 0; i < kSegmentIndicatorCount; ++i) {
        const std::string name(info(static_cast<SegmentIndicator>(i)).name);
        if (!j["segment_indicators"].contains(name)) throw InputError(origin + ": indicator '" + name + "' missing");
        b.segment[i] = stat_from(j["segment_indicators"][name], origin + " (" + name + ")");
    }
    for (std::size_t i = 0; i < kRecordingIndicatorCount; ++i) {
        const std::string name(info(static_cast<RecordingIndicator>(i)).name);
        if (!j["recording_indicators"].contains(name)) throw InputError(origin + ": indicator '" + name + "' missing");
        b.recording[i] = stat_from(j["recording_indicators"][name], origin + " (" + name + ")");
    }
    return b;
}

Baseline baseline_from_json(const json& j, const std::string& origin) {
    try {
        Baseline b = baseline_from_json_unchecked(j, origin);
        for (const auto& s : b.segment)
            if (!(s.sigma >= 0.0)) throw InputError(origin + ": an indicator has a negative spread");
        for (const auto& s : b.recording)
            if (!(s.sigma >= 0.0)) throw InputError(origin + ": an indicator has a negative spread");
        return b;
    } catch (const json::exception& e) {
        // Any type surprise the checks above did not foresee still names the file.
        throw InputError(origin + ": baseline does not have the expected form (" + std::string(e.what()) + ")");
    }
}

json baseline_channels_to_json(const std::vector<Baseline>& channels) {
    if (channels.size() == 1) return baseline_to_json(channels.front());
    json list = json::array();
    for (const auto& b : channels) list.push_back(baseline_to_json(b));
    return {{"schema", kBaselineChannelsSchema},
            {"machine", channels.empty() ? std::string() : channels.front().machine},
            {"channels", list}};
}

std::vector<Baseline> read_baseline_channels(const std::string& path, std::string* sha256) {
    const std::string text = read_text_file(path, "baseline file", 64u << 20, sha256);
    json j = json::parse(text, nullptr, false);
    if (j.is_discarded()) throw InputError(path + ": baseline is not valid JSON (corrupt or truncated)");
    if (!j.is_object() || !j.contains("schema") || j["schema"] != kBaselineChannelsSchema) return {baseline_from_json(j, path)};
    if (!j.contains("channels") || !j["channels"].is_array() || j["channels"].size() < 2 || j["channels"].size() > 64)
        throw InputError(path + ": 'channels' is not a list of 2 to 64 baselines");
    std::vector<Baseline> out;
    for (std::size_t k = 0; k < j["channels"].size(); ++k) {
        out.push_back(baseline_from_json(j["channels"][k], path + ": channels[" + std::to_string(k) + "]"));
        if (k > 0 && out[k].channel <= out[k - 1].channel)
            throw InputError(path + ": channels[" + std::to_string(k) + "]: channel " + std::to_string(out[k].channel) +
                             " is not above the one before; each channel once, ascending");
    }
    return out;
}

Baseline read_baseline_file(const std::string& path, std::optional<int> channel, std::string* sha256) {
    std::vector<Baseline> all = read_baseline_channels(path, sha256);
    if (all.size() == 1) return std::move(all.front());
    std::string list;
    for (const auto& b : all) {
        if (channel && b.channel == *channel) return b;
        list += (list.empty() ? "" : ", ") + std::to_string(b.channel);
    }
    throw InputError(path + ": holds the baselines of channels " + list +
                     (channel ? ", not of channel " + std::to_string(*channel) : std::string("; say which with --channel")));
}

}  // namespace cavitas::app
