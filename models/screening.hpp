// Screening: what a single recording shows on its own, when the machine has no
// known-good state to be judged against (a new installation, a pump that has
// cavitated since commissioning).
//
// Without a reference no change can be measured, so a screening never says
// incipient or developed: only "signs of cavitation", "no sign of cavitation"
// or "cannot tell", with the signs it read and a low or moderate grade. Each
// sign is a property bubble collapse gives a recording whatever the machine
// (methods review 1.1-1.3, 4.4):
//   * HF dominance: collapse noise is broadband and fills the HF band, which on
//     a sound pump carries much less power than the shaft and blade-pass
//     content below it;
//   * blade-pass modulation: collapses bunch where each vane passes, so the HF
//     envelope carries a line at BPF, an integer order no bearing explains;
//   * sparse impulses: a few collapses a revolution make the HF band impulsive
//     (kurtosis far above the Gaussian 3).
// One sign alone is also what many sound machines show (a structural
// resonance in the HF band, blade-pass pulsation modulating flow noise, a
// rubbing seal), so two are needed; a bearing family claims the impulses and
// the modulation. The operating point, when given, is read beside them: an
// NPSHa under NPSH3 or near the boiling point is a sign on its own.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "models/analyzer.hpp"
#include "models/classifier.hpp"
#include "models/operating_point.hpp"
#include "models/quality.hpp"

namespace cavitas::models {

enum class ScreeningCall { signs_of_cavitation, no_sign, cannot_tell };
/// The JSON code: "signs_of_cavitation", "no_sign", "cannot_tell".
const char* to_string(ScreeningCall c);
/// Words for a person: "signs of cavitation", "no sign of cavitation", "cannot tell".
const char* words(ScreeningCall c);

/// Thresholds, each with its reason.
struct ScreeningConfig {
    /// HF band power at least this far from the LF band power (dB, HF - LF)
    /// counts as HF dominance: within 3 dB, i.e. at least half the LF band's
    /// power. Measured: sound pumps read -6 to -10 dB (the lab pump at 700 and
    /// 1000 rpm with its suction valve open, the generated healthy set), the
    /// lab pump's throttled 1000 rpm runs -1.7 to +1.3 dB. Our choice.
    double dominance_db = -3.0;
    /// Blade-pass modulation: the HF envelope's line at BPF at least this share
    /// of the mean squared envelope and standing line_prominence_db over its
    /// floor (weak_line_prominence_db when the HF band is sparse-impulsive, whose
    /// noisy envelope spectrum hides lines). Sound pumps read 0.03-0.20 (the lab
    /// pump's open-valve runs 0.14-0.20). Our choice.
    double modulation_depth = 0.25;
    double line_prominence_db = ClassifierConfig{}.line_prominence_db;
    double weak_line_prominence_db = ClassifierConfig{}.weak_line_prominence_db;
    /// HF kurtosis of sparse collapses (the classifier's own threshold).
    double sparse_kurtosis = ClassifierConfig{}.sparse_kurtosis;
    /// Acoustic signs needed for "signs of cavitation".
    int signs_needed = 2;
};

enum class SignState {
    present,   ///< read and over its threshold
    absent,    ///< read and under it
    claimed,   ///< over its threshold but explained by a look-alike (a bearing family)
    not_read,  ///< could not be read (no speed, no vane count, no operating point)
};
const char* to_string(SignState s);

/// One sign, as read: its value against its threshold and the words for a person.
struct ScreeningSign {
    std::string name;       ///< "hf_dominance", "blade_pass_modulation", "sparse_impulses", "suction_head"
    std::string unit;       ///< of value and threshold: "db", "ratio", "m"
    std::optional<double> value;
    std::optional<double> threshold;
    SignState state = SignState::not_read;
    std::string words;
};

struct Screening {
    ScreeningCall call = ScreeningCall::cannot_tell;
    ConfidenceGrade grade = ConfidenceGrade::low;
    std::vector<std::string> grade_reasons;  ///< why not better (a screening is never high)
    std::vector<ScreeningSign> signs;        ///< acoustic signs, then the suction head
    std::vector<std::string> reasons;        ///< why cannot tell
    std::vector<OtherFinding> other_findings;
    std::vector<std::string> warnings;       ///< quality warnings
    QualityReport quality;
    int acoustic_signs = 0;                  ///< present among the three acoustic signs
    bool hydraulic_sign = false;             ///< NPSHa under NPSH3 or near boiling
};

/// Screen one analysed recording. `hydraulics`: the operating point evaluated
/// (nullptr when none was stated). The speed must be given or confirmed for
/// the blade-pass sign; `analysis.vanes` 0 reads the line at 1x instead.
Screening screen(const RecordingAnalysis& analysis, const RecordingContext& context, const Hydraulics* hydraulics,
                 const ScreeningConfig& config = {});

/// What a screening always recommends: take a reference (the machine's own
/// baseline when known good, a suppression run, or a sister machine's).
const std::vector<std::string>& screening_next_steps();

}  // namespace cavitas::models
