#include "src/io/sources.hpp"

#include <sndfile.h>

#include <algorithm>
#include <array>
#include <cctype>
#include <cstring>
#include <fstream>
#include <stdexcept>

#include "src/io/csv_waveform.hpp"
#include "src/io/errors.hpp"
#include "src/io/mat_file.hpp"
#include "src/io/uff58.hpp"

namespace cavitas::app {
namespace {

std::string lower_extension(const std::string& path) {
    const auto slash = path.find_last_of('/');
    const auto dot = path.find_last_of('.');
    if (dot == std::string::npos || (slash != std::string::npos && dot < slash)) return "";
    std::string ext = path.substr(dot + 1);
    std::transform(ext.begin(), ext.end(), ext.begin(), [](unsigned char c) { return std::tolower(c); });
    return ext;
}

// A UFF file opens with a line holding only "-1" (blanks around it), perhaps
// after blank lines.
bool looks_like_uff(std::string_view head) {
    std::size_t i = 0;
    while (i < head.size()) {
        const std::size_t end = std::min(head.find('\n', i), head.size());
        std::string_view line = head.substr(i, end - i);
        while (!line.empty() && (line.front() == ' ' || line.front() == '\t')) line.remove_prefix(1);
        while (!line.empty() && (line.back() == ' ' || line.back() == '\r' || line.back() == '\t')) line.remove_suffix(1);
        if (!line.empty()) return line == "-1";
        i = end + 1;
    }
    return false;
}

}  // namespace

RecordingFormat detect_format(const std::string& path) {
    require_recording_file(path);
    std::ifstream in(path, std::ios::binary);
    if (!in) throw InputError(path + ": " + (errno ? std::strerror(errno) : "cannot be opened"));
    std::array<char, 256> buf{};
    in.read(buf.data(), buf.size());
    const std::string_view head(buf.data(), static_cast<std::size_t>(in.gcount()));
    // MAT v5/v7 and v7.3 (HDF5) files both begin with a 116-byte text header "MATLAB 5.0 MAT-file" / "MATLAB 7.3 MAT-file".
    if (head.starts_with("MATLAB ")) return RecordingFormat::mat;
    if (looks_like_uff(head)) return RecordingFormat::uff58;
    const std::string ext = lower_extension(path);
    if (ext == "csv" || ext == "tsv" || ext == "txt") return RecordingFormat::csv;
    if (ext == "uff" || ext == "unv") return RecordingFormat::uff58;
    if (ext == "mat") return RecordingFormat::mat;
    return RecordingFormat::sound_file;
}

namespace {

// The reader of `format` (all cases of the enumeration are handled).
std::unique_ptr<AudioSource> open_as(RecordingFormat format, const std::string& path, const ReadRequest& request,
                                     const Calibration& calibration) {
    switch (format) {
        case RecordingFormat::sound_file: return std::make_unique<SndfileSource>(path, request.channel, calibration);
        case RecordingFormat::csv: return std::make_unique<CsvWaveformSource>(path, request, calibration);
        case RecordingFormat::mat: return std::make_unique<MatSource>(path, request, calibration);
        case RecordingFormat::uff58: return std::make_unique<Uff58Source>(path, request.channel, calibration);
    }
    throw std::logic_error("open_as: unknown format");
}

}  // namespace

std::unique_ptr<AudioSource> open_recording(const std::string& path, const ReadRequest& request,
                                            const Calibration& calibration) {
    return open_as(detect_format(path), path, request, calibration);
}

namespace {

// A source whose values are multiplied by a calibration the reader did not apply.
class ScaledSource final : public AudioSource {
public:
    ScaledSource(std::unique_ptr<AudioSource> inner, const Calibration& calibration)
        : inner_(std::move(inner)), info_(inner_->info()), factor_(static_cast<float>(calibration.full_scale)) {
        info_.calibration = calibration;
    }
    const RecordingInfo& info() const override { return info_; }
    std::size_t read(std::span<float> out) override {
        const std::size_t n = inner_->read(out);
        if (factor_ != 1.0f)
            for (std::size_t i = 0; i < n; ++i) out[i] *= factor_;
        return n;
    }
    std::string sha256() override { return inner_->sha256(); }

private:
    std::unique_ptr<AudioSource> inner_;
    RecordingInfo info_;
    float factor_;
};

}  // namespace

std::unique_ptr<AudioSource> open_calibrated(const std::string& path, const ReadRequest& request,
                                             const CalibrationText& text,
                                             const std::optional<StoredCalibration>& stored) {
    const RecordingFormat format = detect_format(path);
    if (format == RecordingFormat::sound_file) {
        // libsndfile's samples are fractions of full scale; the reader applies the calibration itself.
        const Calibration c = resolve_calibration(text, "FS", path, stored);
        return std::make_unique<SndfileSource>(path, request.channel, c);
    }
    auto source = open_as(format, path, request, Calibration{1.0, "", ""});
    const Calibration c = resolve_calibration(text, source->info().stated_unit, path, stored);
    return std::make_unique<ScaledSource>(std::move(source), c);
}

ChannelSelection parse_channels(const std::string& text) {
    ChannelSelection s;
    if (text == "all") {
        s.all = true;
        return s;
    }
    std::size_t at = 0;
    while (at <= text.size()) {
        const std::size_t comma = std::min(text.find(',', at), text.size());
        const std::string one = text.substr(at, comma - at);
        const bool digits = !one.empty() && one.size() <= 4 &&
                            std::all_of(one.begin(), one.end(), [](char c) { return c >= '0' && c <= '9'; });
        if (!digits || std::stoi(one) > 1023)
            throw UsageError("--channel '" + text + "': give a channel 0..1023, a list such as 0,1,2, or all");
        s.channels.push_back(std::stoi(one));
        at = comma + 1;
    }
    std::sort(s.channels.begin(), s.channels.end());
    if (std::adjacent_find(s.channels.begin(), s.channels.end()) != s.channels.end())
        throw UsageError("--channel '" + text + "': a channel is named twice");
    if (s.channels.size() > 64) throw UsageError("--channel '" + text + "': at most 64 channels");
    return s;
}

std::vector<int> channels_of(const ChannelSelection& s, int available, const std::string& path) {
    if (!s.all) {
        for (int c : s.channels)
            if (c >= available)
                throw UsageError("--channel " + std::to_string(c) + ": " + path + " has " + std::to_string(available) +
                                 " channel(s), numbered 0.." + std::to_string(available - 1));
        return s.channels;
    }
    std::vector<int> all;
    for (int c = 0; c < std::min(available, 64); ++c) all.push_back(c);
    return all;
}

FileSummary describe_recording(const std::string& path, const ReadRequest& request) {
    FileSummary s;
    s.path = path;
    switch (detect_format(path)) {
        case RecordingFormat::sound_file: {
            const SndfileSource src(path, 0, Calibration{});
            const RecordingInfo& i = src.info();
            s.format = i.format;
            for (int c = 0; c < i.channels; ++c) {
                ChannelSummary ch;
                ch.index = c;
                ch.unit = "FS";
                ch.fs_hz = i.fs_hz;
                ch.frames = i.frames;
                s.channels.push_back(ch);
            }
            return s;
        }
        case RecordingFormat::csv: return describe_csv_waveform(path, request);
        case RecordingFormat::mat: return describe_mat(path);
        case RecordingFormat::uff58: return describe_uff58(path);
    }
    throw std::logic_error("describe_recording: unknown format");
}

}  // namespace cavitas::app
