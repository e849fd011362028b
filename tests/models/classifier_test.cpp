// The decision rules on hand-made indicator sets: each case sets only what the
// rule under test reads, the rest stays at the baseline's values.
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>

#include "models/classifier.hpp"

using namespace cavitas::models;
using SI = SegmentIndicator;
using RI = RecordingIndicator;

namespace {

// Healthy values of each segment indicator, with a small spread.
double healthy(SI i) {
    switch (i) {
        case SI::hf_band_level: return -40.0;
        case SI::lf_band_level: return -20.0;
        case SI::hf_kurtosis: return 3.0;
        case SI::overall_kurtosis: return 3.0;
        case SI::impulse_rate: return 0.0;
        default: return 1.0;
    }
}

RecordingAnalysis make(std::size_t segments = 10) {
    RecordingAnalysis a;
    a.setup.fs_hz = 25600;
    a.setup.segment_s = 1.0;
    a.setup.hf = {6400, 10240};
    a.setup.lf = {10, 6400};
    a.rpm = 1485;
    a.vanes = 7;
    a.quality.samples = 25600 * segments;
    a.quality.sum_sq = 0.01 * static_cast<double>(a.quality.samples);  // a live signal, 0.1 rms
    a.full_scale = 50.0;
    for (std::size_t k = 0; k < segments; ++k)
        for (std::size_t i = 0; i < kSegmentIndicatorCount; ++i) {
            const double jitter = 0.2 * (static_cast<double>(k % 5) - 2.0) / 2.0;  // +-0.2 spread
            a.series.values[i].push_back(healthy(static_cast<SI>(i)) + jitter);
        }
    a.recording[static_cast<std::size_t>(RI::envelope_bpf_prominence)] = 1.0;
    a.recording[static_cast<std::size_t>(RI::envelope_1x_prominence)] = 1.0;
    return a;
}

Baseline base() {
    Baseline b = learn_baseline({make(), make(), make()});
    b.sources.resize(3);
    b.unit = "g";
    return b;
}

void shift(RecordingAnalysis& a, SI i, double by) {
    for (double& v : a.series[i]) v += by;
}
void set(RecordingAnalysis& a, RI i, double v) { a.recording[static_cast<std::size_t>(i)] = v; }

bool mentions(const std::vector<std::string>& lines, const std::string& word) {
    return std::any_of(lines.begin(), lines.end(), [&](const std::string& s) { return s.find(word) != std::string::npos; });
}

// An other finding of the given kind whose words mention `word`.
bool mentions(const std::vector<OtherFinding>& found, Concern kind, const std::string& word) {
    return std::any_of(found.begin(), found.end(), [&](const OtherFinding& o) {
        return o.concern == kind && o.text.find(word) != std::string::npos;
    });
}

}  // namespace

TEST_CASE("A recording like its baseline is normal", "[models]") {
    const Finding f = classify(make(), base(), "g");
    CHECK(f.verdict == Verdict::normal);
    CHECK(f.confidence > 0.7);
    CHECK(f.other_findings.empty());
}

TEST_CASE("A large HF rise modulated at blade pass is developed cavitation", "[models]") {
    auto a = make();
    shift(a, SI::hf_band_level, 14.0);
    set(a, RI::envelope_bpf_prominence, 12.0);
    const Finding f = classify(a, base(), "g");
    CHECK(f.verdict == Verdict::developed);
    CHECK(mentions(f.evidence, "+14.0 dB re baseline"));
    CHECK(mentions(f.evidence, "BPF 173.2 Hz"));
}

TEST_CASE("Dense developed cavitation with Gaussian kurtosis is still developed", "[models]") {
    // Kurtosis stays at the baseline's ~3: a kurtosis-only rule would miss this.
    auto a = make();
    shift(a, SI::hf_band_level, 18.0);
    shift(a, SI::lf_band_level, 2.5);
    set(a, RI::envelope_bpf_prominence, 9.0);
    CHECK(classify(a, base(), "g").verdict == Verdict::developed);
}

TEST_CASE("A moderate HF rise with impulsive kurtosis is incipient cavitation", "[models]") {
    auto a = make();
    shift(a, SI::hf_band_level, 5.0);
    shift(a, SI::hf_kurtosis, 4.0);
    const Finding f = classify(a, base(), "g");
    CHECK(f.verdict == Verdict::incipient);
    CHECK(mentions(f.evidence, "impulsive"));
}

