#include "models/quality.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "models/text.hpp"

namespace cavitas::models {

const char* to_string(CheckStatus s) {
    switch (s) {
        case CheckStatus::pass: return "pass";
        case CheckStatus::warn: return "warn";
        case CheckStatus::fail: return "fail";
    }
    return "fail";
}

bool QualityReport::usable() const {
    return std::none_of(checks.begin(), checks.end(), [](const QualityCheck& c) { return c.status == CheckStatus::fail; });
}

std::vector<std::string> QualityReport::reasons() const {
    std::vector<std::string> r;
    for (const auto& c : checks)
        if (c.status == CheckStatus::fail) r.push_back(c.message);
    return r;
}

std::vector<std::string> QualityReport::warnings() const {
    std::vector<std::string> r;
    for (const auto& c : checks)
        if (c.status == CheckStatus::warn) r.push_back(c.message);
    return r;
}

std::size_t QualityReport::warning_count() const {
    return static_cast<std::size_t>(
        std::count_if(checks.begin(), checks.end(), [](const QualityCheck& c) { return c.status == CheckStatus::warn; }));
}

namespace {

// A check where larger is worse: value >= fail_at fails, >= warn_at warns.
QualityCheck graded(std::string name, std::string unit, double value, double warn_at, double fail_at,
                    const std::string& warn_msg, const std::string& fail_msg) {
    QualityCheck c{std::move(name), std::move(unit), value, warn_at, fail_at, CheckStatus::pass, {}};
    if (value >= fail_at) {
        c.status = CheckStatus::fail;
        c.message = fail_msg;
    } else if (value >= warn_at) {
        c.status = CheckStatus::warn;
        c.message = warn_msg;
    }
    return c;
}

QualityCheck yes_no(std::string name, bool failed, const std::string& msg) {
    QualityCheck c{std::move(name), "flag", failed ? 1.0 : 0.0, 1.0, 1.0, CheckStatus::pass, {}};
    if (failed) {
        c.status = CheckStatus::fail;
        c.message = msg;
    }
    return c;
}

}  // namespace

QualityReport assess_quality(const RecordingAnalysis& a, const Baseline& b, const RecordingContext& ctx,
                             const QualityLimits& L) {
    QualityReport r;
    const auto& q = a.quality;
    const double n = std::max<double>(1.0, static_cast<double>(q.samples));

    r.checks.push_back(yes_no("non_finite", q.non_finite > 0,
                              fmt("%zu samples are not finite numbers (NaN or Inf): the file is damaged or was written by "
                                  "a faulty converter; export it again from the collector",
                                  q.non_finite)));

    const bool all_zero = q.samples > 0 && q.zero_samples == q.samples;
    const bool flat = q.samples > 0 && !(q.ac_rms() > 0.0);
    r.checks.push_back(yes_no("signal_present", all_zero || flat,
                              all_zero ? std::string("all samples are zero: no signal reached the collector; check the sensor, "
                                                     "cable, connector and the channel's power (IEPE supply)")
                                       : std::string("the signal is flat (zero AC rms): the input is stuck; check the sensor, "
                                                     "cable and input channel and record again")));

    // Coarse quantisation (an 8-bit file, or a low signal in any integer file):
    // runs of equal samples are steps of the scale, not flat tops or dropouts.
    const double steps = a.quantum > 0.0 ? q.max_abs / a.quantum : std::numeric_limits<double>::infinity();
    const bool coarse = steps < L.resolution_warn_steps;
    if (coarse) {
        const int bits = static_cast<int>(std::lround(std::log2(a.full_scale / a.quantum))) + 1;
        QualityCheck c{"resolution", "steps", steps, L.resolution_warn_steps, L.resolution_fail_steps, CheckStatus::warn,
                       fmt("the signal's peaks reach only %.0f steps of this %d-bit file's scale: the quantisation "
                           "noise is within about 30 dB of the signal; raise the input gain or record with more bits",
                           steps, bits)};
        if (steps < L.resolution_fail_steps) {
            c.status = CheckStatus::fail;
            c.message = fmt("the signal's peaks reach only %.0f steps of this %d-bit file's scale: the high-frequency "
                            "band is quantisation noise, and runs of equal samples are steps of the scale, not "
                            "clipping or dropouts; raise the input gain (a smaller range) or record with 16 or 24 bits",
                            steps, bits);
        }
        r.checks.push_back(c);
    }
    const double clipped =
        static_cast<double>(coarse ? q.at_full_scale : std::max(q.at_full_scale, q.flat_top_samples(0.99))) / n;
    r.checks.push_back(graded(
        "clipping", "share", clipped, L.clipped_warn, L.clipped_fail,
        fmt("%.3f %% of samples are at full scale or flat-topped at the record's extremes: peaks may be clipped; "
            "crest factor and kurtosis read low",
            100.0 * clipped),
        fmt("%.2f %% of samples are at full scale or flat-topped at the record's extremes: the input was overloaded; "
            "reduce the input range (or the sensor's sensitivity) and record again",
            100.0 * clipped)));

    const double dropout = coarse ? 0.0 : static_cast<double>(q.dropout_samples) / n;
    r.checks.push_back(graded("dropouts", "share", dropout, L.dropout_warn, L.dropout_fail,
                              fmt("%.2f %% of the record is stuck at one value (runs of 5 ms or more): brief dropouts; "
                                  "check the cable and connector",
                                  100.0 * dropout),
                              fmt("%.1f %% of the record is stuck at one value (runs of 5 ms or more; longest %zu "
                                  "samples): the signal dropped out; check the cable, connector and mount and record again",
                                  100.0 * dropout, q.longest_flat_run)));

    const double dc = q.mean();
    const double full_scale = a.full_scale;
    if (full_scale > 0.0) {
        const double share = std::abs(dc) / full_scale;
        r.checks.push_back(graded("dc_offset", "share_of_full_scale", share, L.dc_fs_warn, L.dc_fs_fail,
                                  fmt("DC offset %.1f %% of full scale: an AC-coupled sensor should show none; check the "
                                      "sensor bias and cable",
                                      100.0 * share),
                                  fmt("DC offset %.0f %% of full scale: a bias or cable fault, or a settling sensor; check "
                                      "the sensor bias voltage and cable, let the sensor settle and record again",
                                      100.0 * share)));
    } else {
        const double ratio = q.ac_rms() > 0.0 ? std::abs(dc) / q.ac_rms() : 0.0;
        r.checks.push_back(graded("dc_offset", "ratio_to_ac_rms", ratio, L.dc_rms_warn, 1e300,
                                  fmt("DC offset %.1f x the AC rms: right for a DC-coupled sensor that sees gravity, a bias "
                                      "or cable fault for an AC-coupled one",
                                      ratio),
                                  ""));
    }

    const double ski = a.recording[static_cast<std::size_t>(RecordingIndicator::ski_slope)];
    const double ski_base = b[RecordingIndicator::ski_slope].median;
    QualityCheck sk = graded("ski_slope", "db", ski, L.ski_warn_db, L.ski_fail_db,
                             fmt("low-frequency rise of %.0f dB (0.5-4 Hz over 10-100 Hz): a settling sensor or a loose "
                                 "mount or cable; let the sensor settle before recording",
                                 ski),
                             fmt("low-frequency rise of %.0f dB (0.5-4 Hz over 10-100 Hz, a 'ski slope'): the sensor is "
                                 "settling, overloaded or faulty, or the cable is; let it settle, check the mount and "
                                 "cable and record again",
                                 ski));
    const bool has_base = b[RecordingIndicator::ski_slope].count > 0;
    if (sk.status != CheckStatus::fail && has_base && ski >= ski_base + L.ski_over_baseline_fail_db) {
        sk.status = CheckStatus::fail;
        sk.message = fmt("low-frequency rise %.0f dB over the baseline's (%.0f dB against %.0f dB, a 'ski slope'): the "
                         "sensor is settling, overloaded or faulty, or the mount or cable is; let it settle, check the "
                         "mount and cable and record again",
                         ski - ski_base, ski, ski_base);
    } else if (sk.status == CheckStatus::pass && has_base && ski >= ski_base + L.ski_over_baseline_db) {
        sk.status = CheckStatus::warn;
        sk.message = fmt("low-frequency rise %.0f dB over the baseline's (%.0f dB against %.0f dB): a settling sensor, "
                         "a loose mount or a cable fault",
                         ski - ski_base, ski, ski_base);
    }
    r.checks.push_back(sk);

    const double segs = static_cast<double>(a.series.segments());
    QualityCheck seg{"segments", "segments", segs, static_cast<double>(L.segments_warn),
                     static_cast<double>(L.segments_fail), CheckStatus::pass, {}};
    if (a.series.segments() < L.segments_fail) {
        seg.status = CheckStatus::fail;
        const double need_s = min_record_s(L.segments_fail, a.rpm);
        seg.message =
            a.rpm > 0.0
                ? fmt("only %zu analysis segment(s) of %.2f s: too short for the statistics; a verdict needs %zu segments "
                      "of %.0f shaft revolutions or %.2f s, whichever is longer: record at least %.1f s at %.0f rpm",
                      a.series.segments(), a.setup.segment_s, L.segments_fail, kMinRevolutionsPerSegment, kMinSegmentS,
                      need_s, a.rpm)
                : fmt("only %zu analysis segment(s) of %.2f s: too short for the statistics; record at least %.1f s",
                      a.series.segments(), a.setup.segment_s, need_s);
    } else if (a.series.segments() < L.segments_warn) {
        seg.status = CheckStatus::warn;
        seg.message = fmt("only %zu analysis segments: the spread of the indicators is poorly known; record %.1f s or more",
                          a.series.segments(), static_cast<double>(L.segments_warn) * a.setup.segment_s);
    }
    r.checks.push_back(seg);

    r.checks.push_back(yes_no("sample_rate", a.setup.fs_hz != b.setup.fs_hz,
                              fmt("sample rate %.0f Hz differs from the baseline's %.0f Hz: the baseline's HF band "
                                  "%.1f-%.1f kHz is not seen the same way; record again at the baseline's rate",
                                  a.setup.fs_hz, b.setup.fs_hz, b.setup.hf.low_hz / 1000.0, b.setup.hf.high_hz / 1000.0)));
    r.checks.push_back(yes_no("unit", ctx.unit != b.unit,
                              "recording calibrated in " + ctx.unit + " but the baseline is in " + b.unit +
                                  ": use the baseline's --full-scale calibration"));
    const bool sister = ctx.reference == ReferenceKind::sister;
    // Against a sister machine another channel is one more stated difference (models/reference.hpp).
    r.checks.push_back(yes_no("channel", ctx.channel != b.channel && !sister,
                              fmt("channel %d analysed, but the baseline was learned on channel %d: another sensor or "
                                  "axis; analyse channel %d, learn a baseline for this channel, or accept it as "
                                  "another point's reference with --reference",
                                  ctx.channel, b.channel, b.channel)));
    r.checks.push_back(yes_no(
        "sensor_range", ctx.sensor_max_hz > 0.0 && b.setup.hf.high_hz > ctx.sensor_max_hz,
        fmt("the baseline's HF band %.1f-%.1f kHz reaches above this sensor's stated %.1f kHz limit: the HF indicators "
            "cannot be judged; mount the sensor as for the baseline or learn a baseline with this mount",
            b.setup.hf.low_hz / 1000.0, b.setup.hf.high_hz / 1000.0, ctx.sensor_max_hz / 1000.0)));

    // A verdict compares levels at the baseline's speed and reads lines at
    // orders of the shaft: a speed nobody gave and the spectrum did not confirm
    // would make both a guess (machine.hpp: SpeedEstimate::confirmed).
    const bool speed_unknown = a.rpm <= 0.0;
    r.checks.push_back(yes_no(
        "speed_confirmed", speed_unknown || (a.rpm_estimated && !a.speed_confirmed),
        speed_unknown
            ? fmt("shaft speed not given and not found in the spectrum (searched %.0f-%.0f rpm): give --rpm",
                  a.speed_search_low_rpm, a.speed_search_high_rpm)
            : fmt("shaft speed could not be confirmed (best guess %.0f rpm in %.0f-%.0f rpm, %s): give --rpm", a.rpm,
                  a.speed_search_low_rpm, a.speed_search_high_rpm, a.speed_how.c_str())));
    if (a.rpm > 0.0 && b.speed.rpm_ref > 0.0) {
        // Outside the speeds the baseline covers, its levels cannot be brought
        // to this speed; inside, a speed far from every visit's is said.
        const SpeedModel& m = b.speed;
        const bool outside = a.rpm < m.covered_low_rpm() || a.rpm > m.covered_high_rpm();
        double nearest = 0.0;
        for (const auto& v : b.sources)
            if (v.rpm > 0.0 && (nearest == 0.0 || std::abs(v.rpm / a.rpm - 1.0) < std::abs(nearest / a.rpm - 1.0)))
                nearest = v.rpm;
        if (nearest == 0.0) nearest = m.rpm_ref;
        const double off = std::abs(a.rpm / nearest - 1.0);
        const std::string learned =
            m.speeds > 1 ? fmt("learned at %d speeds, %.0f-%.0f rpm", m.speeds, m.rpm_low, m.rpm_high)
                         : fmt("learned at %.0f rpm", m.rpm_ref);
        const std::string scaling = m.fitted ? fmt("levels scaled by the fitted %.0f dB/decade (HF)", m.hf_slope_db_per_decade)
                                             : fmt("levels scaled by an assumed %.0f dB/decade", kAssumedSlopeDbPerDecade);
        QualityCheck c;
        c.name = "speed_coverage";
        c.unit = "share";
        c.value = off;
        c.warn_at = L.speed_warn;
        c.fail_at = (m.fitted ? kCoverFitted : kCoverAssumed) - 1.0;
        const double ratio = std::max(a.rpm / nearest, nearest / a.rpm);
        if (outside && sister && ratio <= kSisterSpeedRatio) {
            // Stated as a difference from the reference, its doubt in the widened spread.
            c.status = CheckStatus::pass;
            c.fail_at = kSisterSpeedRatio - 1.0;
            c.message = fmt("shaft speed %.0f rpm against a sister machine's baseline %s: %s, the spread of the band "
                            "levels widened for the uncertain exponent (models/reference.hpp)",
                            a.rpm, learned.c_str(), scaling.c_str());
        } else if (outside) {
            c.status = CheckStatus::fail;
            c.message = fmt("shaft speed %.0f rpm is outside the %.0f-%.0f rpm the baseline covers (%s): levels are not "
                            "comparable; judge it against a baseline that covers this speed, or add a known-good "
                            "recording at this speed (baseline --add-to)",
                            a.rpm, m.covered_low_rpm(), m.covered_high_rpm(), learned.c_str());
        } else if (off >= L.speed_warn && !m.fitted) {
            c.status = CheckStatus::warn;
            c.message = fmt("shaft speed %.0f rpm is %+.1f %% from the baseline's %.0f rpm: %s; compare with care",
                            a.rpm, 100.0 * (a.rpm / nearest - 1.0), nearest, scaling.c_str());
        } else {
            c.status = CheckStatus::pass;
            c.message = fmt("shaft speed %.0f rpm within the %.0f-%.0f rpm the baseline covers (%s; %s)", a.rpm,
                            m.covered_low_rpm(), m.covered_high_rpm(), learned.c_str(), scaling.c_str());
        }
        r.checks.push_back(c);
    }
    return r;
}

}  // namespace cavitas::models
