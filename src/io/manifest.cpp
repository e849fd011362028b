#include "src/io/manifest.hpp"

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <set>

#include "src/io/csv.hpp"
#include "src/io/errors.hpp"
#include "src/io/recording.hpp"
#include "src/io/text_file.hpp"

namespace cavitas::app {

namespace fs = std::filesystem;

std::optional<std::string> unusable_as_file_name(const std::string& tag) {
    if (tag.empty()) return "is empty";
    if (tag == "." || tag == "..") return "cannot be '.' or '..'";
    for (unsigned char c : tag) {
        if (c == '/' || c == '\\') return "cannot hold '/' or '\\' (it names a file of the baseline library)";
        if (c < 0x20 || c == 0x7f) return "holds a control character";
    }
    // Two tags and a line number name a finding file (L000012_MACHINE_POINT.json): 100 + 100 bytes fit NAME_MAX.
    if (tag.size() > 100) return "is longer than 100 bytes";
    return std::nullopt;
}

ReadRequest read_request_of(const ManifestRow& row) {
    ReadRequest read;
    read.channel = row.channel;
    read.variable = row.variable;
    read.sample_rate_hz = row.sample_rate_hz;
    return read;
}

namespace {

const std::vector<std::string> kRequired = {"file", "machine", "point", "channel", "datetime", "rpm", "vanes"};
const std::vector<std::string> kSensor = {"full_scale", "sensitivity", "gain",    "unit",
                                          "mount",      "sensor_max_hz", "variable", "sample_rate_hz", "event",
                                          "reference"};

// Linear in the cell's length (a cell of a million blanks took 23 s when each was erased from the front).
std::string trim(const std::string& s) {
    const auto blank = [](unsigned char c) { return std::isspace(c) != 0; };
    std::size_t b = 0, e = s.size();
    while (b < e && blank(static_cast<unsigned char>(s[b]))) ++b;
    while (e > b && blank(static_cast<unsigned char>(s[e - 1]))) --e;
    return s.substr(b, e - b);
}

bool is_operating_key(const std::string& k) {
    for (const auto& f : operating_point_fields())
        if (k == f.key) return true;
    return false;
}

// A whole number within [lo, hi], or nullopt.
std::optional<long> whole(const std::string& s, long lo, long hi) {
    const char* b = s.c_str();
    char* e = nullptr;
    const long v = std::strtol(b, &e, 10);
    if (e == b || *e != '\0' || v < lo || v > hi) return std::nullopt;
    return v;
}

std::optional<double> number(const std::string& s, double lo, double hi) {
    const char* b = s.c_str();
    char* e = nullptr;
    const double v = std::strtod(b, &e);
    if (e == b || *e != '\0' || !std::isfinite(v) || v < lo || v > hi) return std::nullopt;
    return v;
}

// Why an event's words cannot be recorded, or nullopt.
std::optional<std::string> unusable_event_text(const std::string& what) {
    for (unsigned char c : what)
        if (c < 0x20 || c == 0x7f) return "holds a control character";
    if (what.size() > 500) return "is longer than 500 bytes";
    return std::nullopt;
}

}  // namespace

Manifest read_manifest(const std::string& path) {
    const std::string text = read_text_file(path, "route manifest", 256u << 20);
    Manifest m = parse_manifest(text, path);
    m.sha256 = sha256_file(path);
    return m;
}

Manifest parse_manifest(const std::string& text, const std::string& path) {
    Manifest m;
    m.path = path;
    m.dir = fs::path(path).parent_path().string();
    const auto records = parse_csv(text, path);
    if (records.empty()) throw InputError(path + ": empty manifest (expected a header row naming the columns)");
    std::vector<std::string> header;
    for (const auto& h : records.front().fields) {
        std::string k = trim(h);
        std::transform(k.begin(), k.end(), k.begin(), [](unsigned char c) { return std::tolower(c); });
        header.push_back(k);
    }
    std::set<std::string> seen;
    for (const auto& h : header) {
        if (h.empty()) throw InputError(path + ":" + std::to_string(records.front().line) + ": a header cell is empty");
        if (!seen.insert(h).second)
            throw InputError(path + ":" + std::to_string(records.front().line) + ": column '" + h + "' is named twice");
    }
    std::string missing;
    for (const auto& r : kRequired)
        if (!seen.count(r)) missing += (missing.empty() ? "" : ", ") + r;
    if (!missing.empty())
        throw InputError(path + ":" + std::to_string(records.front().line) + ": the header lacks the column(s) " + missing +
                         " (a route manifest needs file, machine, point, channel, datetime, rpm, vanes)");
    for (const auto& h : header)
        if (std::find(kRequired.begin(), kRequired.end(), h) == kRequired.end() &&
            std::find(kSensor.begin(), kSensor.end(), h) == kSensor.end() && !is_operating_key(h))
            m.extra_columns.push_back(h);

    for (std::size_t k = 1; k < records.size(); ++k) {
        const CsvRecord& rec = records[k];
        ManifestRow row;
        row.line = rec.line;
        row.index = m.rows.size();
        auto fail = [&row](const std::string& why) {
            if (row.error.empty()) row.error = why;
        };
        if (rec.fields.size() != header.size())
            fail("has " + std::to_string(rec.fields.size()) + " cells, the header " + std::to_string(header.size()));
        auto cell = [&](const std::string& name) -> std::string {
            const auto it = std::find(header.begin(), header.end(), name);
            const auto i = static_cast<std::size_t>(it - header.begin());
            return it == header.end() || i >= rec.fields.size() ? std::string() : trim(rec.fields[i]);
        };
        row.file = cell("file");
        row.machine = cell("machine");
        row.point = cell("point");
        row.datetime = cell("datetime");
        row.event = cell("event");
        const bool event_only = row.file.empty() && !row.event.empty();
        if (row.file.empty()) {
            if (!event_only) fail("the file cell is empty");
        } else {
            row.path = (fs::path(row.file).is_absolute() ? fs::path(row.file) : fs::path(m.dir) / row.file).string();
        }
        if (auto why = unusable_as_file_name(row.machine)) fail("machine '" + row.machine + "' " + *why);
        if (!(event_only && row.point.empty()))
            if (auto why = unusable_as_file_name(row.point)) fail("point '" + row.point + "' " + *why);
        if (auto why = unusable_event_text(row.event)) fail("event '" + row.event + "' " + *why);
        if (const std::string c = cell("channel"); !c.empty()) {
            try {
                row.channels = parse_channels(c);
                if (!row.channels.all) row.channel = row.channels.channels.front();
            } catch (const UsageError&) {
                fail("channel '" + c + "' is not a channel 0 .. 1023, a list such as 0,1,2, or all");
            }
        }
        if (auto t = parse_iso8601(row.datetime)) row.when = *t;
        else fail("datetime '" + row.datetime + "' is not an ISO 8601 date and time (e.g. 2026-11-02T09:05)");
        if (const std::string c = cell("rpm"); !c.empty()) {
            if (auto v = number(c, 1.0, 100000.0)) row.rpm = *v;
            else fail("rpm '" + c + "' is not a speed 1 .. 100000");
        }
        if (const std::string c = cell("vanes"); !c.empty()) {
            if (auto v = whole(c, 0, 200)) row.vanes = static_cast<int>(*v);
            else fail("vanes '" + c + "' is not a whole number 0 .. 200");
        }
        if (const std::string c = cell("full_scale"); !c.empty()) row.calibration.full_scale = c;
        if (const std::string c = cell("sensitivity"); !c.empty()) row.calibration.sensitivity = c;
        if (const std::string c = cell("gain"); !c.empty()) row.calibration.gain = c;
        if (const std::string c = cell("unit"); !c.empty()) row.calibration.unit = c;
        row.variable = cell("variable");
        if (const std::string c = cell("sample_rate_hz"); !c.empty()) {
            if (auto v = number(c, 1.0, 1.0e7)) row.sample_rate_hz = *v;
            else fail("sample_rate_hz '" + c + "' is not a rate 1 .. 1e7 Hz");
        }
        row.mount = cell("mount");
        row.reference = cell("reference");
        if (!row.reference.empty())
            row.reference_path = (fs::path(row.reference).is_absolute() ? fs::path(row.reference)
                                                                        : fs::path(m.dir) / row.reference)
                                     .string();
        if (const std::string c = cell("sensor_max_hz"); !c.empty()) {
            if (auto v = number(c, 100.0, 1.0e6)) row.sensor_max_hz = *v;
            else fail("sensor_max_hz '" + c + "' is not a frequency 100 .. 1e6 Hz");
        }
        for (const auto& h : header) {
            if (is_operating_key(h)) {
                const std::string c = cell(h);
                if (!c.empty()) row.operating.emplace_back(h, c);
            }
        }
        for (const auto& e : m.extra_columns) row.extra.emplace_back(e, cell(e));
        if (!row.event.empty() && row.error.empty())
            m.events.push_back({row.line, row.machine, row.point, row.when, row.event});
        if (event_only && row.error.empty()) continue;  // recorded, not analysed
        m.rows.push_back(std::move(row));
    }
    return m;
}

}  // namespace cavitas::app
