#include "models/margin_reading.hpp"

#include <algorithm>

#include "models/text.hpp"

namespace cavitas::models {

const char* to_string(MarginAgreement a) {
    switch (a) {
        case MarginAgreement::consistent: return "consistent";
        case MarginAgreement::at_risk: return "at_risk";
        case MarginAgreement::unexplained: return "unexplained_by_margin";
        case MarginAgreement::margin_unknown: return "margin_unknown";
        case MarginAgreement::no_verdict: return "no_verdict";
    }
    return "";
}

std::string agreement_words(const std::string& code) {
    if (code == "consistent") return "the NPSH margin agrees with the verdict";
    if (code == "at_risk") return "at risk: the NPSH margin is thin";
    if (code == "unexplained_by_margin") return "not explained by the NPSH margin";
    if (code == "margin_unknown") return "NPSH margin unknown";
    if (code == "no_verdict") return "no verdict to read the margin against";
    return code;
}

MarginReading read_margin(Verdict verdict, const Hydraulics& h, const MarginGuidance& g) {
    MarginReading r;
    if (h.margin) {
        const auto& m = *h.margin;
        const char* cls = m.margin_class == MarginClass::below_npsh3 ? "below NPSH3"
                          : m.margin_class == MarginClass::thin     ? "under the guidance minimum"
                          : m.margin_class == MarginClass::large    ? "large"
                                                                    : "within guidance";
        r.summary = fmt("NPSHa %.2f m against NPSH3 %.2f m: ", m.npsha_m, m.npsh3_m) +
                    fmt("margin %+.2f m, ratio %.2f", m.margin_m, m.ratio) + " (" + cls +
                    fmt("; guidance minimum %.2f m)", m.required_m);
    } else if (h.npsh) {
        r.summary = fmt("NPSHa %.2f m; ", h.npsh->npsha_m) +
                    (h.margin_unavailable ? "no margin: " + *h.margin_unavailable
                                          : std::string("NPSH3 not given, so the margin is unknown"));
    } else if (h.thoma_sigma) {
        r.summary = fmt("plant Thoma number %.4f", *h.thoma_sigma) +
                    (h.thoma_ratio ? fmt(", %.2f x the critical value", *h.thoma_ratio) : std::string());
    }

    if (verdict == Verdict::indeterminate) {
        r.agreement = MarginAgreement::no_verdict;
        return r;
    }
    const bool cav = verdict == Verdict::incipient || verdict == Verdict::developed;

    if (h.thoma_ratio && !h.margin) {
        // Turbine: the plant sigma against the critical sigma from model tests plays the part of the margin.
        if (*h.thoma_ratio < 1.0) {
            r.agreement = cav ? MarginAgreement::consistent : MarginAgreement::at_risk;
            r.notes.push_back("the plant Thoma number is below the critical value: cavitation is expected at this setting"
                              + std::string(cav ? "" : "; a normal verdict here needs checking (sensor, mount, band)"));
        } else {
            r.agreement = MarginAgreement::consistent;
        }
        return r;
    }

    if (!h.margin) {
        if (h.npsh && h.npsh->npsha_m <= 0.0) {
            r.agreement = cav ? MarginAgreement::consistent : MarginAgreement::at_risk;
            if (!cav)
                r.notes.push_back("NPSHa is not positive: the liquid should boil at the impeller eye; check the suction "
                                  "reading and temperature, and the sensor, mount and band if they are right");
        } else {
            r.agreement = MarginAgreement::margin_unknown;
        }
        return r;
    }

    const auto cls = h.margin->margin_class;
    const std::string guidance = margin_guidance_text(g);
    if (verdict == Verdict::normal) {
        if (cls == MarginClass::below_npsh3) {
            r.agreement = MarginAgreement::at_risk;
            r.notes.push_back("no cavitation heard, yet NPSHa is below NPSH3, where the pump is already losing head to "
                              "cavitation: check the suction reading, liquid temperature and NPSH3 value; if they are "
                              "right, the sensor may not see the collapse (mount, location, band)");
        } else if (cls == MarginClass::thin) {
            r.agreement = MarginAgreement::at_risk;
            r.notes.push_back("no cavitation heard, but the margin is under the guidance minimum: a small fall in "
                              "suction level, a warmer liquid or more flow can start it; raise the margin or re-measure "
                              "soon");
            r.notes.push_back(guidance);
        } else {
            r.agreement = MarginAgreement::consistent;
        }
        return r;
    }
    if (verdict == Verdict::developed && cls == MarginClass::large) {
        r.agreement = MarginAgreement::unexplained;
        r.notes.push_back(fmt("developed cavitation at %.2f x NPSH3, a margin the suction pressure alone does not "
                              "explain: look for suction recirculation (running far below the best-efficiency flow), "
                              "air or gas entrainment (a vortex at the intake, a leaking suction joint), a blocked "
                              "strainer or part-closed suction valve, or a wrong gauge reading or NPSH3 curve",
                              h.margin->ratio));
        return r;
    }
    r.agreement = MarginAgreement::consistent;
    if (cls == MarginClass::below_npsh3)
        r.notes.push_back("NPSHa is below NPSH3: the pump is losing head to cavitation; raising the suction pressure or "
                          "cutting the flow is the direct cure");
    else if (cls == MarginClass::thin)
        r.notes.push_back("the margin is under the guidance minimum, which explains the cavitation: " + guidance);
    else if (verdict == Verdict::incipient)
        r.notes.push_back("incipient cavitation with the margin within guidance: inception lies at 1.5 to more than 5 x "
                          "NPSH3 (larger at part load), so this is expected; watch the trend");
    else
        r.notes.push_back("developed cavitation with the margin within guidance: the guidance minimum is not enough for "
                          "this pump at this duty; raise the suction pressure or cut the flow, check the strainer and "
                          "suction valve, and confirm the NPSH3 value for this impeller");
    return r;
}

bool grade_with_margin(Finding& f, const Hydraulics& h) {
    if (f.verdict == Verdict::indeterminate || !h.npsh) return false;
    const double npsha = h.npsh->npsha_m;
    const bool below_npsh3 = h.margin && h.margin->margin_class == MarginClass::below_npsh3;
    const bool boiling = npsha < kNearBoilingNpshM;
    if (!below_npsh3 && !boiling) return false;
    const std::string why =
        below_npsh3 ? fmt("NPSHa %.2f m is at or below NPSH3 %.2f m, the 3 %% head-drop point", npsha, h.margin->npsh3_m)
                    : fmt("NPSHa %.2f m is within %.1f m of zero: the liquid at the impeller eye is at or near its "
                          "boiling point",
                          npsha, kNearBoilingNpshM);
    f.evidence.push_back(why + ": the pump cavitates whatever the vibration shows");
    if (f.verdict != Verdict::normal) return false;
    f.verdict = below_npsh3 ? Verdict::developed : Verdict::incipient;
    f.hydraulic_only = true;
    // One line of evidence, and it contradicts the other: no calibrated rule
    // covers this case, so the confidence is a plain even chance (our choice).
    f.raw_score = std::min(f.raw_score, 0.5);
    f.confidence = std::min(f.confidence, 0.5);
    f.evidence.push_back("no acoustic sign of cavitation over the baseline: the verdict rests on the operating point "
                         "alone");
    f.warnings.push_back("the acoustic evidence is missing although the suction conditions say the pump cavitates: the "
                         "baseline may itself have been recorded while cavitating, the sensor or its mount may not pass "
                         "the collapse band, or the suction reading, temperature or NPSH3 may be wrong; check them");
    assign_grade(f);
    return true;
}

void flag_operating_point_differences(Finding& f, const std::vector<DutyDifference>& differences) {
    for (const auto& d : differences) {
        f.other_findings.push_back({Concern::off_duty, d.text});
        f.warnings.push_back(d.brief + " (see other findings)");
        f.raw_score *= 0.85;
        f.off_duty |= d.far;
    }
    if (differences.empty() || f.verdict == Verdict::indeterminate) return;
    f.confidence = calibrated_confidence(f.raw_score);
    assign_grade(f);
}

}  // namespace cavitas::models
