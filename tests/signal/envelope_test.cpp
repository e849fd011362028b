// Analytic-truth tests of EnvelopeAnalyzer and measure_line (signal/envelope.hpp).
//
// Set-up used throughout: fs = 8192 Hz and n = 8192 samples, so the bin width
// is exactly 1 Hz and every frequency below is an exact bin; band 800-1200 Hz.
// For x = (1 + m cos 2 pi fm t) cos 2 pi fc t, all three components
// (fc, fc +- fm) lie in the band, so the analytic band signal is
// z = (1 + m cos 2 pi fm t) e^{j 2 pi fc t} and the squared envelope is
// |z|^2 = 1 + m^2/2 + 2m cos(2 pi fm t) + (m^2/2) cos(4 pi fm t)
// (computed from the definition).
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <numbers>
#include <span>
#include <stdexcept>
#include <vector>

#include "signal/envelope.hpp"

using cavitas::dsp::EnvelopeAnalyzer;
using cavitas::dsp::EnvelopeConfig;
using cavitas::dsp::measure_line;
using Catch::Matchers::WithinAbs;
using Catch::Matchers::WithinRel;

namespace {

constexpr double kTwoPi = 2.0 * std::numbers::pi;
constexpr double kFs = 8192.0;
constexpr std::size_t kN = 8192;

std::vector<float> am_signal(double m, double fc, double fm) {
    std::vector<float> x(kN);
    for (std::size_t i = 0; i < kN; ++i) {
        const double t = static_cast<double>(i) / kFs;
        x[i] = static_cast<float>((1.0 + m * std::cos(kTwoPi * fm * t)) * std::cos(kTwoPi * fc * t));
    }
    return x;
}

double tone(double amplitude, double f, double phase, std::size_t i) {
    return amplitude * std::sin(kTwoPi * f * static_cast<double>(i) / kFs + phase);
}

std::vector<float> tone_signal(double amplitude, double f, double phase) {
    std::vector<float> x(kN);
    for (std::size_t i = 0; i < kN; ++i) x[i] = static_cast<float>(tone(amplitude, f, phase, i));
    return x;
}

double rms(std::span<const double> v) {
    double s = 0.0;
    for (double x : v) s += x * x;
    return std::sqrt(s / static_cast<double>(v.size()));
}

EnvelopeAnalyzer make_analyzer() { return EnvelopeAnalyzer(EnvelopeConfig{800.0, 1200.0}, kFs, kN); }

// Tolerance for the SES checks below: 1e-6 (absolute, on lines of order 1).
// The periodic Hann window's DFT is nonzero only at bins 0, +-1, so at exact
// bins with lines >= 2 bins apart each line keeps its exact height after the
// 2 / sum(w) scaling (computed from the definition). What remains is the
// float rounding of the input, ~6e-8 relative, squared into the envelope.
constexpr double kSesTol = 1e-6;

}  // namespace

TEST_CASE("An AM tone gives squared-envelope-spectrum lines 2m at fm and m^2/2 at 2fm", "[signal]") {
    // Computed from the definition (see the top of this file): m = 0.5 gives 1.0 and 0.125.
    const double m = 0.5, fc = 1000.0, fm = 10.0;
    auto env = make_analyzer();
    REQUIRE(env.bin_hz() == 1.0);
    const auto x = am_signal(m, fc, fm);
    env.process(x);
    const auto ses = env.envelope_spectrum();
    REQUIRE(ses.size() == kN / 2 + 1);
    CHECK_THAT(ses[10], WithinAbs(2.0 * m, kSesTol));
    CHECK_THAT(ses[20], WithinAbs(m * m / 2.0, kSesTol));
    // Every other bin, apart from the Hann skirts at +-1 bin of each line, is empty.
    double elsewhere = 0.0;
    for (std::size_t k = 0; k < ses.size(); ++k)
        if (!(k >= 9 && k <= 11) && !(k >= 19 && k <= 21)) elsewhere = std::max(elsewhere, ses[k]);
    CHECK_THAT(elsewhere, WithinAbs(0.0, kSesTol));
}

TEST_CASE("The mean squared envelope of an AM tone is 1 + m^2 / 2", "[signal]") {
    // Computed from the definition: the mean of (1 + m cos)^2 over whole periods.
    // Tolerance 1e-6 relative: float rounding of the input.
    auto env = make_analyzer();
    const auto x = am_signal(0.5, 1000.0, 10.0);
    env.process(x);
    CHECK_THAT(env.mean_squared_envelope(), WithinRel(1.125, 1e-6));
}

