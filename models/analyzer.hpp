// One recording, segment by segment: every DSP block of signal/ run on each
// analysis segment, plus the recording-wide spectra (averaged squared-envelope
// spectrum, a fine PSD for the speed) that need the whole record's average.
//
// Memory is fixed by the segment and spectrum sizes, never by the record length:
// samples are pushed in blocks of any size and analysed as segments fill.
#pragma once

#include <array>
#include <cstddef>
#include <memory>
#include <optional>
#include <span>
#include <string>
#include <vector>

#include "models/indicators.hpp"
#include "signal/envelope.hpp"
#include "signal/kurtogram.hpp"
#include "signal/quality.hpp"

namespace cavitas::models {

struct Band {
    double low_hz = 0.0;
    double high_hz = 0.0;
};

/// Where to look, fixed per machine and measurement point (stored in the baseline
/// so that a later recording is analysed in exactly the same bands).
struct AnalysisSetup {
    double fs_hz = 0.0;
    double segment_s = 1.0;       ///< analysis segment length
    Band hf;                      ///< broadband band of bubble-collapse energy
    Band lf;                      ///< low band (flow turbulence, unbalance) below the HF band
    double sensor_max_hz = 0.0;   ///< stated usable top of the sensor and mount (0 = not stated)
    std::size_t segment_size() const;
};

/// Anti-alias margin: collectors' anti-alias filters start to cut near 0.4 fs,
/// so nothing above it is trusted (common practice, no source).
constexpr double kUsableFractionOfFs = 0.4;
/// Lowest HF band edge: below ~1 kHz a rise is flow turbulence, unbalance or
/// misalignment, not bubble collapse (common practice, no source).
constexpr double kHfFloorHz = 1000.0;
/// The HF band starts no higher than 5 kHz: published cavitation bands start at
/// 1-5 kHz (methods review: Kotb & Abdulaziz 2015 1-10 kHz; NUAA 2011 > 5 kHz).
constexpr double kHfStartCapHz = 5000.0;

/// A run of equal samples this long (5 ms) is a dropout: a live signal through
/// a 16-bit or finer converter does not repeat a value for so long (common
/// practice, no source).
constexpr double kDropoutRunS = 0.005;

/// Top of the low band: a rise confined below ~1 kHz is flow turbulence, not bubble collapse.
constexpr double kLfTopHz = 1000.0;

/// Choose the bands from the sample rate and the sensor limit:
///   top = min(0.4 fs, sensor limit), HF = [max(1 kHz, min(5 kHz, top/4)), top],
///   LF = [10 Hz, min(1 kHz, HF low)]. Throws std::invalid_argument when the top is below
///   1.5 kHz (no HF band left to judge cavitation on).
AnalysisSetup choose_setup(double fs_hz, double sensor_max_hz, double segment_s = 1.0);

/// Short captures (a collector's 0.5-4 s): a record too short for
/// kShortCaptureSegments segments of the baseline's length is cut into shorter
/// segments, each at least kMinRevolutionsPerSegment shaft revolutions (the
/// envelope's 1x line then sits 6 bins from 0 Hz and +-1x sidebands of BPF are
/// resolved; methods review A11: +-f_r sidebands need about 3 revolutions; 6 is
/// our choice) and kMinSegmentS long (the shortest segment the analyzer is
/// tested at). Band levels and impulse rates do not depend on the segment
/// length; envelope line prominences do (compare_recording corrects them).
constexpr double kMinRevolutionsPerSegment = 6.0;
constexpr double kMinSegmentS = 0.25;
constexpr std::size_t kShortCaptureSegments = 5;
/// The segment length for a record of duration_s (the baseline's segment_s
/// when the record is long enough; rpm 0 = unknown: kMinSegmentS is the floor).
double segment_for_record(double duration_s, double segment_s, double rpm);
/// The shortest record that gives `segments` segments at rpm (rpm 0 = unknown).
double min_record_s(std::size_t segments, double rpm);

/// Sensor mounting limits (Hz) from trade practice: hand-held 2 kHz, magnet 5 kHz,
/// adhesive 6 kHz, stud 7 kHz (power-mi.com "Sensor mounting techniques", Table 3.2).
std::optional<double> mount_limit_hz(const std::string& mount);

struct MachineContext {
    std::optional<double> rpm;  ///< speed given by the user for this recording
    int vanes = 0;              ///< impeller vanes / runner blades (0 = unknown)
    double rpm_hint = 0.0;      ///< speed to search near when rpm is not given (e.g. the baseline's)
    double rpm_hint_high = 0.0; ///< top of the baseline's speed range when it covers several (0 = rpm_hint only)
};

/// The speed search covers the baseline's speeds and this factor around them
/// (a record 25 % off is found and named as a speed change instead of the
/// search locking on another line inside a narrower window). Our choice.
constexpr double kSpeedSearchMargin = 1.25;

/// How the analysis spends its work. `fast` is what cavitas runs: the envelope
/// by decimated complex demodulation with its transforms in single precision
/// (the segment's DFT, which also gives the segment PSD, the inverse and the
/// envelope spectrum), the kurtogram on at most four segments spread over the
/// record, spectral kurtosis at 50 % frame overlap, the fine spectrum from a
/// single-precision decimator and single-precision frames. `reference` is the plain
/// computation the fast one is checked against (tests/eval/fidelity_test.cpp): the
/// full-rate analytic signal in double precision with the band statistics of
/// the real band signal, the kurtogram on every segment, spectral kurtosis at
/// 75 % overlap. Baselines and recordings must be analysed the same way.
enum class Fidelity { fast, reference };

/// A peak of the averaged squared-envelope spectrum.
struct EnvelopePeak {
    double hz = 0.0;
    double order = 0.0;          ///< hz / shaft rate
    double prominence_db = 0.0;  ///< over the local median
};

/// The segment PSD averaged over log-spaced bands, kept for every segment so that
/// a report can draw the recording against the baseline's median and spread.
/// The bands are fixed by the setup (the same for a baseline and its recordings).
struct SpectrumProfile {
    std::vector<double> center_hz;   ///< geometric band centres
    std::vector<float> segment_db;   ///< bands() values per segment, dB re 1 (signal unit)^2/Hz
    std::size_t bands() const { return center_hz.size(); }
    std::size_t segments() const { return bands() ? segment_db.size() / bands() : 0; }
    /// 10 log10 of the mean power over the segments, per band.
    std::vector<double> mean_db() const;
};

/// One row of the fast kurtogram's mean map.
struct KurtogramRow {
    double level = 0.0;
    double bandwidth_hz = 0.0;
    std::vector<double> mean;  ///< band b centred at (b + 0.5) x bandwidth
};

/// A short stretch of the most impulsive segment, for a person to look at: the
/// segment whose HF-band kurtosis (SegmentIndicator::hf_kurtosis) is the
/// highest, cut around the largest value of its squared HF-band envelope.
/// The HF-band kurtosis rather than the raw kurtosis or the impulse rate: it is
/// measured in the band the excerpt is filtered to, shaft and vane lines do not
/// dilute it, and it is defined for every segment (a rate of bursts over a
/// threshold is 0 for many and ties). Empty when no segment was complete or the
/// band-pass cannot be made at the rate (an HF band reaching 0.49 fs).
struct WaveformExcerpt {
    double start_s = 0.0;           ///< first sample's time from the start of the recording
    double fs_hz = 0.0;
    std::size_t segment = 0;        ///< segment index (from 0) it was cut from
    double segment_kurtosis = 0.0;  ///< that segment's HF-band kurtosis
    Band band;                      ///< pass band of `hf`
    std::vector<float> raw;         ///< samples as recorded (signal units)
    std::vector<float> hf;          ///< the same samples band-passed (zero-phase Butterworth, order 4 + 4)
    bool empty() const { return raw.empty(); }
};

/// The excerpt lasts kExcerptS or kExcerptRevolutions shaft revolutions, whichever
/// is longer, and at most kExcerptMaxSamples samples (and one segment): enough to
/// see whether impacts repeat once a revolution or at blade pass, small enough to
/// draw and to keep in a finding. Our choice.
constexpr double kExcerptS = 0.05;
constexpr double kExcerptRevolutions = 3.0;
constexpr std::size_t kExcerptMaxSamples = 4096;
/// Samples in the excerpt at fs_hz and rpm (0 = unknown) for segments of segment_samples.
std::size_t excerpt_samples(double fs_hz, double rpm, std::size_t segment_samples);

struct RecordingAnalysis {
    AnalysisSetup setup;
    SegmentSeries series;
    std::array<double, kRecordingIndicatorCount> recording{};
    double rpm = 0.0;             ///< speed used for orders (0 = unknown)
    bool rpm_estimated = false;
    double rpm_resolution = 0.0;  ///< +- rpm of the estimate
    double speed_score_db = 0.0;
    bool speed_confirmed = false;  ///< given, or estimated and confirmed by its lines (SpeedEstimate::confirmed)
    std::string speed_how;         ///< how the estimate was confirmed, or why not (empty when given)
    double speed_search_low_rpm = 0.0, speed_search_high_rpm = 0.0;
    int vanes = 0;
    std::vector<EnvelopePeak> envelope_peaks;  ///< strongest first
    double mains_hz = 0.0;                     ///< 50 or 60 when hum lines were found
    int mains_lines = 0;
    dsp::KurtogramBand kurtogram_band;
    dsp::QualityCounts quality;
    std::size_t samples = 0;
    double duration_s = 0.0;
    double level_reference = 1.0;  ///< dB reference (1 signal unit)
    SpectrumProfile spectrum;
    /// The segments' PSD averaged (linear power), bins from 0 Hz at psd_bin_hz,
    /// one-sided density in (signal unit)^2/Hz; psd_enbw_hz is the segment
    /// window's equivalent noise bandwidth (models/severity.hpp uses both).
    std::vector<double> mean_psd;
    double psd_bin_hz = 0.0;
    double psd_enbw_hz = 0.0;
    std::vector<double> envelope_spectrum;  ///< averaged squared-envelope amplitude, bins from 0 Hz (truncated for reports)
    double envelope_bin_hz = 0.0;
    double mean_squared_envelope = 0.0;
    std::vector<KurtogramRow> kurtogram_map;
    double full_scale = 0.0;       ///< |x| of a full-scale sample in signal units (0 = unknown, float files)
    double quantum = 0.0;          ///< quantisation step of an integer file, signal units (0 = float or unknown)
    WaveformExcerpt excerpt;       ///< the most impulsive segment's short waveform
};

/// Where an analyzer's time went, in seconds of wall time per stage (for
/// developers: `CAVITAS_STAGE_TIMES=1 cavitas analyze ...` prints them).
struct StageTime {
    const char* stage;
    double seconds;
};

class RecordingAnalyzer {
public:
    /// expected_samples sizes the fine speed spectrum (0 = unknown);
    /// full_scale is |x| of a full-scale sample in signal units (0 = unknown).
    RecordingAnalyzer(const AnalysisSetup& setup, const MachineContext& machine, double full_scale,
                      std::size_t expected_samples, Fidelity fidelity = Fidelity::fast);
    ~RecordingAnalyzer();
    RecordingAnalyzer(const RecordingAnalyzer&) = delete;
    RecordingAnalyzer& operator=(const RecordingAnalyzer&) = delete;

