#include <catch2/catch.hpp>

#include <cmath>
#include <numbers>
#include <vector>

#include "models/analyzer.hpp"

using namespace cavitas::models;
using Catch::Matchers::WithinAbs;
using Catch::Matchers::WithinRel;

namespace {

std::vector<float> tones_and_noise(double fs, double seconds, std::uint64_t seed) {
    std::vector<float> x(static_cast<std::size_t>(fs * seconds));
    std::uint64_t s = seed;
    for (std::size_t i = 0; i < x.size(); ++i) {
        s = s * 6364136223846793005ULL + 1442695040888963407ULL;
        const double u = static_cast<double>(s >> 11) / 9007199254740992.0 - 0.5;
        const double t = static_cast<double>(i) / fs;
        x[i] = static_cast<float>(0.05 * std::sin(2 * std::numbers::pi * 24.75 * t) +
                                  0.08 * std::sin(2 * std::numbers::pi * 173.25 * t) + 0.1 * u);
    }
    return x;
}

RecordingAnalysis run(std::vector<float> x, const AnalysisSetup& setup, std::size_t block) {
    MachineContext m;
    m.rpm = 1485;
    m.vanes = 7;
    RecordingAnalyzer a(setup, m, 0.0, x.size());
    for (std::size_t i = 0; i < x.size(); i += block)
        a.push(std::span<float>(x.data() + i, std::min(block, x.size() - i)));
    return a.finish();
}

}  // namespace

TEST_CASE("The HF band follows the sample rate and the mount", "[models]") {
    // top = min(0.4 fs, sensor limit); HF = [max(1 kHz, min(5 kHz, top/4)), top] (our rule, DEVELOPERS.md).
    AnalysisSetup s = choose_setup(6400, 0);
    CHECK(s.hf.high_hz == 2560.0);
    CHECK(s.hf.low_hz == 1000.0);
    CHECK(s.hf.high_hz < 3200.0);  // under Nyquist at 6.4 kHz
    s = choose_setup(96000, 0);
    CHECK(s.hf.high_hz == 38400.0);
    CHECK(s.hf.low_hz == 5000.0);
    s = choose_setup(96000, *mount_limit_hz("magnet"));
    CHECK(s.hf.high_hz == 5000.0);
    CHECK(s.hf.low_hz == 1250.0);
    CHECK(s.lf.high_hz == 1000.0);
    CHECK_THROWS_WITH(choose_setup(2000, 0), Catch::Contains("HF band"));
    CHECK_FALSE(mount_limit_hz("duct tape").has_value());
}

TEST_CASE("Indicators do not depend on the block size the reader uses", "[models]") {
    const auto setup = choose_setup(25600, 0);
    const auto x = tones_and_noise(25600, 4.0, 7);
    const RecordingAnalysis a = run(x, setup, 32768), b = run(x, setup, 1000), c = run(x, setup, 1);
    REQUIRE(a.series.segments() == 4);
    for (std::size_t i = 0; i < kSegmentIndicatorCount; ++i)
        for (std::size_t k = 0; k < 4; ++k) {
            CHECK(a.series.values[i][k] == b.series.values[i][k]);
            CHECK(a.series.values[i][k] == c.series.values[i][k]);
        }
    for (std::size_t i = 0; i < kRecordingIndicatorCount; ++i) CHECK(a.recording[i] == b.recording[i]);
}

TEST_CASE("A record gives one value per whole segment and drops the tail", "[models]") {
    const auto setup = choose_setup(25600, 0);
    const RecordingAnalysis a = run(tones_and_noise(25600, 3.6, 9), setup, 4096);
    CHECK(a.series.segments() == 3);
    CHECK_THAT(a.duration_s, WithinAbs(3.6, 1e-9));
}

TEST_CASE("A record shorter than one segment is refused", "[models]") {
    const auto setup = choose_setup(25600, 0);
    CHECK_THROWS_WITH(run(tones_and_noise(25600, 0.5, 9), setup, 4096), Catch::Contains("shorter than one"));
}

TEST_CASE("Band levels of white Gaussian noise match its variance", "[models]") {
    // White noise of variance s^2: band power = s^2 (hi - lo) / (fs / 2) (definition of a flat one-sided PSD).
    const double fs = 25600;
    std::vector<float> x(static_cast<std::size_t>(fs * 8));
    std::uint64_t s = 99;
    double var = 0;
    auto uniform = [&s] {
        s = s * 6364136223846793005ULL + 1442695040888963407ULL;
        return (static_cast<double>(s >> 11) + 0.5) / 9007199254740992.0;
    };
    for (auto& v : x) {
        // Box-Muller: Gaussian, so that the band-passed part is Gaussian too.
        v = static_cast<float>(0.3 * std::sqrt(-2.0 * std::log(uniform())) * std::cos(2.0 * std::numbers::pi * uniform()));
        var += static_cast<double>(v) * v;
    }
    var /= static_cast<double>(x.size());
    const auto setup = choose_setup(fs, 0);
    const auto a = run(x, setup, 8192);
    const double expected_db = 10 * std::log10(var * (setup.hf.high_hz - setup.hf.low_hz) / (fs / 2));
    double mean_db = 0;
    for (double v : a.series[SegmentIndicator::hf_band_level]) mean_db += v / static_cast<double>(a.series.segments());
    // 0.2 dB: about 8 Welch frames per 1 s segment, 8 segments, and band-edge bins.
    CHECK_THAT(mean_db, WithinAbs(expected_db, 0.2));
    // Gaussian noise: kurtosis 3 raw and band-passed; 0.15 is about 4 standard errors
    // (sqrt(24 / N) with N the 25 600 samples, fewer independent ones after the band-pass).
    CHECK_THAT(a.series[SegmentIndicator::overall_kurtosis][0], WithinAbs(3.0, 0.15));
    CHECK_THAT(a.series[SegmentIndicator::hf_kurtosis][0], WithinAbs(3.0, 0.15));
}

