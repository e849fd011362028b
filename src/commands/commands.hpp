// The commands: parsed options in, a summary on the terminal and files out.
// main.cpp only parses the command line and maps errors to exit statuses.
#pragma once

#include <iosfwd>
#include <optional>
#include <string>
#include <vector>

#include "models/screening.hpp"
#include "src/analysis/analysis.hpp"

namespace cavitas::app {

struct BaselineOptions {
    std::string machine;
    std::vector<std::string> recordings;
    std::string output;
    ReadRequest read;                 ///< channel and format hints, the same for every recording
    /// --channel with a list or "all": one baseline per channel, in one file.
    std::optional<ChannelSelection> channels;
    std::optional<double> rpm;        ///< speed of every recording
    std::vector<double> rpms;         ///< or one speed per recording, in order (overrides rpm)
    int vanes = 0;
    CalibrationText calibration;
    /// The calibration of the baseline the store's visits were judged against (--from-store).
    std::optional<StoredCalibration> stored_calibration;
    double sensor_max_hz = 0.0;
    std::string mount;
    double segment_s = 1.0;
    OperatingPointFlags operating;
    bool strict = false;                 ///< refuse (InputError) instead of warning
    std::optional<std::string> add_to;   ///< an existing baseline to add these recordings to
    /// Learn from the results store's normal visits of machine/point instead of
    /// listed recordings (the newest `last_visits`; each file must still hash as stored).
    std::optional<std::string> from_store;
    std::string point;
    std::size_t last_visits = 8;
    std::vector<std::string> expected_sha256;  ///< per recording (from the store); empty = not checked
    /// A suppression run: every recording's stated operating point must show
    /// NPSHa at least MarginGuidance::large_ratio x NPSH3; the baseline says so.
    bool suppression = false;
};

/// Learn and write a baseline; prints a summary to out.
void run_baseline(const BaselineOptions& options, std::ostream& out, std::ostream& err);

/// analyze() + text summary to out + JSON file when asked.
/// The analyze command: an analysis request and where its finding goes.
struct AnalyzeOptions : AnalysisRequest {
    std::optional<std::string> json_output;
};

/// One channel: analyze() + a summary on `out` + the JSON finding when asked.
/// Several channels (a list or all): each judged against its own baseline
/// statistics, the point's verdict the worst; the JSON is the worst channel's
/// finding with "point" and "channels" (one finding per channel) added.
void run_analyze(const AnalyzeOptions& options, const std::optional<ChannelSelection>& several, std::ostream& out,
                 std::ostream& err);

/// The screen command: one recording judged on its own, without a reference.
struct ScreenOptions {
    std::string recording;
    ReadRequest read;
    std::optional<double> rpm;
    int vanes = 0;
    CalibrationText calibration;
    double sensor_max_hz = 0.0;
    std::string mount;
    OperatingPointFlags operating;
    std::optional<std::string> json_output;
    std::optional<Analyst> analyst;
};
inline constexpr const char* kScreeningSchema = "cavitas.screening/1";
struct ScreenResult {
    AnalyzedRecording recording;
    std::optional<ResolvedOperatingPoint> duty;
    models::Screening screening;
    Analyst analyst;
};
/// The operating point (failing fast), the recording analysed in bands chosen
/// from its own rate and the sensor limit, then models::screen.
ScreenResult screen_recording(const ScreenOptions& options, const Progress& progress = {});
/// screen_recording: a summary to out, the JSON (kScreeningSchema) when asked.
void run_screen(const ScreenOptions& options, std::ostream& out, std::ostream& err);

struct NpshOptions {
    OperatingPointFlags operating;
    std::optional<std::string> json_output;
};
/// NPSH available, margin and Thoma number from the flags (and --operating-point);
/// a readable account to out, JSON when asked.
void run_npsh(const NpshOptions& options, std::ostream& out);

struct InfoOptions {
    std::vector<std::string> files;
    ReadRequest read;  ///< --variable, --sample-rate, as a reader needs them
    std::optional<std::string> json_output;
};
/// What each file holds: format, channels (or variables), rates, lengths,
/// units; a line each on `out`, JSON (cavitas.info/1) when asked.
void run_info(const InfoOptions& options, std::ostream& out);

/// Progress of one file on the terminal (nothing when stderr is not one, or
/// the file is short).
Progress stderr_progress(const std::string& path, std::ostream& err);

}  // namespace cavitas::app
