// A machine's known-good reference: robust statistics of every indicator,
// learned from one or more recordings of the same machine and measurement point,
// with the context needed to judge whether a later recording is comparable.
#pragma once

#include <array>
#include <cstddef>
#include <optional>
#include <string>
#include <vector>

#include "models/analyzer.hpp"
#include "models/indicators.hpp"
#include "models/operating_point.hpp"

namespace cavitas::models {

/// Median and spread. sigma = 1.4826 x MAD, the consistent estimate of a
/// Gaussian standard deviation that ignores outliers (Rousseeuw & Croux, JASA
/// 88 (1993) 1273-1283; the 1.4826 factor = 1/Phi^-1(3/4)).
struct RobustStat {
    double median = 0.0;
    double sigma = 0.0;
    double p10 = 0.0;
    double p90 = 0.0;
    std::size_t count = 0;
};
RobustStat robust_stat(const std::vector<double>& values);

/// One known-good recording (a visit) the baseline learned from, kept whole
/// enough that the baseline can be relearned with another visit added
/// (`baseline --add-to`) and checked visit against visit.
struct BaselineSource {
    std::string file;    ///< as given on the command line
    std::string sha256;  ///< of the file's bytes
    double duration_s = 0.0;
    double rpm = 0.0;    ///< its speed (0 = unknown)
    SegmentSeries series;                                     ///< every segment indicator, per segment
    std::array<double, kRecordingIndicatorCount> recording{}; ///< its recording indicators
    std::vector<double> spectrum_median_db;                   ///< per band of the spectrum profile
};

/// Something wrong with what a baseline was learned from, found by
/// check_baseline (models/baseline_check.hpp): which check, which file, where
/// in it (s from the start; < 0 = the whole file) and what it means.
struct BaselineWarning {
    std::string check;
    std::string file;
    double time_s = -1.0;
    std::string message;
};

/// The band levels (dB) against shaft speed:
///   L(n) = L_ref + slope_db_per_decade x log10(n / rpm_ref),
/// i.e. amplitude ~ n^m with slope = 20 m. Fitted by least squares over the
/// visits' medians when they span at least kFitSpeedSpan in at least
/// kFitSpeeds distinct speeds (two speeds 15 % apart already measure the slope
/// better than any assumed exponent; a third shows whether it holds); otherwise the slope is assumed (m = 2,
/// 40 dB/decade: hydraulic forces scale with n^2, methods review A2 [I]; no
/// published exponent for 1-10 kHz pump vibration was found).
struct SpeedModel {
    double rpm_ref = 0.0;                 ///< median speed of the visits (0 = unknown: no scaling)
    double rpm_low = 0.0, rpm_high = 0.0; ///< slowest and fastest visit
    int speeds = 0;                       ///< distinct speeds (more than 3 % apart)
    bool fitted = false;
    double hf_slope_db_per_decade = 40.0, lf_slope_db_per_decade = 40.0;
    /// Speeds a recording may be judged at: the visits' range widened by
    /// kCoverFitted (fitted) or kCoverAssumed (assumed slope, usually one speed).
    double covered_low_rpm() const;
    double covered_high_rpm() const;
    /// The level shift (dB) from rpm_ref to rpm for a dB indicator (0 for others).
    double shift_db(SegmentIndicator i, double rpm) const;
};
constexpr double kAssumedSlopeDbPerDecade = 40.0;
constexpr int kFitSpeeds = 2;
constexpr double kFitSpeedSpan = 1.15;
/// 5 % beyond a fitted range, 10 % around an assumed one (the old single-speed
/// gate; at 10 % the assumed scaling moves levels by 1.66 dB). Our choices.
constexpr double kCoverFitted = 1.05, kCoverAssumed = 1.10;

/// Repeatability floor (1 sigma, dB) of a band level between re-mounts of the
/// sensor: stud 0.5, adhesive 0.7, magnet 1.0, hand-held 2.0; not stated: 1.0
/// (a magnet, the usual route mount). Our choice from the scatter reported
/// between remounts (methods review A3, [M]: about 1-2 dB stud or pad, 3-6 dB
/// magnet, read as +-2 sigma; a practitioner saw 3.5 dB for a 1/4 in shift).
/// With it a magnet's 3-sigma alert is the +3 dB of the alert level.
double repeatability_floor_db(const std::string& mount);

/// The baseline's spectrum profile: per band, the median and 10th/90th
/// percentiles over all its segments (dB re 1 (signal unit)^2/Hz). Empty in
/// baselines from before reports existed.
struct SpectrumStats {
    std::vector<double> center_hz, median_db, p10_db, p90_db;
    bool empty() const { return center_hz.empty(); }
};

/// A baseline learned from a suppression run: the same machine with its
/// suction head raised (tank pressurised, level raised, flow reduced) until
/// the HF signs of cavitation were gone; `baseline --suppression` checks each
/// recording's stated margin (NPSHa / NPSH3 at least MarginGuidance::large_ratio).
struct SuppressionRun {
    double npsha_low_m = 0.0, npsha_high_m = 0.0;  ///< over its recordings
    double ratio_low = 0.0;                        ///< the smallest NPSHa / NPSH3
    double npsh3_m = 0.0;                          ///< at the smallest ratio
};

struct Baseline {
    static constexpr const char* kSchema = "cavitas.baseline/3";
    /// Read too: without visits, speed model or warnings (judged with the
    /// pooled statistics, the repeatability floor and one speed).
    static constexpr const char* kOlderSchema = "cavitas.baseline/2";
    std::string schema = kSchema;
    std::string cavitas_version;
    std::string created_utc;
    AnalysisSetup setup;
    std::string machine;  ///< machine and point tag given by the user (empty = not stated)
    int channel = 0;
    double rpm = 0.0;     ///< median speed of the recordings (0 = unknown)
    bool rpm_estimated = false;
    int vanes = 0;
    std::string unit = "FS";
    double full_scale = 1.0;  ///< engineering units per unit of the learned files' values
    std::string values_unit = "FS";  ///< the unit the learned files stated for their values (FS: sound files)
    std::string calibration_account;  ///< how the calibration was found ("sensitivity 100mV/g, gain 10")
    std::string mount;    ///< as stated when learned (empty = not stated)
    std::vector<BaselineSource> sources;
    SpeedModel speed;
    std::vector<BaselineWarning> warnings;  ///< what check_baseline found (empty when clean)
    OperatingPointSummary operating_point;  ///< the duty it was learned at, as stated (may be empty)
    std::optional<SuppressionRun> suppression;  ///< learned from a suppression run (stored as "suppression")
    SpectrumStats spectrum;
    std::array<RobustStat, kSegmentIndicatorCount> segment{};      ///< pooled over all segments
    std::array<RobustStat, kRecordingIndicatorCount> recording{};  ///< over recordings
    std::size_t segments = 0;