TEST_CASE("A bearing-like envelope family is not cavitation even with an HF rise", "[models]") {
    auto a = make();
    shift(a, SI::hf_band_level, 12.0);
    shift(a, SI::hf_kurtosis, 6.0);
    const double fr = 1485.0 / 60.0;
    a.envelope_peaks = {{3.58 * fr, 3.58, 18.0}, {7.16 * fr, 7.16, 11.0}};
    const Finding f = classify(a, base(), "g");
    CHECK(f.verdict == Verdict::normal);
    CHECK(f.bearing_like);
    CHECK(mentions(f.other_findings, Concern::bearing_impacts, "bearing-like"));
}

TEST_CASE("Envelope lines at integer orders are not read as a bearing", "[models]") {
    auto a = make();
    const double fr = 1485.0 / 60.0;
    a.envelope_peaks = {{7.0 * fr, 7.0, 18.0}, {14.0 * fr, 14.0, 11.0}};
    CHECK_FALSE(classify(a, base(), "g").bearing_like);
}

TEST_CASE("A rise confined to the low band is flow turbulence, not cavitation", "[models]") {
    auto a = make();
    shift(a, SI::lf_band_level, 8.0);
    const Finding f = classify(a, base(), "g");
    CHECK(f.verdict == Verdict::normal);
    CHECK(mentions(f.other_findings, Concern::flow_unsteadiness, "turbulence"));
}

TEST_CASE("Overloaded, NaN-bearing, unit- or rate-mismatched recordings are indeterminate with a reason", "[models]") {
    auto a = make();
    a.quality.at_full_scale = a.quality.samples / 10;
    Finding f = classify(a, base(), "g");
    CHECK(f.verdict == Verdict::indeterminate);
    CHECK(mentions(f.reasons, "reduce the input range"));

    auto b = make();
    b.quality.non_finite = 3;
    CHECK(classify(b, base(), "g").verdict == Verdict::indeterminate);

    f = classify(make(), base(), "m/s2");
    CHECK(f.verdict == Verdict::indeterminate);
    CHECK(mentions(f.reasons, "calibrated in m/s2"));

    auto c = make();
    c.setup.fs_hz = 51200;
    f = classify(c, base(), "g");
    CHECK(f.verdict == Verdict::indeterminate);
    CHECK(mentions(f.reasons, "sample rate"));
}

TEST_CASE("A small speed change is reported and does not make cavitation", "[models]") {
    auto a = make();
    a.rpm = 1485.0 * 1.03;
    const Finding f = classify(a, base(), "g");
    CHECK(f.verdict == Verdict::normal);
    CHECK(mentions(f.other_findings, Concern::speed_change, "speed change"));
}

TEST_CASE("Mains hum is reported and does not make cavitation", "[models]") {
    auto a = make();
    a.mains_hz = 50;
    a.mains_lines = 3;
    shift(a, SI::lf_band_level, 6.0);
    const Finding f = classify(a, base(), "g");
    CHECK(f.verdict == Verdict::normal);
    CHECK(mentions(f.other_findings, Concern::mains_pickup, "mains hum at 50 Hz"));
    CHECK_FALSE(mentions(f.other_findings, Concern::flow_unsteadiness, "turbulence"));
}

TEST_CASE("Indicator keys carry their units", "[models]") {
    const Finding f = classify(make(), base(), "m/s2");
    std::vector<std::string> keys;
    for (const auto& c : f.comparisons) keys.push_back(c.key);
    CHECK(mentions(keys, "hf_band_level_db"));
    CHECK(mentions(keys, "overall_rms_m_s2"));
    CHECK(mentions(keys, "impulse_rate_per_s"));
}

TEST_CASE("Every cavitation caution names lock-out and deference to codes", "[models]") {
    const auto& c = cavitation_cautions();
    CHECK(mentions(c, "lock out"));
    CHECK(mentions(c, "weaken"));
    CHECK(mentions(c, "local codes"));
}

// ---- Attribution: every piece of evidence has one cause, and no finding calls
// the same evidence cavitation and not cavitation (rules: classifier.cpp, step 3).

