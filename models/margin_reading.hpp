// How the acoustic verdict and the NPSH margin read together.
//
// The acoustic verdict is never changed by the hydraulics: a finding states
// the margin beside the verdict and says when the two disagree - developed
// cavitation at a large margin (look for recirculation, air entrainment, a
// blocked suction or a wrong reading), or a normal verdict at a margin near
// NPSH3 (at risk).
#pragma once

#include <string>
#include <vector>

#include "models/classifier.hpp"
#include "models/operating_point.hpp"

namespace cavitas::models {

/// How the acoustic verdict and the NPSH margin read together.
enum class MarginAgreement {
    consistent,           ///< the margin explains the verdict, or does not contradict it
    at_risk,              ///< normal, but the margin is under guidance or below NPSH3
    unexplained,          ///< developed cavitation at a large margin
    margin_unknown,       ///< no NPSH3 (or no NPSHa): the verdict stands alone
    no_verdict,           ///< indeterminate
};
const char* to_string(MarginAgreement a);
/// The reading in words for a person, from its code (to_string's): "not explained by
/// the NPSH margin" for unexplained_by_margin; the code itself when unknown.
std::string agreement_words(const std::string& code);

struct MarginReading {
    MarginAgreement agreement = MarginAgreement::margin_unknown;
    std::string summary;                  ///< one sentence: the margin in numbers
    std::vector<std::string> notes;       ///< what the two together mean, what to check
};
MarginReading read_margin(Verdict verdict, const Hydraulics& h, const MarginGuidance& guidance = {});

/// NPSHa this close to zero means the liquid at the impeller eye is at or near
/// its boiling point whatever NPSH3 is: the suction head left is less than the
/// pressure drop at the vane inlet of any ordinary impeller (our choice of
/// "about a metre"; NPSH3 of small end-suction pumps is rarely under 1 m, from
/// memory).
constexpr double kNearBoilingNpshM = 1.0;

/// The hydraulic side of the grade. When NPSHa is at or below NPSH3 (the 3 %
/// head-drop point: cavitation developed by definition, ANSI/HI 14.6) or under
/// kNearBoilingNpshM, the pump cavitates whatever the acoustics show, so the
/// finding is never normal: a normal verdict becomes developed below NPSH3 and
/// incipient near boiling, with the missing acoustic evidence said and the
/// usual reasons for it. Indeterminate findings are left alone. Returns true
/// when the verdict was raised.
bool grade_with_margin(Finding& finding, const Hydraulics& h);

/// Differences from the baseline's operating point are findings of their own
/// (Concern::off_duty) and lower the confidence like a quality warning (x 0.85
/// each, listed under the finding's warnings); a duty far from the baseline's
/// makes the grade low (the baseline is not valid there).
void flag_operating_point_differences(Finding& finding, const std::vector<DutyDifference>& differences);

}  // namespace cavitas::models