    /// Feed the next block (any length). Non-finite samples are counted and zeroed in place.
    void push(std::span<float> block);
    /// Complete segments so far.
    std::size_t segments() const;
    /// Finish: the tail shorter than one segment is left out of the segment
    /// indicators. Throws std::runtime_error when not one segment was complete.
    RecordingAnalysis finish();
    /// Wall time spent so far in each stage (set-up, quality gate, fine
    /// spectrum, moments, envelope, impulses, spectral kurtosis, kurtogram,
    /// finish). Timing costs two clock reads per stage and segment.
    std::vector<StageTime> stage_times() const;

private:
    struct Impl;
    std::unique_ptr<Impl> impl_;
};

/// An envelope-spectrum line at hz, measured as every line of the analysis is:
/// searched within +-0.5 % (+-1 % when the speed was estimated) and at least a
/// bin, against the median floor of max(10 bins, 10 % of hz) around it.
dsp::LineMeasure envelope_line(std::span<const double> ses, double bin_hz, double hz, bool speed_estimated);
/// Its floor's half width, for callers that must know the spectrum reaches it.
double envelope_line_floor_hz(double bin_hz, double hz);

/// Median of a series (copy-free for callers; sorts a copy).
double median(std::vector<double> v);
/// Quantile q in [0,1] by linear interpolation between order statistics.
double quantile(std::vector<double> v, double q);

}  // namespace cavitas::models
