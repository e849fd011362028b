#include "models/classifier.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <optional>

#include "models/machine.hpp"
#include "models/text.hpp"
#include "signal/envelope.hpp"

namespace cavitas::models {

const char* to_string(Verdict v) {
    switch (v) {
        case Verdict::normal: return "normal";
        case Verdict::incipient: return "incipient";
        case Verdict::developed: return "developed";
        case Verdict::indeterminate: return "indeterminate";
    }
    return "indeterminate";
}

const std::vector<std::string>& cavitation_cautions() {
    static const std::vector<std::string> c = {
        "Cavitation damage can pit and weaken impellers, runners, wear rings and casings; a damaged part can fail without further warning.",
        "Before any inspection, isolate the machine, lock out and tag out its drive, and relieve and drain the casing as your site procedure requires.",
        "Confirm the finding with the operating point (suction pressure, liquid temperature, flow, NPSH margin) and your site procedures before acting on it.",
        "This finding supports, and does not replace, the judgement of qualified staff; local codes, the manufacturer's instructions and licensed practice take precedence.",
    };
    return c;
}

std::string unit_key(const std::string& unit) {
    std::string k;
    for (char c : unit) {
        if (c == '/') k += '_';
        else if (c == '^') continue;
        else k += static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
    }
    return k.empty() ? "fs" : k;
}

namespace {

std::string khz(double hz) { return fmt("%.1f", hz / 1000.0); }

// Spread floors: the baseline's own spread can be tiny (one steady recording);
// a comparison must not call a fraction of a dB significant. Our choices.
double sigma_floor(SegmentIndicator i, double median_value) {
    switch (i) {
        case SegmentIndicator::hf_level_db:
        case SegmentIndicator::lf_level_db: return 0.5;  // dB
        case SegmentIndicator::impulse_rate: return 1.0;  // per s
        case SegmentIndicator::hf_spectral_kurtosis: return 0.05;
        default: return std::max(0.1, 0.05 * std::abs(median_value));
    }
}

struct Ctx {
    const RecordingAnalysis& a;
    const Baseline& b;
    const ClassifierConfig& c;
    Finding& f;
    std::string ukey;
};

Comparison compare_segment(Ctx& x, SegmentIndicator i) {
    const IndicatorInfo& inf = info(i);
    // At the recording's speed, with the spread of visits and re-mounts (Baseline::expected).
    const RobustStat s = x.b.expected(i, x.a.rpm);
    Comparison cmp;
    cmp.key = std::string(inf.name) + "_" + (inf.unit == "signal" ? x.ukey : std::string(inf.unit));
    cmp.label = std::string(inf.label);
    const auto& v = x.a.series[i];
    cmp.value = median(v);
    cmp.p10 = quantile(v, 0.1);
    cmp.p90 = quantile(v, 0.9);
    cmp.baseline_median = s.median;
    cmp.baseline_sigma = s.sigma;
    cmp.change = cmp.value - s.median;
    cmp.z = cmp.change / std::max(s.sigma, sigma_floor(i, s.median));
    return cmp;
}

bool is_line_prominence(RecordingIndicator i) {
    return i == RecordingIndicator::ses_1x_prominence_db || i == RecordingIndicator::ses_bpf_prominence_db ||
           i == RecordingIndicator::ses_2bpf_prominence_db;
}

Comparison compare_recording(Ctx& x, RecordingIndicator i) {
    const IndicatorInfo& inf = info(i);
    RobustStat s = x.b[i];
    Comparison cmp;
    cmp.key = std::string(inf.name) + "_" + std::string(inf.unit);
    cmp.label = std::string(inf.label);
    cmp.value = cmp.p10 = cmp.p90 = x.a.recording[static_cast<std::size_t>(i)];
    // Shorter segments than the baseline's (a short capture): a coherent line
    // keeps its amplitude while the noise floor of an amplitude spectrum rises
    // as 1/sqrt(N), so prominences read 10 log10(T_base / T) dB lower.
    if (is_line_prominence(i) && x.a.setup.segment_s < x.b.setup.segment_s)
        s.median -= 10.0 * std::log10(x.b.setup.segment_s / x.a.setup.segment_s);
    cmp.baseline_median = s.median;
    cmp.baseline_sigma = s.sigma;
    cmp.change = cmp.value - s.median;
    const double floor = inf.unit == "db" ? 1.5 : std::max(0.02, 0.1 * std::abs(s.median));
    cmp.z = cmp.change / std::max(s.sigma, floor);
    return cmp;
}

double frac_to_integer(double order) { return std::abs(order - std::round(order)); }

// Bearing-like: a strong envelope peak at a non-integer order with a harmonic
// or shaft-rate sidebands, i.e. periodic impacts not locked to the rotor's
// integer orders (Randall & Antoni 2011: bearing lines sit at BPFO/BPFI/BSF
// multiples, smeared 1-2 % by slip).
bool find_bearing_like(const RecordingAnalysis& a, double& order_out, double& hz_out, double& prom_out,
                       std::string& family) {
    if (a.rpm <= 0.0 || a.envelope_peaks.empty()) return false;
    const double fr = shaft_hz(a.rpm);
    const double bin = 1.0 / a.setup.segment_s;
    const double tol_order = std::max(0.1, 2.0 * bin / fr);
    for (const auto& p : a.envelope_peaks) {
        if (p.prominence_db < 10.0) break;  // sorted strongest first
        if (p.order < 1.2 || frac_to_integer(p.order) < tol_order) continue;
        for (const auto& q : a.envelope_peaks) {
            if (&q == &p || q.prominence_db < 6.0) continue;
            const bool harmonic = std::abs(q.hz - 2.0 * p.hz) <= std::max(2.0 * bin, 0.02 * 2.0 * p.hz);
            const bool sideband = std::abs(std::abs(q.hz - p.hz) - fr) <= std::max(2.0 * bin, 0.02 * fr);
            if (harmonic || sideband) {
                // Report the family's fundamental: the strongest line can be a harmonic.
                const EnvelopePeak* fund = &p;
                for (bool moved = true; moved;) {
                    moved = false;
                    for (const auto& r : a.envelope_peaks)
                        if (r.prominence_db >= 6.0 && r.order >= 1.2 &&
                            std::abs(2.0 * r.hz - fund->hz) <= std::max(2.0 * bin, 0.02 * fund->hz)) {
                            fund = &r;
                            moved = true;
                            break;
                        }
                }
                order_out = fund->order;
                hz_out = fund->hz;
                prom_out = fund->prominence_db;
                family = harmonic || fund != &p ? "with its harmonics" : "with shaft-rate sidebands";
                return true;
            }
        }
    }
    return false;
}

// Prominence (dB over the local floor) of the averaged squared-envelope
// spectrum at an integer order, measured as the analyzer measures 1x and BPF;
// nullopt when the kept spectrum does not reach the line's floor window.
std::optional<double> order_line_db(const RecordingAnalysis& a, int order) {
    if (a.rpm <= 0.0 || a.envelope_bin_hz <= 0.0) return std::nullopt;
    const double hz = order * shaft_hz(a.rpm);
    const double floor_hz = std::max(10.0 * a.envelope_bin_hz, 0.1 * hz);
    const double top_hz = a.envelope_bin_hz * static_cast<double>(a.envelope_spectrum.size());
    if (hz + floor_hz >= top_hz) return std::nullopt;
    const double rel = a.rpm_estimated ? 0.01 : 0.005;
    return dsp::measure_line(a.envelope_spectrum, a.envelope_bin_hz, hz, std::max(a.envelope_bin_hz, rel * hz), floor_hz)
        .prominence_db;
}

// The strongest envelope line at the shaft orders 1x .. 2Zx that are not
// multiples of the vane count Z: the comb a load-zone (inner-race) or
// looseness modulation puts at every order, against which a blade-pass line
// must stand out before it can be read as blade-passage modulation.
double shaft_comb_db(const RecordingAnalysis& a) {
    double top = 0.0;
    for (int k = 1; k <= 2 * std::max(a.vanes, 4); ++k) {
        if (a.vanes > 0 && k % a.vanes == 0) continue;
        if (const auto p = order_line_db(a, k)) top = std::max(top, *p);
    }
    return top;
}

}  // namespace

Finding classify(const RecordingAnalysis& a, const Baseline& b, const std::string& signal_unit,
                 const ClassifierConfig& c) {
    RecordingContext ctx;
    ctx.unit = signal_unit;
    ctx.channel = b.channel;
    return classify(a, b, ctx, c);
}

Finding classify(const RecordingAnalysis& a, const Baseline& b, const RecordingContext& context,
                 const ClassifierConfig& c) {
    Finding f;
    Ctx x{a, b, c, f, unit_key(context.unit)};
    using SI = SegmentIndicator;
    using RI = RecordingIndicator;
    for (std::size_t i = 0; i < kSegmentIndicatorCount; ++i) f.comparisons.push_back(compare_segment(x, static_cast<SI>(i)));
    for (std::size_t i = 0; i < kRecordingIndicatorCount; ++i)
        f.comparisons.push_back(compare_recording(x, static_cast<RI>(i)));
    auto seg = [&](SI i) -> const Comparison& { return f.comparisons[static_cast<std::size_t>(i)]; };
    auto rec = [&](RI i) -> const Comparison& { return f.comparisons[kSegmentIndicatorCount + static_cast<std::size_t>(i)]; };

    // --- Can the record be judged at all? ---
    f.quality = assess_quality(a, b, context, c.quality);
    f.reasons = f.quality.reasons();
    f.baseline_warnings = b.warnings;
    if (!f.reasons.empty()) {
        f.verdict = Verdict::indeterminate;
        f.confidence = 0.0;
        return f;
    }
    double confidence_scale = 1.0;
    for (const auto& w : f.quality.warnings()) {
        f.warnings.push_back(w);
        confidence_scale *= 0.85;
    }
    const double speed_change = a.rpm > 0.0 && b.rpm > 0.0 ? a.rpm / b.rpm - 1.0 : 0.0;
    if (a.rpm_estimated) {
        f.evidence.push_back(fmt("shaft speed %.1f rpm estimated from the spectrum (+-%.1f rpm; not given with --rpm), %s",
                                 a.rpm, a.rpm_resolution, a.speed_how.c_str()));
        confidence_scale *= 0.95;
    }
    if (b.sources.size() == 1) {
        f.warnings.push_back("baseline learned from a single recording: its spread may be understated");
        confidence_scale *= 0.9;
    }
    if (std::abs(speed_change) >= 0.01 && b.speed.speeds <= 1)
        f.other_findings.push_back(fmt("shaft speed %.0f rpm is %+.1f %% from the baseline's %.0f rpm: a speed change, not "
                                       "cavitation; envelope lines compared in orders",
                                       a.rpm, 100.0 * speed_change, b.rpm));

    // --- The indicators ---
    const Comparison& hf = seg(SI::hf_level_db);
    const Comparison& lf = seg(SI::lf_level_db);
    const Comparison& kurt = seg(SI::hf_kurtosis);
    const Comparison& rate = seg(SI::impulse_rate);
    f.hf_rise_db = hf.change;
    f.lf_rise_db = lf.change;
    const std::string band = khz(a.setup.hf.low_hz) + "-" + khz(a.setup.hf.high_hz) + " kHz";
    const bool hf_alert = hf.change >= c.hf_alert_db && hf.z >= c.z_alert;
    const bool hf_strong = hf_alert && hf.change >= c.hf_developed_db;
    const bool impulsive_kurt = kurt.change >= c.kurtosis_rise && kurt.z >= c.z_alert;
    const bool impulsive_rate = rate.value >= 3.0 * rate.baseline_median + 5.0 && rate.z >= c.z_alert;
    const bool impulsive = impulsive_kurt || impulsive_rate;

    double b_order = 0.0, b_hz = 0.0, b_prom = 0.0;
    std::string b_family;
    f.bearing_like = find_bearing_like(a, b_order, b_hz, b_prom, b_family);
    f.bearing_order = b_order;
    // A line of the bearing family (up to its 6th harmonic) that happens to fall
    // on an integer order explains that line: it is not blade-pass modulation.
    // An inner-race defect crosses the load zone once a revolution, so its
    // impacts are modulated at the shaft rate: envelope lines at k x 1x as well
    // as at BPFI and its f_r sidebands (methods review A4; Randall & Antoni 2011).
    // With a bearing family present, an integer-order line is the bearing's
    // unless it stands 3 dB (twice the power) above that comb (our choice).
    const double comb_db = f.bearing_like ? shaft_comb_db(a) : 0.0;
    auto explained_by_bearing = [&](double hz) {
        if (!f.bearing_like) return false;
        // Slip smears bearing lines by 1-2 % (Randall & Antoni 2011), more at harmonics.
        const double tol = std::max(3.0 / a.setup.segment_s, 0.03 * hz);
        for (int k = 1; k <= 6; ++k)
            if (std::abs(k * b_hz - hz) <= tol) return true;
        const double order = hz / shaft_hz(a.rpm);
        if (std::abs(order - std::round(order)) < 0.02) {
            const auto p = order_line_db(a, static_cast<int>(std::lround(order)));
            return !p || *p < comb_db + 3.0;
        }
        return false;
    };

    // Integer-order modulation: BPF (needs the vane count) or, failing that, 1x.
    bool modulated = false;
    std::string modulation_text;
    if (a.rpm > 0.0) {
        const double fr = shaft_hz(a.rpm);
        auto check = [&](const Comparison& line, const char* name, double hz) {
            if (line.value >= c.line_prominence_db && line.change >= c.line_rise_db && !explained_by_bearing(hz)) {
                modulated = true;
                if (modulation_text.empty())
                    modulation_text = fmt("envelope line at %s %.1f Hz, %.1f dB above local floor (baseline %.1f dB)", name, hz,
                                          line.value, line.baseline_median);
            }
        };
        if (a.vanes > 0) {
            const double bpf = blade_pass_hz(a.rpm, a.vanes);
            check(rec(RI::ses_bpf_prominence_db), "BPF", bpf);
            // Sparse collapses make a noisy envelope spectrum whose floor hides the
            // line; the depth of modulation (line / mean squared envelope) still
            // shows it. Count it when the depth is well over the baseline's and the
            // line still stands a little over its floor.
            const Comparison& depth = rec(RI::modulation_bpf);
            const Comparison& prom = rec(RI::ses_bpf_prominence_db);
            if (!modulated && depth.z >= c.z_alert && depth.value >= 2.0 * depth.baseline_median &&
                prom.value >= c.weak_line_prominence_db && !explained_by_bearing(bpf)) {
                modulated = true;
                modulation_text = fmt("HF modulation depth at BPF %.1f Hz %.2f vs baseline %.2f (z = %.1f; envelope line "
                                      "%.1f dB over its floor)",
                                      bpf, depth.value, depth.baseline_median, depth.z, prom.value);
            }
            check(rec(RI::ses_2bpf_prominence_db), "2xBPF", 2.0 * blade_pass_hz(a.rpm, a.vanes));
        }
        check(rec(RI::ses_1x_prominence_db), "1x", fr);
    }

    // A bearing-like family only yields to cavitation when the blade-pass line
    // itself (not 1x, which bearing faults also show) is modulated.
    bool bpf_modulated = false;
    if (a.vanes > 0 && a.rpm > 0.0) {
        const Comparison& lb = rec(RI::ses_bpf_prominence_db);
        bpf_modulated = lb.value >= c.line_prominence_db && lb.change >= c.line_rise_db &&
                        !explained_by_bearing(blade_pass_hz(a.rpm, a.vanes));
    }

    if (hf_alert)
        f.evidence.push_back(fmt("HF band %s %+.1f dB over baseline (z = %.1f)", band.c_str(), hf.change, hf.z));
    else
        f.evidence.push_back(fmt("HF band %s %+.1f dB against baseline (z = %.1f): within the baseline's range", band.c_str(),
                                 hf.change, hf.z));
    if (impulsive_kurt)
        f.evidence.push_back(fmt("HF band kurtosis %.1f vs baseline %.1f (z = %.1f): impulsive", kurt.value,
                                 kurt.baseline_median, kurt.z));
    if (impulsive_rate)
        f.evidence.push_back(fmt("HF impulse rate %.0f /s vs baseline %.0f /s", rate.value, rate.baseline_median));
    if (modulated) f.evidence.push_back(modulation_text);
    if (impulsive && a.kurtogram_band.bandwidth_hz > 0.0) {
        const Comparison& k = rec(RI::kurtogram_max);
        f.evidence.push_back(fmt("most impulsive band (fast kurtogram) %s-%s kHz, kurtosis %.1f vs baseline %.1f",
                                 khz(a.kurtogram_band.low_hz()).c_str(), khz(a.kurtogram_band.high_hz()).c_str(), k.value,
                                 k.baseline_median));
    }

    const bool mains = a.mains_hz > 0.0;
    if (mains)
        f.other_findings.push_back(fmt("mains hum at %.0f Hz with %d harmonic line(s): electrical pickup (check cable shield "
                                       "and grounding), not cavitation",
                                       a.mains_hz, a.mains_lines - 1));
    if (f.bearing_like)
        f.other_findings.push_back(fmt("periodic impacts at %.2fx shaft speed (%.1f Hz, %.1f dB over the envelope floor) %s: "
                                       "bearing-like (non-integer order), not cavitation; check the bearings",
                                       b_order, b_hz, b_prom, b_family.c_str()));
    if (lf.change >= c.lf_alert_db && lf.z >= c.z_alert && !hf_alert && !mains)
        f.other_findings.push_back(fmt("LF band %.0f-%.0f Hz %+.1f dB with no HF rise: flow turbulence or recirculation, "
                                       "not cavitation; check the operating point",
                                       a.setup.lf.low_hz, a.setup.lf.high_hz, lf.change));

    // --- The verdict ---
    const bool bearing_blocks = f.bearing_like && !bpf_modulated;
    const int support = (modulated ? 1 : 0) + (impulsive ? 1 : 0) + (lf.change >= 1.5 ? 1 : 0);
    if (bearing_blocks) {
        f.verdict = Verdict::normal;
        f.confidence = 0.75;
        if (hf_alert) f.evidence.push_back("HF rise explained by the bearing-like impacts (see other findings)");
    } else if (hf_strong && support >= 1) {
        f.verdict = Verdict::developed;
        f.confidence = std::min(0.97, 0.6 + 0.1 * support + std::min(0.15, (hf.change - c.hf_developed_db) / 40.0));
    } else if (hf_strong) {
        // Strong HF rise with no cavitation signature at all: cavitation is the
        // likeliest cause, but say how unsure that is.
        f.verdict = Verdict::developed;
        f.confidence = 0.5;
        f.warnings.push_back("HF rise without impulsiveness or integer-order modulation: confirm with the operating point");
    } else if (hf_alert && (impulsive || modulated)) {
        f.verdict = Verdict::incipient;
        f.confidence = std::min(0.95, 0.6 + 0.1 * support + std::min(0.1, (hf.change - c.hf_alert_db) / 30.0));
    } else if (impulsive && modulated) {
        f.verdict = Verdict::incipient;
        f.confidence = 0.6;
        f.evidence.push_back("sparse collapses locked to blade passage before the HF level has risen");
    } else if (hf_alert) {
        f.verdict = Verdict::incipient;
        f.confidence = 0.45;
        f.warnings.push_back("HF rise without impulsiveness or integer-order modulation: a changed mount or a new noise source "
                             "can do this too; confirm with the operating point");
    } else {
        f.verdict = Verdict::normal;
        // Closer to the alert level -> less sure.
        const double margin = std::clamp((c.hf_alert_db - hf.change) / c.hf_alert_db, 0.0, 1.0);
        f.confidence = 0.6 + 0.3 * margin;
        if (impulsive || modulated) f.confidence -= 0.1;
    }
    f.confidence = std::clamp(f.confidence * confidence_scale, 0.05, 0.99);
    // A yardstick with a known defect cannot give a sure reading (our choice of cap).
    f.baseline_warnings = b.warnings;
    if (!b.warnings.empty()) {
        f.warnings.push_back(fmt("the baseline carries %zu warning(s) of its own (see baseline warnings): every "
                                 "reading against it is less sure",
                                 b.warnings.size()));
        f.confidence = std::min(f.confidence, kBaselineWarningConfidenceCap);
    }
    return f;
}

}  // namespace cavitas::models
