// Trade units: dB references, line RMS amplitudes, velocity from acceleration
// and the severity zones (models/severity.hpp), through the recording
// analyzer's averaged spectrum where the analysis path matters.
#include <catch2/catch.hpp>

#include <cmath>
#include <numbers>
#include <vector>

#include "models/analyzer.hpp"
#include "models/severity.hpp"

using namespace cavitas::models;
using Approx = Catch::Detail::Approx;

namespace {

constexpr double kPi = std::numbers::pi;

struct Tone {
    double amplitude;  // peak, m/s2
    double hz;
};

// A recording of tones analysed as cavitas analyses (1 s segments at 25.6 kHz:
// 1 Hz lines, so integer frequencies are bin-centred). Returns the analysis.
RecordingAnalysis analyse_tones(const std::vector<Tone>& tones, double seconds = 4.0) {
    const double fs = 25600.0;
    const AnalysisSetup setup = choose_setup(fs, 0.0);
    const auto n = static_cast<std::size_t>(seconds * fs);
    RecordingAnalyzer az(setup, MachineContext{}, 0.0, n);
    std::vector<float> x(n);
    for (std::size_t i = 0; i < n; ++i) {
        double v = 0.0;
        for (const Tone& t : tones) v += t.amplitude * std::sin(2.0 * kPi * t.hz * static_cast<double>(i) / fs + 0.3);
        x[i] = static_cast<float>(v);
    }
    az.push(x);
    return az.finish();
}

}  // namespace

TEST_CASE("ISO 1683 references: 1 m/s2 is 120 dB re 1 um/s2, 1 g 139.8304 dB, 1 Pa 120 dB re 1 uPa", "[severity]") {
    // Source: ISO 1683:2015 reference values as transcribed in the project's
    // methods notes A7 (checks: 9.80665 m/s2 -> 139.8304 dB; 1 Pa -> 120 dB in water).
    CHECK(level_db_re(1.0, kIso1683AccelerationRefM_s2) == Approx(120.0).margin(1e-9));
    CHECK(level_db_re(9.80665, kIso1683AccelerationRefM_s2) == Approx(139.8304).margin(5e-5));
    CHECK(level_db_re(1.0, kIso1683WaterPressureRefPa) == Approx(120.0).margin(1e-9));
    // A level in dB re 1 g squared moves to dB re 1 um/s2 by the same 139.8304 dB.
    CHECK(reference_offset_db(9.80665, kIso1683AccelerationRefM_s2) == Approx(139.8304).margin(5e-5));
    CHECK(reference_offset_db(1000.0, kIso1683WaterPressureRefPa) == Approx(180.0).margin(1e-9));  // kPa
    CHECK(level_db_re(0.0, kIso1683AccelerationRefM_s2) == -300.0);
}

TEST_CASE("A bin-centred sine of amplitude A shows A over root 2 RMS at its line", "[severity]") {
    // Hann window, density PSD: PSD x ENBW at the line = A^2 / 2 (textbook
    // Welch scaling, checked against scipy.signal.welch in tests/reference).
    const RecordingAnalysis a = analyse_tones({{3.0, 160.0}});
    REQUIRE(a.psd_bin_hz == Approx(1.0));
    CHECK(a.psd_enbw_hz == Approx(1.5).epsilon(1e-9));  // Hann: 1.5 bins (Harris 1978, from memory)
    const std::vector<double> rms = line_rms(a.mean_psd, a.psd_enbw_hz);
    CHECK(rms[160] == Approx(3.0 / std::sqrt(2.0)).epsilon(0.01));
    // The neighbours hold the window's leakage (a quarter of the power each), nothing further out.
    CHECK(rms[161] == Approx(3.0 / std::sqrt(2.0) / 2.0).epsilon(0.01));
    CHECK(rms[170] < 1e-3 * rms[160]);
}

