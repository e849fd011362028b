// cavitas analyze: one recording judged against its baseline; several
// channels of one point (--channel 0,1,2 or all) each against its own
// statistics, the point's verdict the worst channel's.
#include "src/commands/commands.hpp"

#include <cstdio>
#include <ostream>

#include "src/io/atomic_file.hpp"
#include "src/io/baseline_io.hpp"
#include "src/io/output_guard.hpp"
#include "src/io/point_limits.hpp"
#include "src/output/finding.hpp"
#include "src/output/plain_text.hpp"

namespace cavitas::app {
namespace {

void guard_analyze(const AnalyzeOptions& o) {
    if (!o.json_output) return;
    OutputGuard guard;
    guard.input(o.recording, "recording");
    guard.input(o.baseline, "baseline");
    guard_operating_inputs(guard, o.operating, o.recording);
    if (o.zones) guard.input(*o.zones, "zone file");
    guard.input(o.limits ? *o.limits : limits_path_beside(o.baseline), "point limits file");
    guard.output(*o.json_output);
}

// The channels a selection names: the baseline's when it holds several and
// "all" was asked, else the file's.
std::vector<int> point_channels(const AnalyzeOptions& o, const ChannelSelection& s) {
    const std::vector<models::Baseline> baselines = read_baseline_channels(o.baseline);
    if (s.all && baselines.size() > 1) {
        std::vector<int> list;
        for (const auto& b : baselines) list.push_back(b.channel);
        return list;
    }
    const auto file = open_recording(o.recording, o.read, Calibration{});
    return channels_of(s, file->info().channels, o.recording);
}

std::string rise_text(const models::Finding& f) {
    char b[48];
    std::snprintf(b, sizeof b, "HF %+.1f dB re baseline", f.hf_rise_db);
    return b;
}

bool cavitating(models::Verdict v) {
    return v == models::Verdict::incipient || v == models::Verdict::developed;
}

// The evidence line that sets the axes side by side.
std::string axes_evidence(const std::vector<AnalyzeResult>& results) {
    std::size_t seen = 0;
    std::string each;
    for (const auto& r : results) {
        if (cavitating(r.finding.verdict)) ++seen;
        each += (each.empty() ? "" : "; ") + std::string("channel ") + std::to_string(r.recording.info.channel) + " " +
                models::to_string(r.finding.verdict) + " (" + rise_text(r.finding) + ")";
    }
    return "cavitation seen on " + std::to_string(seen) + " of " + std::to_string(results.size()) +
           " channels of this point: " + each;
}

// The point's finding: the worst channel's, with the axes as evidence and every channel's finding.
nlohmann::json point_json(std::vector<AnalyzeResult>& results, const std::string& baseline_path, std::size_t& worst) {
    std::vector<models::Verdict> verdicts;
    for (const auto& r : results) verdicts.push_back(r.finding.verdict);
    const models::Verdict point = point_verdict(verdicts);
    worst = 0;
    for (std::size_t k = 0; k < results.size(); ++k) {
        const auto& f = results[k].finding;
        const auto& w = results[worst].finding;
        if (f.verdict == point && (w.verdict != point || f.hf_rise_db > w.hf_rise_db)) worst = k;
    }
    nlohmann::json channels = nlohmann::json::array();
    std::size_t seen = 0;
    for (const auto& r : results) {
        nlohmann::json one = finding_to_json(r, baseline_path);
        one.erase("plots");  // the worst channel's are the point's; the others would triple the file
        channels.push_back(std::move(one));
        if (cavitating(r.finding.verdict)) ++seen;
    }
    AnalyzeResult& top = results[worst];
    top.finding.evidence.insert(top.finding.evidence.begin(), axes_evidence(results));
    nlohmann::json j = finding_to_json(top, baseline_path);
    std::vector<int> list;
    for (const auto& r : results) list.push_back(r.recording.info.channel);
    j["point"] = {{"verdict", models::to_string(point)},
                  {"channels", list},
                  {"worst_channel", top.recording.info.channel},
                  {"cavitating_channels", seen}};
    j["channels"] = std::move(channels);
    return j;
}

}  // namespace

void run_analyze(const AnalyzeOptions& o, const std::optional<ChannelSelection>& several, std::ostream& out,
                 std::ostream& err) {
    guard_analyze(o);
    if (!several) {
        const AnalyzeResult r = analyze(o, stderr_progress(o.recording, err));
        if (o.json_output) write_file_atomically(*o.json_output, json_text(finding_to_json(r, o.baseline), 2) + "\n");
        write_summary(out, r, o.baseline);
        return;
    }
    std::vector<AnalyzeResult> results;
    for (int channel : point_channels(o, *several)) {
        AnalyzeOptions one = o;
        one.read.channel = channel;
        results.push_back(analyze(one, stderr_progress(o.recording, err)));
    }
    std::size_t worst = 0;
    const nlohmann::json j = point_json(results, o.baseline, worst);
    if (o.json_output) write_file_atomically(*o.json_output, json_text(j, 2) + "\n");
    out << "point of " << results.size() << " channels: " << j["point"]["verdict"].get<std::string>() << " (worst: channel "
        << results[worst].recording.info.channel << ")\n";
    for (const auto& r : results)
        out << "  channel " << r.recording.info.channel << ": " << models::to_string(r.finding.verdict) << ", "
            << rise_text(r.finding) << ", confidence " << static_cast<int>(100.0 * r.finding.confidence + 0.5) << " %\n";
    out << "the worst channel in full:\n";
    write_summary(out, results[worst], o.baseline);
}

}  // namespace cavitas::app