    const RobustStat& operator[](SegmentIndicator i) const { return segment[static_cast<std::size_t>(i)]; }
    const RobustStat& operator[](RecordingIndicator i) const { return recording[static_cast<std::size_t>(i)]; }

    /// What a recording at `rpm` is judged against: the level the baseline
    /// predicts at that speed (dB indicators; others as pooled) and the spread
    /// to judge it by - the largest of the within-recording spread, the
    /// between-visit spread and (band levels) the mount's repeatability floor.
    RobustStat expected(SegmentIndicator i, double rpm_now) const;
    /// Between-visit spread of an indicator's visit medians after the speed
    /// model (0 with one visit).
    double between_visit_sigma(SegmentIndicator i) const;
    /// Each visit's median of an indicator brought to the speed model's
    /// reference speed (empty when a visit carries no values: an older baseline).
    std::vector<double> visit_levels_at_ref(SegmentIndicator i) const;
};

/// Learn from analyses of known-good recordings (all with the same setup).
/// Throws std::invalid_argument when the list is empty or the setups differ.
Baseline learn_baseline(const std::vector<RecordingAnalysis>& analyses);
/// A recording as a baseline keeps it (file and hash left for the caller).
BaselineSource source_of(const RecordingAnalysis& analysis);
/// Learn from sources (visits) with the setup and vane count they were analysed
/// with: pooled statistics, the speed model, the spectrum profile statistics.
Baseline learn_from_sources(std::vector<BaselineSource> sources, const AnalysisSetup& setup, int vanes);

}  // namespace cavitas::models
