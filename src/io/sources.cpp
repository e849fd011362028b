#include "src/io/sources.hpp"

#include <sndfile.h>

#include <algorithm>
#include <array>
#include <cctype>
#include <cstring>
#include <fstream>

#include "src/io/errors.hpp"
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

std::unique_ptr<AudioSource> open_recording(const std::string& path, const ReadRequest& request,
                                            const Calibration& calibration) {
    switch (detect_format(path)) {
        case RecordingFormat::sound_file: return std::make_unique<SndfileSource>(path, request.channel, calibration);
        case RecordingFormat::uff58: return std::make_unique<Uff58Source>(path, request.channel, calibration);
        default: break;
    }
    throw InputError(path + ": this kind of file is not read yet");
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
        case RecordingFormat::uff58: return describe_uff58(path);
        default: break;
    }
    (void)request;
    throw InputError(path + ": this kind of file is not read yet");
}

}  // namespace cavitas::app
