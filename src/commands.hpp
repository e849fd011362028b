// The commands: parsed options in, typed results out. main.cpp only parses
// the command line and maps errors to exit statuses.
#pragma once

#include <functional>
#include <iosfwd>
#include <optional>
#include <string>
#include <vector>

#include "models/analyzer.hpp"
#include "models/baseline.hpp"
#include "models/classifier.hpp"
#include "src/errors.hpp"
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
                                         const models::MachineContext& machine, const Progress& progress = {});

/// Open, hash and analyse one file. setup: the baseline's (nullopt = choose from
/// the file's rate and sensor_max_hz).
AnalyzedRecording analyze_file(const std::string& path, int channel, const Calibration& calibration,
                               const std::optional<models::AnalysisSetup>& setup, double sensor_max_hz,
                               const models::MachineContext& machine, const Progress& progress = {});

struct BaselineOptions {
    std::string machine;
    std::vector<std::string> recordings;
    std::string output;
    int channel = 0;
    std::optional<double> rpm;
    int vanes = 0;
    std::optional<std::string> full_scale;
    double sensor_max_hz = 0.0;
    std::string mount;
    double segment_s = 1.0;
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
};

/// Learn and write a baseline; prints a summary to out.
void run_baseline(const BaselineOptions& options, std::ostream& out, std::ostream& err);

struct AnalyzeResult {
    AnalyzedRecording recording;
    models::Baseline baseline;
    models::Finding finding;
};
AnalyzeResult analyze(const AnalyzeOptions& options, const Progress& progress = {});
/// analyze() + text summary to out + JSON file when asked.
void run_analyze(const AnalyzeOptions& options, std::ostream& out, std::ostream& err);

/// UTC now as 2026-12-01T22:07:23Z.
std::string utc_now();

}  // namespace cavitas::app