TEST_CASE("Half the SES line at fm recovers the AM modulation depth", "[signal]") {
    // Computed from the definition: line(fm) = 2m, so m = line(fm) / 2 for any m <= 1.
    auto env = make_analyzer();
    for (double m : {0.05, 0.3, 0.8, 1.0}) {
        INFO("m = " << m);
        const auto x = am_signal(m, 1020.0, 37.0);
        env.process(x);
        CHECK_THAT(env.envelope_spectrum()[37] / 2.0, WithinAbs(m, kSesTol));
    }
}

TEST_CASE("A tone outside the analysis band is removed from the band signal", "[signal]") {
    // An exact-bin tone has a single spectral line, and the ideal band-pass zeroes
    // every bin outside 800-1200 Hz (computed from the definition). Only the
    // float rounding of the input (~3e-8 rms, white) leaks in through the band's
    // 401 of 4097 bins: ~1e-8. Tolerance 1e-6, i.e. -120 dB re the unit tone.
    auto env = make_analyzer();
    for (double f : {500.0, 1500.0, 3000.0}) {
        INFO("tone at " << f << " Hz");
        const auto x = tone_signal(1.0, f, 0.3);
        env.process(x);
        CHECK_THAT(rms(env.band_signal()), WithinAbs(0.0, 1e-6));
        CHECK_THAT(env.mean_squared_envelope(), WithinAbs(0.0, 1e-12));
    }
}

TEST_CASE("A tone inside the analysis band passes through the band signal unchanged", "[signal]") {
    // Computed from the definition: the ideal band-pass keeps the tone's bin
    // with gain 1 and phase 0. Tolerance 1e-6 absolute on amplitude 0.6: the
    // reference is the tone in double, the input its float rounding (~4e-8).
    auto env = make_analyzer();
    const double amplitude = 0.6, f = 1000.0, phase = 0.7;
    const auto x = tone_signal(amplitude, f, phase);
    env.process(x);
    const auto band = env.band_signal();
    REQUIRE(band.size() == kN);
    double worst = 0.0;
    for (std::size_t i = 0; i < kN; ++i) worst = std::max(worst, std::abs(band[i] - tone(amplitude, f, phase, i)));
    CHECK_THAT(worst, WithinAbs(0.0, 1e-6));
}

TEST_CASE("An envelope band whose high edge is not above the low edge or beyond Nyquist is rejected naming it",
          "[signal]") {
    CHECK_THROWS_AS(EnvelopeAnalyzer(EnvelopeConfig{1000.0, 1000.0}, kFs, kN), std::invalid_argument);
    CHECK_THROWS_WITH(EnvelopeAnalyzer(EnvelopeConfig{1000.0, 1000.0}, kFs, kN), Catch::Contains("band_high_hz"));
    CHECK_THROWS_WITH(EnvelopeAnalyzer(EnvelopeConfig{1200.0, 800.0}, kFs, kN), Catch::Contains("band_high_hz"));
    CHECK_THROWS_AS(EnvelopeAnalyzer(EnvelopeConfig{800.0, 4097.0}, kFs, kN), std::invalid_argument);
    CHECK_THROWS_WITH(EnvelopeAnalyzer(EnvelopeConfig{800.0, 4097.0}, kFs, kN), Catch::Contains("band_high_hz"));
    CHECK_THROWS_WITH(EnvelopeAnalyzer(EnvelopeConfig{800.0, 4097.0}, kFs, kN), Catch::Contains("Nyquist"));
    CHECK_THROWS_WITH(EnvelopeAnalyzer(EnvelopeConfig{-1.0, 1200.0}, kFs, kN), Catch::Contains("band_low_hz"));
    CHECK_NOTHROW(EnvelopeAnalyzer(EnvelopeConfig{800.0, 4096.0}, kFs, kN));  // Nyquist itself is allowed
}

TEST_CASE("A line on a flat floor is found at its bin with prominence 20 log10(height / floor)", "[signal]") {
    // Computed from the definition: the floor is the median of a flat spectrum,
    // i.e. its level; the line is the maximum. Tolerance 1e-9 dB: rounding only.
    const double bin_hz = 0.5, floor = 0.02, height = 3.0;
    std::vector<double> spectrum(2001, floor);
    spectrum[400] = height;  // 200 Hz
    const auto m = measure_line(spectrum, bin_hz, 200.0, 2.0, 30.0);
    CHECK(m.target_hz == 200.0);
    CHECK(m.found_hz == 200.0);
    CHECK(m.amplitude == height);
    CHECK_THAT(m.floor, WithinRel(floor, 1e-12));
    CHECK_THAT(m.prominence_db, WithinAbs(20.0 * std::log10(height / floor), 1e-9));
}