TEST_CASE("A sine of A m/s2 at f integrates to A over 2 pi f peak and A over 2 pi f root 2 RMS", "[severity]") {
    // v = a / (2 pi f) for a sine (calculus); tolerance 1 % (our choice).
    for (const double f : {50.0, 160.0, 800.0}) {
        INFO("f = " << f << " Hz");
        const double A = 2.0;
        const RecordingAnalysis a = analyse_tones({{A, f}});
        const std::vector<double> v =
            line_rms(velocity_psd(a.mean_psd, a.psd_bin_hz, kVelocityLowCutHz), a.psd_enbw_hz);
        const auto k = static_cast<std::size_t>(std::lround(f / a.psd_bin_hz));
        const double rms_expected = A / (2.0 * kPi * f * std::sqrt(2.0));
        CHECK(v[k] == Approx(rms_expected).epsilon(0.01));
        CHECK(v[k] * std::sqrt(2.0) == Approx(A / (2.0 * kPi * f)).epsilon(0.01));
        // The overall in 10-1000 Hz is the same tone's RMS (the window's spread summed, not counted 1.5 times).
        CHECK(overall_velocity_rms_m_s(a.mean_psd, a.psd_bin_hz, 10.0, 1000.0, kVelocityLowCutHz) ==
              Approx(rms_expected).epsilon(0.01));
    }
}

TEST_CASE("The overall velocity of a multi-tone signal matches the hand sum in 10-1000 Hz", "[severity]") {
    // 1 m/s2 at 50 Hz + 2 m/s2 at 300 Hz in the band, 5 m/s2 at 2000 Hz outside it:
    // hand sum sqrt(sum (A / (2 pi f))^2 / 2) over the in-band tones; 1 % (our choice).
    const RecordingAnalysis a = analyse_tones({{1.0, 50.0}, {2.0, 300.0}, {5.0, 2000.0}});
    const double v50 = 1.0 / (2.0 * kPi * 50.0), v300 = 2.0 / (2.0 * kPi * 300.0);
    const double hand = std::sqrt((v50 * v50 + v300 * v300) / 2.0);
    CHECK(overall_velocity_rms_m_s(a.mean_psd, a.psd_bin_hz, 10.0, 1000.0, kVelocityLowCutHz) ==
          Approx(hand).epsilon(0.01));
    // With the 2 kHz tone inside a wider band, it adds its own share.
    const double v2000 = 5.0 / (2.0 * kPi * 2000.0);
    CHECK(overall_velocity_rms_m_s(a.mean_psd, a.psd_bin_hz, 10.0, 5000.0, kVelocityLowCutHz) ==
          Approx(std::sqrt(hand * hand + v2000 * v2000 / 2.0)).epsilon(0.01));
    // The low cut leaves the 50 Hz tone out when set above it.
    CHECK(overall_velocity_rms_m_s(a.mean_psd, a.psd_bin_hz, 10.0, 1000.0, 100.0) ==
          Approx(v300 / std::sqrt(2.0)).epsilon(0.01));
}

TEST_CASE("Velocity is zero below the low cut and at 0 Hz", "[severity]") {
    const std::vector<double> psd(100, 1.0);
    const std::vector<double> v = velocity_psd(psd, 1.0, 10.0);
    CHECK(v[0] == 0.0);
    CHECK(v[9] == 0.0);
    CHECK(v[10] == Approx(1.0 / std::pow(2.0 * kPi * 10.0, 2)));
}

TEST_CASE("A value on a zone boundary belongs to the upper zone", "[severity]") {
    // Our rule (README.md, "Severity zones"): a boundary reached counts as crossed.
    SeverityZones z;
    z.source = "test class";
    z.a_b_mm_s = 2.8;
    z.b_c_mm_s = 4.5;
    z.c_d_mm_s = 7.1;
    CHECK(zone_of(0.0, z) == SeverityZone::A);
    CHECK(zone_of(2.79, z) == SeverityZone::A);
    CHECK(zone_of(2.8, z) == SeverityZone::B);
    CHECK(zone_of(4.49, z) == SeverityZone::B);
    CHECK(zone_of(4.5, z) == SeverityZone::C);
    CHECK(zone_of(7.1, z) == SeverityZone::D);
    CHECK(zone_of(100.0, z) == SeverityZone::D);
    CHECK(std::string(zone_letter(SeverityZone::C)) == "C");
}
