// cavitas info: what a recording holds, before anything is judged.
#include "src/commands/commands.hpp"

#include <cstdio>
#include <ostream>

#include <nlohmann/json.hpp>

#include "src/io/atomic_file.hpp"
#include "src/io/output_guard.hpp"
#include "src/output/plain_text.hpp"

namespace cavitas::app {
namespace {

std::string rate_text(double fs_hz) {
    if (fs_hz <= 0.0) return "rate not stated";
    char b[48];
    std::snprintf(b, sizeof b, "%.10g Hz", fs_hz);
    return b;
}

std::string length_text(const ChannelSummary& c) {
    char b[64];
    if (c.fs_hz > 0.0)
        std::snprintf(b, sizeof b, "%zu samples, %.4g s", c.frames, static_cast<double>(c.frames) / c.fs_hz);
    else
        std::snprintf(b, sizeof b, "%zu samples", c.frames);
    return b;
}

std::string unit_text(const std::string& unit) {
    if (unit == "FS") return "values as fractions of full scale (calibrate with --full-scale)";
    if (unit.empty() || unit == "raw") return "no unit stated (give --unit or --sensitivity)";
    return "values in " + unit;
}

nlohmann::json summary_to_json(const FileSummary& s) {
    nlohmann::json channels = nlohmann::json::array();
    for (const auto& c : s.channels)
        channels.push_back({{"channel", c.index},
                            {"name", c.name},
                            {"unit", c.unit},
                            {"sample_rate_hz", c.fs_hz > 0.0 ? nlohmann::json(c.fs_hz) : nlohmann::json(nullptr)},
                            {"frames", c.frames},
                            {"duration_s", c.fs_hz > 0.0 ? nlohmann::json(static_cast<double>(c.frames) / c.fs_hz)
                                                         : nlohmann::json(nullptr)}});
    return {{"schema", "cavitas.info/1"}, {"path", s.path},   {"format", s.format},
            {"channels", channels},        {"notes", s.notes}};
}

}  // namespace

void run_info(const InfoOptions& o, std::ostream& out) {
    if (o.json_output) {
        OutputGuard guard;
        for (const auto& f : o.files) guard.input(f, "recording");
        guard.output(*o.json_output);
    }
    nlohmann::json all = nlohmann::json::array();
    for (const auto& path : o.files) {
        const FileSummary s = describe_recording(path, o.read);
        out << s.path << ": " << s.format << ", " << s.channels.size() << " channel(s)\n";
        for (const auto& c : s.channels) {
            out << "  channel " << c.index;
            if (!c.name.empty()) out << " '" << c.name << "'";
            out << ": " << rate_text(c.fs_hz) << ", " << length_text(c)
                << ", " << unit_text(c.unit) << "\n";
        }
        for (const auto& n : s.notes) out << "  note: " << n << "\n";
        all.push_back(summary_to_json(s));
    }
    if (o.json_output) write_file_atomically(*o.json_output, json_text(all, 2) + "\n");
}

}  // namespace cavitas::app
