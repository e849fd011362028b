#include <catch2/catch.hpp>

#include <cmath>
#include <numbers>
#include <vector>

#include "signal/decimate.hpp"

using namespace cavitas::dsp;
using Catch::Matchers::WithinAbs;

namespace {

std::vector<float> tone(double f_hz, double fs_hz, std::size_t n) {
    std::vector<float> x(n);
    for (std::size_t i = 0; i < n; ++i) x[i] = static_cast<float>(std::sin(2.0 * std::numbers::pi * f_hz * static_cast<double>(i) / fs_hz));
    return x;
}

double rms_tail(const std::vector<float>& y, std::size_t skip) {
    double s = 0.0;
    for (std::size_t i = skip; i < y.size(); ++i) s += static_cast<double>(y[i]) * y[i];
    return std::sqrt(s / static_cast<double>(y.size() - skip));
}

}  // namespace

TEST_CASE("Decimator passes the passband and stops what would alias", "[signal]") {
    const double fs = 96000.0;
    Decimator d(DecimatorConfig{12});  // to 8 kHz, passband 0.8 x 4 kHz = 3.2 kHz
    std::vector<float> out(96000 / 12 + 2);
    // A 1 kHz sine: rms 1/sqrt(2) after the filter's start-up (computed from the definition).
    const auto x = tone(1000.0, fs, 96000);
    const std::size_t n = d.process(x, out);
    CHECK(n == 8000);
    out.resize(n);
    CHECK_THAT(rms_tail(out, 100), WithinAbs(1.0 / std::sqrt(2.0), 1e-3));
    // A 6 kHz sine would alias to 2 kHz: the Blackman design stops it by more than 70 dB
    // (Blackman sidelobes are about -74 dB; common practice, no source).
    Decimator d2(DecimatorConfig{12});
    std::vector<float> out2(96000 / 12 + 2);
    const auto y = tone(6000.0, fs, 96000);
    out2.resize(d2.process(y, out2));
    CHECK(20.0 * std::log10(rms_tail(out2, 100) / (1.0 / std::sqrt(2.0))) < -70.0);
}

TEST_CASE("Decimator gives the same output whatever the block sizes", "[signal]") {
    const auto x = tone(700.0, 51200.0, 40000);
    Decimator whole(DecimatorConfig{6}), pieces(DecimatorConfig{6});
    std::vector<float> a(40000 / 6 + 2), b(40000 / 6 + 2), part(5000);
    a.resize(whole.process(x, a));
    std::size_t got = 0;
    for (std::size_t at = 0, len = 1; at < x.size(); at += len, len = len * 3 + 1) {
        const std::size_t take = std::min(len, x.size() - at);
        const std::size_t k = pieces.process(std::span<const float>(x.data() + at, take), part);
        std::copy_n(part.begin(), k, b.begin() + static_cast<std::ptrdiff_t>(got));
        got += k;
    }
    b.resize(got);
    REQUIRE(a.size() == b.size());
    for (std::size_t i = 0; i < a.size(); ++i) CHECK(a[i] == b[i]);
}

TEST_CASE("Decimator: factor 1 passes through, bad settings are refused", "[signal]") {
    Decimator one(DecimatorConfig{1});
    const std::vector<float> x{1, 2, 3};
    std::vector<float> out(3);
    CHECK(one.process(x, out) == 3);
    CHECK(out == x);
    CHECK_THROWS_WITH(Decimator(DecimatorConfig{0}), Catch::Contains("factor"));
    CHECK_THROWS_WITH(Decimator(DecimatorConfig{4, 16, 1.5}), Catch::Contains("passband"));
    CHECK_THROWS_AS(lowpass_fir(0, 0.5), std::invalid_argument);
    // Unit gain at 0 Hz, symmetric (linear phase): from the definition.
    const auto h = lowpass_fir(33, 0.25);
    double sum = 0.0;
    for (double v : h) sum += v;
    CHECK_THAT(sum, WithinAbs(1.0, 1e-12));
    for (std::size_t i = 0; i < h.size(); ++i) CHECK_THAT(h[i], WithinAbs(h[h.size() - 1 - i], 1e-15));
}
