// What a finding keeps for its report (src/report).
#include <catch2/catch.hpp>

#include <algorithm>
#include <vector>

#include "src/output/finding.hpp"

// A finding's envelope spectrum is thinned for reports without losing a line
// (src/report: thin_by_largest); here a line at bin 50 001 of 70 000.

TEST_CASE("thin_by_largest halves the bins by their larger amplitude until they fit, keeping every line", "[report]") {
    std::vector<double> amplitude(70000, 0.01);
    amplitude[50001] = 3.0;
    double bin_hz = 0.1;
    cavitas::app::thin_by_largest(amplitude, bin_hz, cavitas::app::kEnvelopePointsWritten);
    CHECK(amplitude.size() == 17500 / 2);  // 70 000 -> 35 000 -> 17 500 -> 8 750
    CHECK(bin_hz == Approx(0.8));
    CHECK(amplitude[50001 / 8] == 3.0);     // the line, at the same frequency within one new bin
    CHECK(*std::max_element(amplitude.begin(), amplitude.end()) == 3.0);
    std::vector<double> small(100, 1.0);
    double small_bin = 0.5;
    cavitas::app::thin_by_largest(small, small_bin, cavitas::app::kEnvelopePointsWritten);
    CHECK(small.size() == 100);
    CHECK(small_bin == 0.5);
}

// A finding's waveform (plots.waveform) keeps 6 significant digits of the excerpt's
// largest value; smaller values keep the same decimals (src/output: rounded_to_peak).
TEST_CASE("rounded_to_peak keeps the peak's significant digits and the same decimals for the rest", "[report]") {
    const std::vector<float> x{1.2345678f, 0.00012345678f, -0.5f, 0.0f};
    const auto r = cavitas::app::rounded_to_peak(x, cavitas::app::kWaveformDigits);
    REQUIRE(r.size() == 4);
    CHECK(r[0] == 1.23457);   // 6 significant digits: 5 decimals
    CHECK(r[1] == 0.00012);   // the same 5 decimals
    CHECK(r[2] == -0.5);
    CHECK(r[3] == 0.0);
    const auto big = cavitas::app::rounded_to_peak(std::vector<float>{123456789.0f, 1234.0f}, 6);
    CHECK(big[0] == 123457000.0);  // 6 significant digits of 1.23456789e8
    CHECK(big[1] == 1000.0);
    CHECK(cavitas::app::rounded_to_peak(std::vector<float>{0.0f, 0.0f}, 6) == std::vector<double>{0.0, 0.0});
}
