#include <catch2/catch.hpp>

#include <cmath>
#include <numbers>
#include <vector>

#include "models/machine.hpp"
#include "signal/spectrum.hpp"

using namespace cavitas::models;
using Catch::Matchers::WithinAbs;
using Catch::Matchers::WithinRel;

TEST_CASE("Blade-pass frequency is vanes times shaft rate", "[models]") {
    // Definition: BPF = Z x rpm / 60 (common practice, no source).
    CHECK_THAT(blade_pass_hz(1485.0, 7), WithinRel(173.25, 1e-12));
    CHECK_THAT(shaft_hz(1800.0), WithinRel(30.0, 1e-12));
}

TEST_CASE("Bearing defect orders of the CWRU drive-end bearing match the published multiples", "[models]") {
    // Geometry of the 6205-2RS JEM: 9 balls, d = 0.3126 in, D = 1.537 in, phi = 0 (from memory).
    // Published defect multiples of shaft speed: BPFI 5.4152, BPFO 3.5848, FTF 0.39828,
    // rolling element 4.7135 (= 2 x BSF) - CWRU Bearing Data Center table, as quoted in
    // ../shared/data/cwru-bearing/SOURCE.md.
    const double in = 0.0254;
    const BearingOrders o = bearing_orders({9, 0.3126 * in, 1.537 * in, 0.0});
    CHECK_THAT(o.bpfi, WithinRel(5.4152, 1e-4));
    CHECK_THAT(o.bpfo, WithinRel(3.5848, 1e-4));
    CHECK_THAT(o.ftf, WithinRel(0.39828, 1e-4));
    CHECK_THAT(2.0 * o.bsf, WithinRel(4.7135, 1e-4));
}

TEST_CASE("Bearing geometry that cannot exist is refused", "[models]") {
    CHECK_THROWS_AS(bearing_orders({0, 0.01, 0.05, 0.0}), std::invalid_argument);
    CHECK_THROWS_AS(bearing_orders({9, 0.05, 0.01, 0.0}), std::invalid_argument);
}

TEST_CASE("The shaft speed is found from harmonics in a spectrum", "[models]") {
    // 1x..4x and a 7-vane blade-pass line of a 1485 rpm pump over white noise.
    const double fs = 8192.0, rpm = 1485.0, fr = rpm / 60.0;
    const std::size_t n = 8 * 8192;
    std::vector<double> x(n);
    std::uint64_t s = 12345;
    for (std::size_t i = 0; i < n; ++i) {
        s = s * 6364136223846793005ULL + 1442695040888963407ULL;
        const double u = static_cast<double>(s >> 11) / 9007199254740992.0 - 0.5;
        const double t = static_cast<double>(i) / fs;
        x[i] = 0.2 * u;
        for (int h = 1; h <= 4; ++h) x[i] += 0.1 / h * std::sin(2 * std::numbers::pi * h * fr * t + h);
        x[i] += 0.1 * std::sin(2 * std::numbers::pi * 7 * fr * t);
    }
    cavitas::dsp::WelchPsd w({16384}, fs);
    w.push(std::span<const double>(x));
    const auto psd = w.psd();
    const auto est = estimate_speed(psd, w.bin_hz(), 0.9 * 1500.0, 1.1 * 1500.0, 7);
    REQUIRE(est.has_value());
    // Resolution: 0.5 Hz bins; the 5th harmonic would pin it to bin/10 = 3 rpm, we allow 1 bin at 1x.
    CHECK_THAT(est->rpm, WithinAbs(rpm, 60.0 * w.bin_hz() / 2.0));
    CHECK(est->score > 10.0);
}

TEST_CASE("No speed is claimed from a spectrum without lines", "[models]") {
    std::vector<double> flat(4097, 1e-6);
    CHECK_FALSE(estimate_speed(flat, 1.0, 1000.0, 2000.0, 5).has_value());
}

namespace {
// Noise plus lines at the given frequencies (Hz), amplitude a each; a PSD by Welch.
std::vector<double> lines_psd(const std::vector<double>& hz, double a, double fs, double& bin_hz) {
    const std::size_t n = 8 * 8192;
    std::vector<double> x(n);
    std::uint64_t s = 777;
    for (std::size_t i = 0; i < n; ++i) {
        s = s * 6364136223846793005ULL + 1442695040888963407ULL;
        const double t = static_cast<double>(i) / fs;
        x[i] = 0.2 * (static_cast<double>(s >> 11) / 9007199254740992.0 - 0.5);
        for (std::size_t k = 0; k < hz.size(); ++k)
            x[i] += a * std::sin(2 * std::numbers::pi * hz[k] * t + static_cast<double>(k));
    }
    cavitas::dsp::WelchPsd w({16384}, fs);
    w.push(std::span<const double>(x));
    bin_hz = w.bin_hz();
    return w.psd();
}
}  // namespace

// The confirmation rule of machine.hpp (kConfirmLines, kConfirmLeadDb): our
// choices; the cases below are built so that the rule's answer is known.
TEST_CASE("A speed estimate is confirmed only by a clear family that no other speed matches", "[models]") {
    const double fs = 8192.0, fr = 1485.0 / 60.0;
    double bin = 0.0;
    SECTION("1x, 2x, 3x and BPF: confirmed, and the lines are named") {
        const auto psd = lines_psd({fr, 2 * fr, 3 * fr, 7 * fr}, 0.05, fs, bin);
        const auto est = estimate_speed(psd, bin, 1485.0 / 1.25, 1485.0 * 1.25, 7);
        REQUIRE(est.has_value());
        CHECK(est->confirmed);
        CHECK(est->clear_lines >= 4);
        CHECK(est->how.find("1x, 2x, 3x") != std::string::npos);
    }
    SECTION("a single line: a speed is found but not confirmed") {
        const auto psd = lines_psd({3 * fr}, 0.05, fs, bin);
        const auto est = estimate_speed(psd, bin, 1485.0 / 1.25, 1485.0 * 1.25, 7);
        REQUIRE(est.has_value());
        CHECK_FALSE(est->confirmed);
        CHECK(est->how.find("not confirmed") != std::string::npos);
    }
    SECTION("two unrelated families of equal strength: the search cannot tell which is the shaft") {
        const double fa = 1400.0 / 60.0, fb = 1700.0 / 60.0;  // ratio 1.214: not a simple ratio
        const auto psd = lines_psd({fa, 2 * fa, 3 * fa, fb, 2 * fb, 3 * fb}, 0.05, fs, bin);
        const auto est = estimate_speed(psd, bin, 1300.0, 1800.0, 0);
        REQUIRE(est.has_value());
        CHECK_FALSE(est->confirmed);
        CHECK(est->runner_up_score > est->score - kConfirmLeadDb);
    }
}
