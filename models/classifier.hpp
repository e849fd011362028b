// The verdict: a recording's indicators read against the same machine's baseline.
//
// The rules follow the physics of bubble collapse (see DEVELOPERS.md, "How the
// verdict is reached"): cavitation is broadband HF energy over the baseline that
// is either impulsive (sparse collapses: incipient) or dense and modulated at an
// integer order of shaft speed (blade passage); severity is not read off one
// ladder, because HF level, kurtosis and impulse counts rise, peak and fall again
// as cavitation develops. Look-alikes - bearing impacts at non-integer orders,
// a rise confined to the low band (flow turbulence), mains hum, a small speed
// change - are reported under other findings and do not make a cavitation verdict.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "models/analyzer.hpp"
#include "models/baseline.hpp"
#include "models/quality.hpp"
#include "models/reference.hpp"

namespace cavitas::models {

enum class Verdict { normal, incipient, developed, indeterminate };
const char* to_string(Verdict v);

/// Thresholds, each with its reason (DEVELOPERS.md repeats them).
struct ClassifierConfig {
    /// HF rise that counts at all: +3 dB = twice the baseline band power, and
    /// at least 3 baseline spreads (statistical alert practice: mean + 3 sigma,
    /// cbmconnect "Statistical Alarms"). Our choice, checked on the evaluation set.
    double hf_alert_db = 3.0;
    double z_alert = 3.0;
    /// HF rise read as developed cavitation when backed by modulation or
    /// impulsiveness: +9 dB (about 8x the power). Our choice between the
    /// incipient (3-8 dB) and developed (10-25 dB) ranges seen on the evaluation set.
    double hf_developed_db = 9.0;
    /// Kurtosis rise of the HF band that counts as impulsive.
    double kurtosis_rise = 1.0;
    /// A level rise short of z_alert still counts from this z when the HF band
    /// has also turned impulsive: a gain or mount change moves levels but not
    /// kurtosis (a ratio of moments), so the two together are not a re-mount.
    /// Our choice.
    double z_alert_with_impulses = 2.0;
    /// HF kurtosis from which collapses are sparse: an HF rise past
    /// hf_developed_db made of sparse collapses, with no LF rise beside it, is
    /// incipient; dense developed cavitation is nearly Gaussian (kurtosis 3.6-7
    /// in the generated developed cases, 18-75 in the incipient ones; the real
    /// throttled runs at 1000 rpm read 3.3-3.6). Our choice.
    double sparse_kurtosis = 10.0;
    /// Envelope line at an integer order that counts as modulation: 6 dB over
    /// the local floor (twice the floor amplitude) and 3 dB over the baseline's line.
    double line_prominence_db = 6.0;
    double line_rise_db = 3.0;
    /// A weaker line (3 dB over its floor) counts when the modulation depth at
    /// BPF is at least twice the baseline's and z >= 3.
    double weak_line_prominence_db = 3.0;
    /// LF rise that is reported as flow turbulence when HF has not risen.
    double lf_alert_db = 3.0;
    /// Limits of the signal-quality gate.
    QualityLimits quality;
};

/// Highest raw score of a finding against a baseline that carries warnings. Our choice.
constexpr double kBaselineWarningConfidenceCap = 0.6;

struct Finding;

/// How sure a finding is, in words, with what lowered it.
enum class ConfidenceGrade { high, moderate, low };
const char* to_string(ConfidenceGrade g);

/// The confidence is calibrated: the classifier's raw score s (its rules'
/// own 0-1 measure) is mapped by Platt scaling,
///   confidence = 1 / (1 + exp(A logit(s) + B)),
/// with A and B fitted (models/calibration.hpp, fit_platt) on the verdicts of
/// generated calibration sets made with other seeds than the sets the tests
/// evaluate (`cavitas_field_eval --fit`; DEVELOPERS.md says how to refit).
/// On real machines the evidence is less clean than on generated ones: the
/// grade, not the number, carries that (ConfidenceGrade).
struct ConfidenceCalibration {
    double a = -1.0, b = 0.0;  ///< identity: confidence = raw score
};
extern const ConfidenceCalibration kConfidenceCalibration;
double calibrated_confidence(double raw_score, const ConfidenceCalibration& c = kConfidenceCalibration);
/// high: confidence >= 0.85 with nothing that lowered it; low: under 0.6, or
/// a verdict resting on the operating point alone, or a duty far from the
/// baseline's, or a baseline with warnings and another doubt; moderate otherwise. A baseline with warnings
/// never allows high. Sets grade and reasons from the finding's warnings and
/// baseline warnings.
void assign_grade(Finding& finding);

/// What a finding other than cavitation points at: each one says its kind,
/// so that the next steps can follow it (models/actions.hpp).
enum class Concern {
    bearing_impacts,    ///< a non-integer-order impact family in the envelope
    flow_unsteadiness,  ///< an LF rise with no HF rise
    recirculation,      ///< the LF rise with impacts at blade passage
    speed_change,       ///< a speed off the baseline's, levels brought to it
    mains_pickup,       ///< mains hum lines
    off_duty,           ///< a flow off the baseline's (models/operating_point.hpp)
};
const char* to_string(Concern c);

/// A finding of its own beside the verdict: its kind and the words for a person.
struct OtherFinding {
    Concern concern;
    std::string text;
};

/// One indicator set beside the baseline.
struct Comparison {
    std::string key;        ///< JSON name with its unit suffix
    std::string label;      ///< words for a person
    double value = 0.0;     ///< median over the segments (or the recording value)
    double p10 = 0.0, p90 = 0.0;
    double baseline_median = 0.0;
    double baseline_sigma = 0.0;
    double change = 0.0;    ///< value - baseline median (dB indicators: dB)
    double z = 0.0;         ///< change / max(sigma, floor)
};

struct Finding {
    Verdict verdict = Verdict::indeterminate;
    double confidence = 0.0;                 ///< calibrated (calibrated_confidence of raw_score)
    double raw_score = 0.0;                  ///< the rules' own measure, before calibration
    ConfidenceGrade grade = ConfidenceGrade::low;
    std::vector<std::string> grade_reasons;  ///< why not high
    std::vector<std::string> evidence;
    std::vector<OtherFinding> other_findings;
    std::vector<std::string> warnings;       ///< things that lowered the confidence
    std::vector<std::string> reasons;        ///< why indeterminate (what to do)
    std::vector<Comparison> comparisons;
    QualityReport quality;
    double hf_rise_db = 0.0;
    double lf_rise_db = 0.0;
    bool bearing_like = false;
    double bearing_order = 0.0;
    std::vector<BaselineWarning> baseline_warnings;  ///< repeated from the baseline: they limit the confidence
    bool hydraulic_only = false;             ///< cavitation said by the operating point alone (grade_with_margin)
    bool off_duty = false;                   ///< the duty is far from the baseline's: not valid there (grade low)
    ReferenceKind reference = ReferenceKind::own;     ///< what it was judged against (models/reference.hpp)
    std::vector<ReferenceMismatch> reference_mismatches;  ///< a sister's differences from this recording
    double reference_floor_db = 0.0;         ///< the spread a sister adds to band levels (0: own)
};

/// context: the recording's unit token ("g", "m/s2", "Pa", "FS"; also used in the
/// key names), channel and stated sensor limit, checked by the quality gate.
Finding classify(const RecordingAnalysis& analysis, const Baseline& baseline, const RecordingContext& context,
                 const ClassifierConfig& config = {});
/// Shorthand when only the unit is known: the baseline's channel, no sensor limit.
Finding classify(const RecordingAnalysis& analysis, const Baseline& baseline, const std::string& signal_unit,
                 const ClassifierConfig& config = {});

/// Periodic impacts not locked to the rotor: the strongest envelope line at a
/// non-integer order (>= 10 dB over its floor) with a harmonic or shaft-rate
/// sidebands, reported by its fundamental. A rolling-element bearing's lines
/// sit at such orders, smeared 1-2 % by slip (Randall & Antoni 2011).
struct BearingFamily {
    double order = 0.0;          ///< of the fundamental, shaft orders
    double hz = 0.0;
    double prominence_db = 0.0;  ///< over the envelope spectrum's local floor
    std::string family;          ///< "with its harmonics" or "with shaft-rate sidebands"
    /// The strongest envelope line at shaft orders that are not blade pass
    /// (the comb a load zone puts at every order), dB over its floor.
    double comb_db = 0.0;
};
std::optional<BearingFamily> bearing_family(const RecordingAnalysis& analysis);
/// Whether the family explains an envelope line at hz: one of its first six
/// harmonics, or an integer order no more than 3 dB over the comb a load zone
/// puts at every shaft order (methods review A4).
bool explained_by_bearing_family(const RecordingAnalysis& analysis, const BearingFamily& family, double hz);

/// The cautions shown with every incipient or developed verdict.
const std::vector<std::string>& cavitation_cautions();

/// JSON-key form of a unit token: "m/s2" -> "m_s2", "Pa" -> "pa", "FS" -> "fs".
std::string unit_key(const std::string& unit);

}  // namespace cavitas::models