TEST_CASE("A line off target but within the search window is found where it is", "[signal]") {
    // The maximum within +-search_hz of the target is taken (definition in
    // signal/envelope.hpp); a larger line outside the window must not be.
    const double bin_hz = 1.0, floor = 0.01;
    std::vector<double> spectrum(1000, floor);
    spectrum[104] = 1.0;  // 4 Hz above the 100 Hz target, inside +-5 Hz
    spectrum[130] = 5.0;  // outside the search window
    const auto m = measure_line(spectrum, bin_hz, 100.0, 5.0, 20.0);
    CHECK(m.found_hz == 104.0);
    CHECK(m.amplitude == 1.0);
    // The off-target line lies inside the guard zone, so the floor stays flat
    // (tolerance as in the previous test).
    CHECK_THAT(m.prominence_db, WithinAbs(40.0, 1e-9));
}

TEST_CASE("measure_line does not take the flank of a stronger line outside its window for a line", "[signal]") {
    // Flat floor 0.01 with a smeared line centred at bin 104 (values fall off to
    // both sides); searching bin 100 +-2 finds only the rising flank at 102.
    std::vector<double> spec(400, 0.01);
    const double shape[] = {0.05, 0.2, 0.6, 1.0, 0.6, 0.2, 0.05};
    for (int i = 0; i < 7; ++i) spec[static_cast<std::size_t>(101 + i)] = shape[i];
    const auto m = cavitas::dsp::measure_line(spec, 1.0, 100.0, 2.0, 30.0);
    CHECK(m.found_hz == 102.0);  // computed from the definition: max of bins 98..102
    CHECK(m.prominence_db == 0.0);
    const auto on = cavitas::dsp::measure_line(spec, 1.0, 104.0, 2.0, 30.0);
    CHECK(on.found_hz == 104.0);
    CHECK_THAT(on.prominence_db, Catch::Matchers::WithinAbs(40.0, 1e-9));  // 20 log10(1 / 0.01)
}

TEST_CASE("Decimated demodulation gives the same envelope and spectrum at a fraction of the rate", "[signal]") {
    // Band 800-1200 Hz = 401 bins: |z|^2 needs at least 802 samples; the fast size is 900 (2^2 x 3^2 x 5^2:
    // 810 = 2 x 3^4 x 5 and 864 = 2^5 x 3^3 have too many factors of 3).
    EnvelopeAnalyzer full(EnvelopeConfig{800.0, 1200.0}, kFs, kN);
    EnvelopeAnalyzer dec(EnvelopeConfig{800.0, 1200.0, true}, kFs, kN);
    CHECK(dec.envelope_samples() == 900);
    CHECK(cavitas::dsp::fast_fft_size(802) == 900);
    // At 96 kHz the HF band (5-38.4 kHz) holds 33401 bins: 66802 -> 72000 = 2^6 x 3^2 x 5^3, not 67500 = 2^2 x 3^3 x 5^4.
    CHECK(cavitas::dsp::fast_fft_size(66802) == 72000);
    CHECK(cavitas::dsp::fast_fft_size(4000) == 4000);  // 2^5 x 5^3
    CHECK(cavitas::dsp::fast_fft_size(4097) == 4608);  // 2^9 x 3^2; 4320 = 2^5 x 3^3 x 5 has 3^3
    CHECK(full.envelope_samples() == kN);
    CHECK_THAT(dec.envelope_rate_hz(), WithinRel(kFs * 900.0 / 8192.0, 1e-12));
    CHECK(dec.band_signal().empty());
    const auto x = am_signal(0.4, 1000.0, 37.0);
    full.process(x);
    dec.process(x);
    // The same mean power (1 + m^2/2 = 1.08) and the same SES lines, 2m at fm and m^2/2 at 2 fm.
    CHECK_THAT(dec.mean_squared_envelope(), WithinRel(full.mean_squared_envelope(), 1e-6));
    CHECK_THAT(dec.envelope_spectrum()[37], WithinAbs(0.8, 1e-3));
    CHECK_THAT(dec.envelope_spectrum()[74], WithinAbs(0.08, 1e-3));
    for (std::size_t k = 1; k < dec.envelope_spectrum().size(); ++k)
        CHECK_THAT(dec.envelope_spectrum()[k], WithinAbs(full.envelope_spectrum()[k], 1e-4));
    // The squared envelope at the decimated instants is the full-rate one there (t = i n / m
    // falls between full-rate samples; the envelope (1 + 0.4 cos)^2 is compared with its formula).
    for (std::size_t i = 0; i < dec.envelope_samples(); i += 37) {
        const double t = static_cast<double>(i) * 8192.0 / 900.0 / kFs;
        const double e = 1.0 + 0.4 * std::cos(kTwoPi * 37.0 * t);
        CHECK_THAT(dec.squared_envelope()[i], WithinAbs(e * e, 1e-4));
    }
}

