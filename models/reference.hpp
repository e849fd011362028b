// What a recording is judged against when it is not the machine's own
// known-good past: a sister machine's baseline (same model and duty, accepted
// explicitly), or a suppression run of the same machine (its suction head
// raised until the HF signs were gone; models::Baseline::suppression).
//
// A sister machine differs from this one by its make, its foundation, its
// piping and where its sensor sits, so its levels stand for this machine's
// only within a wider spread: the finding states every difference, widens the
// repeatability floor of the band levels and is never graded high.
#pragma once

#include <string>
#include <vector>

#include "models/baseline.hpp"

namespace cavitas::models {

enum class ReferenceKind { own, suppression, sister };
/// "own", "suppression", "sister".
const char* to_string(ReferenceKind k);

/// Spread (1 sigma, dB) between the band levels of sister machines of one
/// model at one duty, measured at their own points. No published figure was
/// found (methods review 5.4 and A3: family alarm envelopes are built from a
/// family's spread, remounts alone scatter 1-6 dB); our choice: 3 dB, so that
/// the 3-sigma alert against a sister lies near +9-10 dB, the developed range.
constexpr double kSisterLevelFloorDb = 3.0;
/// A sister at another speed is brought to this one by the assumed 40
/// dB/decade (models::SpeedModel); the exponent is not known better than
/// +-1 (methods review A2: n^1.5 .. n^3), i.e. +-20 dB/decade, which adds
/// 20 |log10(n / n_ref)| dB to the spread. Our reading of A2.
constexpr double kSlopeUncertaintyDbPerDecade = 20.0;
/// Beyond this speed ratio a sister's levels are not brought across (the
/// slope's uncertainty alone would pass 3.5 dB). Our choice.
constexpr double kSisterSpeedRatio = 1.5;

/// The spread added to band levels judged against a sister machine recorded
/// at rpm_ref, for a recording at rpm_now (either 0 = unknown: no speed term):
/// hypot(kSisterLevelFloorDb, kSlopeUncertaintyDbPerDecade |log10(rpm_now / rpm_ref)|).
double sister_level_floor_db(double rpm_now, double rpm_ref);

/// One way the recording and its reference differ.
struct ReferenceMismatch {
    std::string field;      ///< "machine", "channel", "speed", "vanes", "mount", "sensor_max_hz"
    std::string recording;  ///< this recording's, as words ("not stated" when unknown)
    std::string reference;  ///< the reference's
};

/// What is stated of the recording being judged, to set beside its reference.
struct RecordingStatement {
    std::string machine;  ///< machine and point tag (empty = not stated)
    int channel = 0;
    double rpm = 0.0;     ///< the analysis's speed (0 = unknown)
    int vanes = 0;        ///< 0 = not stated
    std::string mount;
    double sensor_max_hz = 0.0;
};

struct Reference {
    ReferenceKind kind = ReferenceKind::own;
    std::string machine;                       ///< the reference's tag
    std::vector<ReferenceMismatch> mismatches; ///< sister only: every difference, in the order of the fields above
    double level_floor_db = 0.0;               ///< added (in quadrature) to the band levels' spread; 0 own
};

/// The reference a baseline makes for a recording: own (or suppression, when
/// the baseline was learned from a suppression run) unless `sister` (the
/// analyst's --reference), then every difference and the widened spread.
Reference make_reference(const Baseline& baseline, bool sister, const RecordingStatement& now);

struct Finding;
/// State the reference in the finding: its kind, an evidence line naming it
/// and every difference, and for a sister the grade capped at moderate (low
/// when the vane counts differ: blade-pass lines are then at other orders).
void state_reference(Finding& finding, const Reference& reference, const Baseline& baseline);

}  // namespace cavitas::models
