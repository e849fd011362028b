// References other than the machine's own past (models/reference.hpp).
#include "models/reference.hpp"

#include <cmath>

#include "models/classifier.hpp"
#include "models/text.hpp"

namespace cavitas::models {

const char* to_string(ReferenceKind k) {
    switch (k) {
        case ReferenceKind::own: return "own";
        case ReferenceKind::suppression: return "suppression";
        case ReferenceKind::sister: return "sister";
    }
    return "own";
}

double sister_level_floor_db(double rpm_now, double rpm_ref) {
    const double speed_db =
        rpm_now > 0.0 && rpm_ref > 0.0 ? kSlopeUncertaintyDbPerDecade * std::abs(std::log10(rpm_now / rpm_ref)) : 0.0;
    return std::hypot(kSisterLevelFloorDb, speed_db);
}

namespace {

std::string stated(const std::string& s) { return s.empty() ? "not stated" : s; }
std::string rpm_words(double rpm) { return rpm > 0.0 ? fmt("%.0f rpm", rpm) : "unknown"; }
std::string count_words(int n) { return n > 0 ? std::to_string(n) : "not stated"; }
std::string hz_words(double hz) { return hz > 0.0 ? fmt("%.0f Hz", hz) : "not stated"; }

}  // namespace

Reference make_reference(const Baseline& b, bool sister, const RecordingStatement& now) {
    Reference r;
    r.machine = b.machine;
    r.kind = sister ? ReferenceKind::sister : b.suppression ? ReferenceKind::suppression : ReferenceKind::own;
    if (!sister) return r;
    auto differ = [&](const char* field, const std::string& here, const std::string& there) {
        if (here != there) r.mismatches.push_back({field, here, there});
    };
    differ("machine", stated(now.machine), stated(b.machine));
    differ("channel", std::to_string(now.channel), std::to_string(b.channel));
    const double ref_rpm = b.speed.rpm_ref > 0.0 ? b.speed.rpm_ref : b.rpm;
    // Within 3 %: the speed model brings levels across with less than 0.5 dB of doubt.
    if (now.rpm <= 0.0 || ref_rpm <= 0.0 || std::abs(now.rpm / ref_rpm - 1.0) >= 0.03)
        differ("speed", rpm_words(now.rpm), rpm_words(ref_rpm));
    if (now.vanes > 0 && b.vanes > 0) differ("vanes", count_words(now.vanes), count_words(b.vanes));
    differ("mount", stated(now.mount), stated(b.mount));
    differ("sensor_max_hz", hz_words(now.sensor_max_hz), hz_words(b.setup.sensor_max_hz));
    r.level_floor_db = sister_level_floor_db(now.rpm, ref_rpm);
    return r;
}

void state_reference(Finding& f, const Reference& r, const Baseline& b) {
    f.reference = r.kind;
    f.reference_mismatches = r.mismatches;
    f.reference_floor_db = r.level_floor_db;
    if (r.kind == ReferenceKind::suppression && b.suppression) {
        const SuppressionRun& s = *b.suppression;
        f.evidence.insert(f.evidence.begin(),
                          fmt("judged against a suppression reference: this machine recorded with its suction head "
                              "raised (NPSHa %.2f-%.2f m, at least %.1f x NPSH3 %.2f m)",
                              s.npsha_low_m, s.npsha_high_m, s.ratio_low, s.npsh3_m));
    } else if (r.kind == ReferenceKind::sister) {
        std::string differences;
        for (const auto& m : r.mismatches)
            differences += (differences.empty() ? "" : "; ") + m.field + " " + m.recording + " here, " + m.reference +
                           " there";
        f.evidence.insert(f.evidence.begin(),
                          fmt("judged against a sister machine's baseline (%s), accepted with --reference: band levels "
                              "read with %.1f dB more spread; differences: %s",
                              stated(r.machine).c_str(), r.level_floor_db,
                              differences.empty() ? "none stated" : differences.c_str()));
    }
    if (f.verdict != Verdict::indeterminate) assign_grade(f);
}

}  // namespace cavitas::models
