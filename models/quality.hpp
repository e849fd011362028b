// The signal-quality gate: can this recording support a verdict against this
// baseline? Each check compares one measured number with a warning and a
// failing limit. A failed check makes the verdict indeterminate with a reason
// that says what to do; a warning lowers the confidence. Limits and their
// reasons are in QualityLimits below and in DEVELOPERS.md.
#pragma once

#include <string>
#include <vector>

#include "models/analyzer.hpp"
#include "models/baseline.hpp"
#include "models/reference.hpp"

namespace cavitas::models {

/// What the user says about this recording beyond its samples.
struct RecordingContext {
    std::string unit = "FS";     ///< calibration unit of the samples
    int channel = 0;             ///< channel read
    double sensor_max_hz = 0.0;  ///< stated usable top of the sensor as mounted now (0 = not stated)
    /// A sister machine's baseline (models/reference.hpp): another channel is
    /// accepted (the difference is stated), a speed outside its coverage is
    /// brought across up to kSisterSpeedRatio, band levels get a wider spread.
    ReferenceKind reference = ReferenceKind::own;
    double reference_floor_db = 0.0;
};

struct QualityLimits {
    /// Clipped share (samples at full scale or in flat tops at the record's
    /// extremes, runs of 3 or more as in near-full-scale detectors). Crest factor
    /// and kurtosis are the first indicators a few clipped peaks spoil, while rms
    /// averages clipping away. Our choice: warn at 0.01 %, fail at 0.1 %.
    double clipped_warn = 1e-4, clipped_fail = 1e-3;
    /// Share of the record in dropouts (runs of equal samples of 5 ms or more).
    /// Our choice: warn at 0.1 %, fail at 1 %; an all-zero record always fails.
    double dropout_warn = 1e-3, dropout_fail = 1e-2;
    /// Resolution: the record's largest |x| in quantisation steps of an integer
    /// file. Peaks of k steps with a crest factor near 3.5 put the signal about
    /// 20 log10(k) dB over the quantisation noise (step / sqrt(12), rms).
    /// Our choice: fail under 8 steps (about 18 dB), warn under 32 (about 30 dB);
    /// below 32, runs of equal samples are not judged as flat tops or dropouts.
    double resolution_fail_steps = 8.0, resolution_warn_steps = 32.0;
    /// DC offset as a share of full scale (PCM files): an AC-coupled (IEPE)
    /// sensor should show none; a large one means a bias or cable fault and eats
    /// the input range. Our choice: warn at 2 %, fail at 20 %.
    double dc_fs_warn = 0.02, dc_fs_fail = 0.20;
    /// DC offset over AC rms when the full scale is unknown (float files): warn
    /// only, since a DC-coupled sensor legitimately sees gravity.
    double dc_rms_warn = 3.0;
    /// Ski slope (0.5-4 Hz over 10-100 Hz, dB). Our choice: warn at 30 dB or 15 dB
    /// over the baseline's own value, fail at 40 dB or 25 dB over the baseline's.
    /// The real, clean recordings in the test data (lab pump, CWRU rig) read
    /// well below 30 dB and within 10 dB of their own baselines, so none is flagged.
    double ski_warn_db = 30.0, ski_fail_db = 40.0, ski_over_baseline_db = 15.0, ski_over_baseline_fail_db = 25.0;
    /// Analysis segments: medians of fewer than 3 are not statistics; 5 are thin.
    std::size_t segments_fail = 3, segments_warn = 5;
    /// Speed change against the baseline. Forces from the rotor scale with speed
    /// squared (a 10 % change is 1.7 dB in acceleration), below the 3 dB HF alert;
    /// beyond it the baseline's spread no longer applies (from memory). Warn at 5 %.
    double speed_warn = 0.05;  // the coverage (fail) is the baseline's: SpeedModel::covered_*_rpm
};

enum class CheckStatus { pass, warn, fail };
const char* to_string(CheckStatus s);

struct QualityCheck {
    std::string name;      ///< e.g. "clipping"
    std::string unit;      ///< of value and limits: "share", "db", "segments", ...
    double value = 0.0;
    double warn_at = 0.0;
    double fail_at = 0.0;
    CheckStatus status = CheckStatus::pass;
    std::string message;   ///< for warn and fail: what was found and what to do
};

struct QualityReport {
    std::vector<QualityCheck> checks;
    bool usable() const;
    std::vector<std::string> reasons() const;   ///< messages of failed checks
    std::vector<std::string> warnings() const;  ///< messages of warned checks
    std::size_t warning_count() const;
};

QualityReport assess_quality(const RecordingAnalysis& analysis, const Baseline& baseline,
                             const RecordingContext& context, const QualityLimits& limits = {});

}  // namespace cavitas::models
