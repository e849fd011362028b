// Opening a recording whatever its format: a sound file (libsndfile), a
// Universal File Format file (dataset 58, ASCII or binary), a CSV time
// waveform or a MATLAB file. The format is told by the file's first bytes
// (a UFF file's "-1" delimiter line, a MAT file's "MATLAB" header), then by
// its name (.csv, .tsv, .txt); anything else goes to libsndfile.
#pragma once

#include <cstddef>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "src/io/calibration.hpp"
#include "src/io/recording.hpp"

namespace cavitas::app {

enum class RecordingFormat { sound_file, uff58, csv, mat };

/// How to read one channel of a recording.
struct ReadRequest {
    int channel = 0;
    /// A MATLAB file's variable to read ("" = the file's only numeric one).
    std::string variable;
    /// The sample rate, for a file that does not state it (a CSV waveform
    /// without a time column or a rate line, most MATLAB files); a file that
    /// states one must agree with it.
    std::optional<double> sample_rate_hz;
    /// A CSV waveform's field delimiter and decimal mark (0 = detected).
    char csv_delimiter = 0;
    char csv_decimal = 0;
};

/// --channel as typed: "2", "0,1,2" or "all" (every channel of the file, or
/// of the baseline when it holds several).
struct ChannelSelection {
    std::vector<int> channels;  ///< ascending, each once (empty with all)
    bool all = false;
};
/// Throws UsageError naming the text.
ChannelSelection parse_channels(const std::string& text);
/// The channels `s` names for a file of `available` channels; UsageError for
/// one the file lacks.
std::vector<int> channels_of(const ChannelSelection& s, int available, const std::string& path);

/// One channel a file holds, as `cavitas info` lists it.
struct ChannelSummary {
    int index = 0;
    std::string name;   ///< the file's name for it ("" = none)
    std::string unit;   ///< the unit the file states ("" = none)
    double fs_hz = 0.0; ///< 0 = not stated
    std::size_t frames = 0;
};

struct FileSummary {
    std::string path;
    std::string format;                   ///< e.g. "UFF dataset 58 (binary, little-endian, float 32-bit)"
    std::vector<ChannelSummary> channels;
    std::vector<std::string> notes;       ///< what else a reader should know (skipped datasets, ...)
};

/// Which reader a file goes to; throws InputError when it cannot be opened.
RecordingFormat detect_format(const std::string& path);

/// Opens `request.channel` of `path` with the calibration already resolved
/// (full_scale = engineering units per unit of the file's values). Throws
/// InputError naming the file, the record and the problem.
std::unique_ptr<AudioSource> open_recording(const std::string& path, const ReadRequest& request,
                                            const Calibration& calibration);

/// Opens `request.channel` of `path` calibrated: the calibration resolved
/// from what was typed, the unit the file states for that channel and a
/// baseline's calibration (resolve_calibration says how), then applied to
/// every value. The source's info().calibration is the one applied.
std::unique_ptr<AudioSource> open_calibrated(const std::string& path, const ReadRequest& request,
                                             const CalibrationText& text,
                                             const std::optional<StoredCalibration>& stored = std::nullopt);

/// What `path` holds: channels (or variables), rates, lengths, units.
FileSummary describe_recording(const std::string& path, const ReadRequest& request = {});

}  // namespace cavitas::app
