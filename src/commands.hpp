// The commands: parsed options in, typed results out. main.cpp only parses
// the command line and maps errors to exit statuses.
#pragma once

#include <functional>
#include <iosfwd>
#include <map>
#include <optional>
#include <string>
#include <vector>

#include "models/analyzer.hpp"
#include "models/baseline.hpp"
#include "models/classifier.hpp"
#include "models/margin_reading.hpp"
#include "models/operating_point.hpp"
#include "src/errors.hpp"
#include "src/operating_point_io.hpp"
#include "src/output_guard.hpp"
#include "src/recording.hpp"

namespace cavitas::app {

extern const char* const kVersion;

struct AnalyzedRecording {
    RecordingInfo info;
    std::string sha256;
    models::RecordingAnalysis analysis;
};

/// Progress: seconds of audio done, seconds in all.
using Progress = std::function<void(double done_s, double total_s)>;

/// Read `source` block by block through a RecordingAnalyzer.
models::RecordingAnalysis analyze_source(AudioSource& source, const models::AnalysisSetup& setup,
                                         const models::MachineContext& machine, const Progress& progress = {},
                                         models::Fidelity fidelity = models::Fidelity::fast);

/// Open, hash and analyse one file. setup: the baseline's (nullopt = choose from
/// the file's rate and sensor_max_hz).
AnalyzedRecording analyze_file(const std::string& path, int channel, const Calibration& calibration,
                               const std::optional<models::AnalysisSetup>& setup, double sensor_max_hz,
                               const models::MachineContext& machine, const Progress& progress = {},
                               models::Fidelity fidelity = models::Fidelity::fast);

/// The operating-point flags of a command, as typed (key -> text; empty = not
/// given), and --operating-point FILE.
struct OperatingPointFlags {
    std::map<std::string, std::string> values;
    std::optional<std::string> file;
    /// Where `values` came from when not the command line (a manifest row):
    /// errors then name that file and line instead of a flag.
    std::optional<TextOrigin> origin;
    OperatingPointText text() const;
};

/// An operating point put together from a sidecar file and flags, and what
/// follows from it.
struct ResolvedOperatingPoint {
    models::OperatingPoint op;
    std::vector<std::string> sources;  ///< files read, then "command line"
    models::Hydraulics hydraulics;
};

/// The sidecar (--operating-point FILE, else NAME.op.toml beside `recording`
/// when it exists) overlaid by the flags, evaluated. nullopt when nothing was
/// stated. Errors: UsageError for bad flags, InputError naming the file.
std::optional<ResolvedOperatingPoint> resolve_operating_point(const OperatingPointFlags& flags,
                                                              const std::string& recording);

/// Tell `guard` the files an operating point is read from: the --operating-point
/// file, the recording's sidecar, the NPSH3 curve either names.
void guard_operating_inputs(OutputGuard& guard, const OperatingPointFlags& flags, const std::string& recording);

struct BaselineOptions {
    std::string machine;
    std::vector<std::string> recordings;
    std::string output;
    int channel = 0;
    std::optional<double> rpm;        ///< speed of every recording
    std::vector<double> rpms;         ///< or one speed per recording, in order (overrides rpm)
    int vanes = 0;
    std::optional<std::string> full_scale;
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
};

struct AnalyzeOptions {
    std::string machine;
    double sensor_max_hz = 0.0;
    std::string mount;
    std::string baseline;
    std::string recording;
    std::optional<std::string> json_output;
    int channel = 0;
    std::optional<double> rpm;
    std::optional<int> vanes;
    std::optional<std::string> full_scale;
    OperatingPointFlags operating;
};

/// Learn and write a baseline; prints a summary to out.
void run_baseline(const BaselineOptions& options, std::ostream& out, std::ostream& err);

/// The operating point of an analysed recording beside its verdict.
struct OperatingPointFinding {
    ResolvedOperatingPoint resolved;
    models::MarginReading reading;
    std::vector<std::string> baseline_differences;  ///< also in the finding's warnings
};

struct AnalyzeResult {
    AnalyzedRecording recording;
    models::Baseline baseline;
    models::Finding finding;
    std::optional<OperatingPointFinding> operating;
};
AnalyzeResult analyze(const AnalyzeOptions& options, const Progress& progress = {});
/// analyze() + text summary to out + JSON file when asked.
void run_analyze(const AnalyzeOptions& options, std::ostream& out, std::ostream& err);

struct NpshOptions {
    OperatingPointFlags operating;
    std::optional<std::string> json_output;
};
/// NPSH available, margin and Thoma number from the flags (and --operating-point);
/// a readable account to out, JSON when asked.
void run_npsh(const NpshOptions& options, std::ostream& out);

/// UTC now as 2026-12-01T22:07:23Z.
std::string utc_now();

}  // namespace cavitas::app