namespace {
// A spectrum profile of 12 bands at -50 dB re 1 g^2/Hz in every segment, shifted by `by` dB.
void profile(RecordingAnalysis& a, double by) {
    a.spectrum.center_hz.clear();
    for (int k = 0; k < 12; ++k) a.spectrum.center_hz.push_back(100.0 * std::pow(2.0, k / 2.0));
    a.spectrum.segment_db.assign(12 * a.series.segments(), static_cast<float>(-50.0 + by));
}
Baseline base_with_profile() {
    auto m = [] {
        auto a = make();
        profile(a, 0.0);
        return a;
    };
    Baseline b = learn_baseline({m(), m(), m()});
    b.sources.resize(3);
    b.unit = "g";
    return b;
}
}  // namespace

TEST_CASE("Impacts at blade passage beside an LF rise with no HF rise are recirculation, said once", "[models]") {
    // The shut-off case: LF +7.5 dB, sparse impacts, a BPF line; the HF level has not moved.
    auto a = make();
    shift(a, SI::lf_band_level, 7.5);
    shift(a, SI::hf_kurtosis, 3.0);
    set(a, RI::envelope_bpf_prominence, 12.0);
    const Finding f = classify(a, base(), "g");
    CHECK(f.verdict == Verdict::normal);
    CHECK(mentions(f.other_findings, Concern::recirculation, "recirculation"));
    CHECK_FALSE(mentions(f.evidence, "sparse collapses"));
    CHECK(mentions(f.evidence, "explained by recirculation"));
}

TEST_CASE("Every band up alike, tones included, is a gain change: no verdict", "[models]") {
    auto a = make();
    profile(a, 6.0);
    shift(a, SI::hf_band_level, 6.0);
    shift(a, SI::lf_band_level, 6.0);
    const Finding f = classify(a, base_with_profile(), "g");
    CHECK(f.verdict == Verdict::indeterminate);
    CHECK(mentions(f.reasons, "gain"));
    // The same HF rise with the LF band and the spectrum's low bands unmoved is not a gain change.
    auto c = make();
    profile(c, 0.0);
    shift(c, SI::hf_band_level, 6.0);
    shift(c, SI::hf_kurtosis, 3.0);
    CHECK(classify(c, base_with_profile(), "g").verdict == Verdict::incipient);
}

TEST_CASE("The LF rise that lifts a developed grade is printed", "[models]") {
    auto a = make();
    shift(a, SI::hf_band_level, 15.0);
    shift(a, SI::lf_band_level, 2.5);
    const Finding f = classify(a, base(), "g");
    CHECK(f.verdict == Verdict::developed);
    CHECK(mentions(f.evidence, "LF band"));
    CHECK(mentions(f.evidence, "supports the grade"));
}

TEST_CASE("A bearing family explains an HF rise, its impacts and the blade-pass line of its shaft comb", "[models]") {
    // An inner-race family at 5.41x with f_r sidebands; the envelope spectrum carries the comb
    // k x 1x at equal height, BPF (7x) among them: no line stands out, so nothing is cavitation.
    auto a = make();
    shift(a, SI::hf_band_level, 12.0);
    shift(a, SI::hf_kurtosis, 5.0);
    set(a, RI::envelope_bpf_prominence, 10.0);
    const double fr = 1485.0 / 60.0;
    a.envelope_peaks = {{5.41 * fr, 5.41, 18.0}, {4.41 * fr, 4.41, 10.0}, {6.41 * fr, 6.41, 10.0}};
    a.envelope_bin_hz = 0.25;
    a.envelope_spectrum.assign(static_cast<std::size_t>(20 * fr / 0.25), 1.0);
    for (int k = 1; k <= 16; ++k) a.envelope_spectrum[static_cast<std::size_t>(std::lround(k * fr / 0.25))] = 3.0;
    const Finding f = classify(a, base(), "g");
    CHECK(f.verdict == Verdict::normal);
    CHECK(mentions(f.other_findings, Concern::bearing_impacts, "not cavitation"));
    CHECK(mentions(f.evidence, "explained by the bearing"));
    CHECK_FALSE(mentions(f.evidence, "envelope line at BPF"));
}