TEST_CASE("Band kurtosis and crest from the envelope match the real band signal's", "[signal]") {
    // A sine: kurtosis 1.5, crest sqrt(2), computed from the definition; both ways.
    EnvelopeAnalyzer full(EnvelopeConfig{800.0, 1200.0}, kFs, kN);
    EnvelopeAnalyzer dec(EnvelopeConfig{800.0, 1200.0, true}, kFs, kN);
    const auto s = tone_signal(1.0, 1000.0, 0.3);
    full.process(s);
    dec.process(s);
    CHECK_THAT(full.band_kurtosis(), WithinAbs(1.5, 1e-6));
    CHECK_THAT(dec.band_kurtosis(), WithinAbs(1.5, 1e-6));
    CHECK_THAT(dec.band_crest(), WithinAbs(std::sqrt(2.0), 1e-6));
    // Gaussian noise: 3 for the real band signal (Gaussian) and, from the Rayleigh envelope,
    // 1.5 E|z|^4 / (E|z|^2)^2 = 1.5 x 2 = 3; over 8192 samples within 0.25 of each other.
    std::vector<float> g(kN);
    std::uint64_t st = 12345;
    for (auto& v : g) {  // sum of 12 uniforms: near-Gaussian, deterministic
        double acc = 0.0;
        for (int k = 0; k < 12; ++k) {
            st = st * 6364136223846793005ULL + 1442695040888963407ULL;
            acc += static_cast<double>(st >> 11) / 9007199254740992.0;
        }
        v = static_cast<float>(acc - 6.0);
    }
    full.process(g);
    dec.process(g);
    CHECK_THAT(full.band_kurtosis(), WithinAbs(3.0, 0.25));
    CHECK_THAT(dec.band_kurtosis(), WithinAbs(3.0, 0.25));
    CHECK_THAT(dec.band_kurtosis(), WithinAbs(full.band_kurtosis(), 0.25));
    // On a common grid the envelope's peak would bound the real signal's (|Re z| <= |z|);
    // the decimated grid (900 of 8192 points) can step over the top of the highest
    // burst, so the two crest factors agree only closely (0.05 % here; bound 2 %).
    CHECK_THAT(dec.band_crest(), WithinRel(full.band_crest(), 0.02));
}

TEST_CASE("The envelope power added per segment is the square of the envelope spectrum", "[signal]") {
    // Both precisions, before and after the amplitudes were asked for.
    for (const bool single : {false, true}) {
        EnvelopeAnalyzer env(EnvelopeConfig{800.0, 1200.0, true, single}, kFs, kN);
        std::vector<double> before(env.envelope_bins(), 0.0);
        env.add_envelope_power(before);
        for (double v : before) CHECK(v == 0.0);  // nothing processed yet
        env.process(am_signal(0.4, 1000.0, 37.0));
        std::vector<double> lazy(env.envelope_bins(), 1.0), formed(env.envelope_bins(), 1.0);
        env.add_envelope_power(lazy);  // from the transform
        const auto ses = env.envelope_spectrum();
        REQUIRE(ses.size() == env.envelope_bins());
        env.add_envelope_power(formed);  // from the amplitudes
        CHECK(lazy[0] == 1.0);
        for (std::size_t k = 1; k < ses.size(); ++k) {
            CHECK_THAT(lazy[k], WithinRel(1.0 + ses[k] * ses[k], 1e-12));
            CHECK_THAT(formed[k], WithinRel(1.0 + ses[k] * ses[k], 1e-12));
        }
        CHECK_THAT(lazy[37] - 1.0, WithinAbs(0.64, 2e-3));  // line 2m = 0.8 at fm, squared
    }
}