TEST_CASE("Non-finite samples are counted and zeroed before any block sees them", "[models]") {
    auto x = tones_and_noise(25600, 2.0, 3);
    x[100] = std::numeric_limits<float>::quiet_NaN();
    x[2000] = std::numeric_limits<float>::infinity();
    const auto a = run(x, choose_setup(25600, 0), 4096);
    CHECK(a.quality.non_finite == 2);
    for (double v : a.series[SegmentIndicator::overall_rms]) CHECK(std::isfinite(v));
}

TEST_CASE("The waveform excerpt comes from the segment with a burst of impacts, around the largest", "[models]") {
    // Six 1 s segments of tones and noise; segment 3 alone holds a burst of
    // five decaying 9 kHz ring-downs (impacts exciting a resonance), the largest at
    // 3.4321 s. The excerpt must come from segment 3 and hold that impact.
    const double fs = 25600.0;
    const auto setup = choose_setup(fs, 0);
    auto x = tones_and_noise(fs, 6.0, 11);
    const double impacts_s[] = {3.30, 3.35, 3.4321, 3.45, 3.50};
    const double heights[] = {0.6, 0.7, 1.5, 0.8, 0.6};
    for (std::size_t k = 0; k < 5; ++k) {
        const auto at = static_cast<std::size_t>(std::lround(impacts_s[k] * fs));
        for (std::size_t i = 0; i < 200; ++i) {
            const double t = static_cast<double>(i) / fs;
            x[at + i] += static_cast<float>(heights[k] * std::exp(-t / 0.0008) * std::sin(2 * std::numbers::pi * 9000.0 * t));
        }
    }
    const RecordingAnalysis r = run(x, setup, 4096);
    const WaveformExcerpt& e = r.excerpt;
    REQUIRE_FALSE(e.empty());
    CHECK(e.segment == 3);
    CHECK(e.start_s >= 3.0);
    CHECK(e.start_s + static_cast<double>(e.raw.size()) / fs <= 4.0 + 1e-9);
    // Length: 3 revolutions at 1485 rpm (0.1212 s) is longer than 50 ms; capped at 4096 samples.
    CHECK(e.raw.size() == excerpt_samples(fs, 1485, setup.segment_size()));
    CHECK(e.raw.size() == 3103);
    CHECK(excerpt_samples(96000, 1485, 96000) == kExcerptMaxSamples);
    CHECK(excerpt_samples(25600, 0, 25600) == 1280);  // 50 ms
    CHECK(e.hf.size() == e.raw.size());
    CHECK(e.fs_hz == fs);
    CHECK(e.band.low_hz == setup.hf.low_hz);
    CHECK(e.band.high_hz == setup.hf.high_hz);
    CHECK_THAT(e.segment_kurtosis, WithinAbs(r.series[SegmentIndicator::hf_kurtosis][3], 1e-12));
    for (std::size_t s = 0; s < r.series.segments(); ++s) CHECK(r.series[SegmentIndicator::hf_kurtosis][s] <= e.segment_kurtosis);
    // The largest impact lies inside the excerpt, and the band-passed excerpt peaks
    // within a ring-down (200 samples) after it.
    const double big_s = impacts_s[2];
    CHECK(big_s >= e.start_s);
    CHECK(big_s < e.start_s + static_cast<double>(e.raw.size()) / fs);
    std::size_t at = 0;
    for (std::size_t i = 0; i < e.hf.size(); ++i)
        if (std::abs(e.hf[i]) > std::abs(e.hf[at])) at = i;
    const double peak_s = e.start_s + static_cast<double>(at) / fs;
    CHECK(peak_s >= big_s - 1e-3);
    CHECK(peak_s <= big_s + 200.0 / fs);
    // The raw excerpt is the recording's samples, unchanged.
    const auto first = static_cast<std::size_t>(std::lround(e.start_s * fs));
    for (std::size_t i = 0; i < e.raw.size(); i += 97) CHECK(e.raw[i] == x[first + i]);
    // Streaming in other blocks gives the same excerpt.
    const RecordingAnalysis b = run(x, setup, 1000);
    CHECK(b.excerpt.raw == e.raw);
    CHECK(b.excerpt.hf == e.hf);
}
