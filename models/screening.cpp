// Screening one recording without a reference (models/screening.hpp).
#include "models/screening.hpp"

#include <algorithm>
#include <cmath>

#include "models/baseline.hpp"
#include "models/machine.hpp"
#include "models/margin_reading.hpp"
#include "models/text.hpp"

namespace cavitas::models {

const char* to_string(ScreeningCall c) {
    switch (c) {
        case ScreeningCall::signs_of_cavitation: return "signs_of_cavitation";
        case ScreeningCall::no_sign: return "no_sign";
        case ScreeningCall::cannot_tell: return "cannot_tell";
    }
    return "cannot_tell";
}

const char* words(ScreeningCall c) {
    switch (c) {
        case ScreeningCall::signs_of_cavitation: return "signs of cavitation";
        case ScreeningCall::no_sign: return "no sign of cavitation";
        case ScreeningCall::cannot_tell: return "cannot tell";
    }
    return "cannot tell";
}

const char* to_string(SignState s) {
    switch (s) {
        case SignState::present: return "present";
        case SignState::absent: return "absent";
        case SignState::claimed: return "claimed";
        case SignState::not_read: return "not_read";
    }
    return "not_read";
}

const std::vector<std::string>& screening_next_steps() {
    static const std::vector<std::string> steps = {
        "take a reference for this point: a baseline when the machine is known good ('cavitas baseline'), a "
        "suppression run with the suction head raised until the HF signs are gone ('cavitas baseline "
        "--suppression'), or a sister machine's baseline of the same model and duty ('cavitas analyze "
        "--reference'); a screening cannot see a change from this machine's own normal",
        "state the operating point (suction pressure, temperature, flow, NPSH3) with the recording: the NPSH margin "
        "is read beside the acoustic signs",
    };
    return steps;
}

namespace {

double level_median(const RecordingAnalysis& a, SegmentIndicator i) { return median(a.series[i]); }
double recording_value(const RecordingAnalysis& a, RecordingIndicator i) {
    return a.recording[static_cast<std::size_t>(i)];
}

ScreeningSign read_dominance(const RecordingAnalysis& a, const ScreeningConfig& c) {
    ScreeningSign s{"hf_dominance", "db", {}, c.dominance_db, SignState::absent, {}};
    s.value = level_median(a, SegmentIndicator::hf_band_level) - level_median(a, SegmentIndicator::lf_band_level);
    if (*s.value >= c.dominance_db) s.state = SignState::present;
    s.words = fmt("the HF band (%.1f-%.1f kHz) carries %+.1f dB of the power of the band below it (%.0f-%.0f Hz)%s",
                  a.setup.hf.low_hz / 1000.0, a.setup.hf.high_hz / 1000.0, *s.value, a.setup.lf.low_hz,
                  a.setup.lf.high_hz,
                  s.state == SignState::present
                      ? fmt(": broadband HF energy as collapse noise makes it (sound pumps read under %.0f dB)",
                            c.dominance_db).c_str()
                      : fmt(", under the %.0f dB that would mark broadband HF energy", c.dominance_db).c_str());
    return s;
}

bool sparse(const RecordingAnalysis& a, const ScreeningConfig& c) {
    return level_median(a, SegmentIndicator::hf_kurtosis) >= c.sparse_kurtosis;
}

ScreeningSign read_impulses(const RecordingAnalysis& a, const std::optional<BearingFamily>& bearing,
                            const ScreeningConfig& c) {
    ScreeningSign s{"sparse_impulses", "ratio", {}, c.sparse_kurtosis, SignState::absent, {}};
    s.value = level_median(a, SegmentIndicator::hf_kurtosis);
    if (sparse(a, c)) s.state = bearing ? SignState::claimed : SignState::present;
    s.words = fmt("HF band kurtosis %.1f (Gaussian = 3; sparse impacts from %.0f)", *s.value, c.sparse_kurtosis);
    if (s.state == SignState::claimed)
        s.words += fmt(": the bearing-like family at %.2fx explains the impacts", bearing->order);
    return s;
}

ScreeningSign read_modulation(const RecordingAnalysis& a, const std::optional<BearingFamily>& bearing,
                              const ScreeningConfig& c) {
    const bool bpf = a.vanes > 0;
    ScreeningSign s{"blade_pass_modulation", "ratio", {}, c.modulation_depth, SignState::not_read, {}};
    const bool speed_known = a.rpm > 0.0 && (!a.rpm_estimated || a.speed_confirmed);
    if (!speed_known) {
        s.words = "not read: the shaft speed was not given and could not be confirmed from the spectrum (give --rpm)";
        return s;
    }
    const double hz = bpf ? blade_pass_hz(a.rpm, a.vanes) : shaft_hz(a.rpm);
    s.value = recording_value(a, bpf ? RecordingIndicator::modulation_bpf : RecordingIndicator::modulation_1x);
    const double line_db = recording_value(
        a, bpf ? RecordingIndicator::envelope_bpf_prominence : RecordingIndicator::envelope_1x_prominence);
    const double need_db = sparse(a, c) ? c.weak_line_prominence_db : c.line_prominence_db;
    const bool over = *s.value >= c.modulation_depth && line_db >= need_db;
    s.state = !over ? SignState::absent
                    : bearing && explained_by_bearing_family(a, *bearing, hz) ? SignState::claimed : SignState::present;
    s.words = fmt("HF envelope at %s %.1f Hz: modulation depth %.2f (from %.2f), line %.1f dB over its floor (from "
                  "%.0f dB)%s",
                  bpf ? "blade pass" : "1x (vane count not given)", hz, *s.value, c.modulation_depth, line_db, need_db,
                  s.state == SignState::claimed ? ": a line of the bearing-like family" : "");
    return s;
}

ScreeningSign read_suction(const Hydraulics* h) {
    ScreeningSign s{"suction_head", "m", {}, {}, SignState::not_read, {}};
    if (!h || !h->npsh) {
        s.words = "not read: no suction pressure stated (NPSHa unknown)";
        return s;
    }
    s.value = h->npsh->npsha_m;
    s.state = SignState::absent;
    if (h->margin && h->margin->ratio < 1.0) {
        s.state = SignState::present;
        s.threshold = h->margin->npsh3_m;
        s.words = fmt("NPSHa %.2f m is under the pump's NPSH3 %.2f m: the pump is losing head to cavitation by "
                      "definition (ANSI/HI 14.6)",
                      *s.value, h->margin->npsh3_m);
    } else if (*s.value < kNearBoilingNpshM) {
        s.state = SignState::present;
        s.threshold = kNearBoilingNpshM;
        s.words = fmt("NPSHa %.2f m: the liquid at the impeller eye is at or near its boiling point (under %.0f m)",
                      *s.value, kNearBoilingNpshM);
    } else if (h->margin) {
        s.threshold = h->margin->required_m;
        s.words = fmt("NPSHa %.2f m is %.2f x NPSH3 (%s; guidance minimum %.2f m)", *s.value, h->margin->ratio,
                      to_string(h->margin->margin_class), h->margin->required_m);
    } else {
        s.words = fmt("NPSHa %.2f m; NPSH3 not stated, so the margin is unknown", *s.value);
    }
    return s;
}

// The record's own quality: every check that needs no reference, as a
// baseline's recordings are checked (the speed is read as a sign instead).
QualityReport own_quality(const RecordingAnalysis& a, const RecordingContext& ctx) {
    Baseline self = learn_baseline({a});
    self.unit = ctx.unit;
    self.channel = ctx.channel;
    QualityReport q = assess_quality(a, self, ctx);
    std::erase_if(q.checks, [](const QualityCheck& c) { return c.name == "speed_confirmed"; });
    return q;
}

void grade(Screening& s, bool margin_within_guidance) {
    s.grade_reasons.push_back("no reference: judged from this recording alone, so a change from this machine's own "
                              "normal cannot be seen");
    const bool clean = s.warnings.empty();
    switch (s.call) {
        case ScreeningCall::signs_of_cavitation:
            if ((s.hydraulic_sign && s.acoustic_signs >= 1) || s.acoustic_signs >= 3) {
                s.grade = ConfidenceGrade::moderate;
            } else {
                s.grade = ConfidenceGrade::low;
                s.grade_reasons.push_back(s.hydraulic_sign ? "said by the operating point alone: no acoustic sign agrees"
                                                           : "two acoustic signs of three, with nothing else to agree");
            }
            break;
        case ScreeningCall::no_sign:
            // Quiet acoustics alone cannot rule out a rise from this machine's own
            // normal (a pump cavitating since commissioning reads like this too):
            // moderate only when a suction head within guidance agrees.
            s.grade = clean && margin_within_guidance ? ConfidenceGrade::moderate : ConfidenceGrade::low;
            if (!margin_within_guidance)
                s.grade_reasons.push_back("no NPSH margin within guidance to agree with the quiet acoustics (state the "
                                          "suction pressure, temperature and NPSH3)");
            if (!clean) s.grade_reasons.push_back("the recording carries quality warnings");
            break;
        case ScreeningCall::cannot_tell: s.grade = ConfidenceGrade::low; break;
    }
    if (!clean)
        for (const auto& w : s.warnings) s.grade_reasons.push_back(w);
}

}  // namespace

Screening screen(const RecordingAnalysis& a, const RecordingContext& ctx, const Hydraulics* h,
                 const ScreeningConfig& c) {
    Screening s;
    s.quality = own_quality(a, ctx);
    s.warnings = s.quality.warnings();
    const std::optional<BearingFamily> bearing = bearing_family(a);
    s.signs = {read_dominance(a, c), read_modulation(a, bearing, c), read_impulses(a, bearing, c), read_suction(h)};
    for (std::size_t i = 0; i < 3; ++i) s.acoustic_signs += s.signs[i].state == SignState::present ? 1 : 0;
    s.hydraulic_sign = s.signs[3].state == SignState::present;
    if (bearing)
        s.other_findings.push_back(
            {Concern::bearing_impacts,
             fmt("bearing-like impacts: envelope lines at %.2fx shaft speed (%.1f Hz, %.1f dB over the floor) %s, a "
                 "non-integer order no impeller makes",
                 bearing->order, bearing->hz, bearing->prominence_db, bearing->family.c_str())});
    if (a.mains_hz > 0.0)
        s.other_findings.push_back({Concern::mains_pickup,
                                    fmt("%d lines at multiples of %.0f Hz: mains pickup in the measurement chain",
                                        a.mains_lines, a.mains_hz)});

    const bool claimed = std::any_of(s.signs.begin(), s.signs.begin() + 3,
                                     [](const ScreeningSign& g) { return g.state == SignState::claimed; });
    if (!s.quality.usable()) {
        s.call = ScreeningCall::cannot_tell;
        s.reasons = s.quality.reasons();
    } else if (s.hydraulic_sign || s.acoustic_signs >= c.signs_needed) {
        s.call = ScreeningCall::signs_of_cavitation;
    } else if (s.acoustic_signs == 1) {
        s.call = ScreeningCall::cannot_tell;
        s.reasons.push_back(fmt("one acoustic sign of the %d needed: many sound machines show one on their own (an HF "
                                "resonance, blade-pass pulsation, a rubbing seal)",
                                c.signs_needed));
    } else if (claimed) {
        s.call = ScreeningCall::cannot_tell;
        s.reasons.push_back("the bearing-like impacts fill the HF band and its envelope: cavitation's own signs could "
                            "hide under them");
    } else if (s.signs[1].state == SignState::not_read) {
        s.call = ScreeningCall::cannot_tell;
        s.reasons.push_back("blade-pass modulation could not be read: the shaft speed was neither given nor confirmed "
                            "from the spectrum (give --rpm)");
    } else {
        s.call = ScreeningCall::no_sign;
    }
    const bool within = h && h->margin && (h->margin->margin_class == MarginClass::adequate ||
                                            h->margin->margin_class == MarginClass::large);
    grade(s, within);
    return s;
}

}  // namespace cavitas::models
