// The analysis API: what the commands, the route and the comparison ask of a
// recording. A request in (AnalysisRequest: the recording, its baseline, its
// stated duty), a typed result out (AnalyzeResult: the recording's analysis,
// the finding, the operating point read beside it).
#pragma once

#include <functional>
#include <map>
#include <optional>
#include <string>
#include <vector>

#include "models/actions.hpp"
#include "models/analyzer.hpp"
#include "models/baseline.hpp"
#include "models/classifier.hpp"
#include "models/margin_reading.hpp"
#include "models/operating_point.hpp"
#include "models/reference.hpp"
#include "models/severity.hpp"
#include "src/io/point_limits.hpp"
#include "src/io/analyst.hpp"
#include "src/io/errors.hpp"
#include "src/io/operating_point_io.hpp"
#include "src/io/output_guard.hpp"
#include "src/io/recording.hpp"
#include "src/io/sources.hpp"

namespace cavitas::app {

/// The version that stamps every baseline, finding and route.
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

/// Open (open_calibrated: the calibration from `calibration`, the file and
/// `stored`), hash and analyse one file. setup: the baseline's (nullopt =
/// choose from the file's rate and sensor_max_hz).
AnalyzedRecording analyze_file(const std::string& path, const ReadRequest& read, const CalibrationText& calibration,
                               const std::optional<StoredCalibration>& stored,
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

/// What is asked of one recording: which file and channel, how its values are
/// calibrated, which baseline, and what is stated of the machine and its duty.
struct AnalysisRequest {
    std::string machine;
    double sensor_max_hz = 0.0;
    std::string mount;
    std::string baseline;
    /// `baseline` is another machine's (a sister of the same model and duty),
    /// accepted explicitly (--reference; a manifest's `reference` column): its
    /// tag may differ, every difference is stated, the grade is at most
    /// moderate (models/reference.hpp).
    bool sister_reference = false;
    std::string recording;
    ReadRequest read;
    std::optional<double> rpm;
    std::optional<int> vanes;
    CalibrationText calibration;
    OperatingPointFlags operating;
    std::optional<std::string> zones;  ///< --zones FILE: the analyst's severity zones
    /// --limits FILE: the point's own alert limits (default: BASELINE.limits.toml beside the baseline, if any).
    std::optional<std::string> limits;
    /// Who runs the analysis (identify_analyst); unset: the environment's login name.
    std::optional<Analyst> analyst;
};

/// Overall velocity of the recording (its averaged spectrum integrated), and
/// its severity zone when a zone file was given. Context only: the verdict
/// never reads it.
struct VelocityFinding {
    std::optional<double> overall_rms_mm_s;  ///< nullopt: see unavailable
    std::string unavailable;                 ///< why there is no velocity
    double band_low_hz = models::kSeverityBandLowHz;
    double band_high_hz = models::kSeverityBandHighHz;
    double low_cut_hz = models::kVelocityLowCutHz;
    std::optional<models::SeverityZones> zones;
    std::optional<models::SeverityZone> zone;
};

/// From the recording's mean PSD: velocity only when it is calibrated in
/// acceleration (g, m/s2); the band from `zones` when given, else 10-1000 Hz;
/// the low cut 10 Hz, or the band's low edge when that is lower.
VelocityFinding velocity_finding(const AnalyzedRecording& rec, const std::optional<models::SeverityZones>& zones);

/// The operating point of an analysed recording beside its verdict.
struct OperatingPointFinding {
    ResolvedOperatingPoint resolved;
    models::MarginReading reading;
    std::vector<models::DutyDifference> baseline_differences;  ///< also the finding's off-duty findings
};

struct AnalyzeResult {
    AnalyzedRecording recording;
    models::Baseline baseline;
    models::Finding finding;
    models::Reference reference;  ///< what the finding was judged against
    std::optional<OperatingPointFinding> operating;
    VelocityFinding velocity;
    std::vector<models::Action> actions;  ///< what to do, soonest first (models/actions.hpp)
    std::string operator_note;            ///< the operator's own words (sidecar or manifest `note`)
    PointLimits limits;                   ///< the alert limits the verdict used, and their source
    Analyst analyst;              ///< who ran it, on which host (the finding's provenance)
    std::string baseline_sha256;  ///< of the baseline file's bytes as read
};
AnalyzeResult analyze(const AnalysisRequest& request, const Progress& progress = {});
/// The point's verdict over its channels: the worst (developed, incipient,
/// normal), indeterminate only when no channel reached a verdict.
models::Verdict point_verdict(const std::vector<models::Verdict>& channels);

/// The lower of a stated sensor limit and the mount's (0 = none stated);
/// UsageError for an unknown mount.
double sensor_limit(double sensor_max_hz, const std::string& mount);

/// The calibration a baseline was learned with, to read like files alike.
StoredCalibration stored_calibration(const models::Baseline& b);

}  // namespace cavitas::app
