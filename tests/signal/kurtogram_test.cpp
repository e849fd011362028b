// Tests of the fast kurtogram (signal/kurtogram.hpp).
//
// Reference: J. Antoni, "Fast computation of the kurtogram for the detection of
// transient faults", MSSP 21(1) (2007) 108-124. The direct-convolution model
// below is written from that paper's description of the filter bank, and is
// what the polyphase implementation must reproduce.
#include <catch2/catch.hpp>

#include "tests/support/noise.hpp"

#include <algorithm>
#include <cmath>
#include <complex>
#include <cstddef>
#include <cstdint>
#include <limits>
#include <numbers>
#include <random>
#include <span>
#include <stdexcept>
#include <string>
#include <vector>

#include "signal/kurtogram.hpp"

using cavitas::dsp::FastKurtogram;
using cavitas::dsp::KurtogramBand;
using cavitas::dsp::KurtogramConfig;
using Catch::Matchers::Contains;
using Catch::Matchers::WithinAbs;
using Catch::Matchers::WithinRel;

namespace {

using cavitas::testing::gaussian_noise;
using cavitas::testing::to_float;
inline std::vector<double> gaussian(std::size_t n, std::uint64_t seed) { return gaussian_noise(n, seed); }

constexpr double kTwoPi = 2.0 * std::numbers::pi;
using cplx = std::complex<double>;

// Free decays of a single-degree-of-freedom resonance (natural frequency f_hz,
// damping ratio zeta, peak amplitude a) struck every period_s, each decay
// running on until it has died out, so the signal has no jumps of its own.
void add_impulse_train(std::vector<double>& x, double fs_hz, double f_hz, double zeta, double period_s, double a) {
    const double wn = kTwoPi * f_hz;
    const double wd = wn * std::sqrt(1.0 - zeta * zeta);
    const auto ring = static_cast<std::size_t>(std::ceil(std::log(1e6) / (zeta * wn) * fs_hz));  // to 1e-6
    for (double strike = 0.0; strike < static_cast<double>(x.size()); strike += period_s * fs_hz) {
        const auto i0 = static_cast<std::size_t>(std::ceil(strike));
        for (std::size_t i = i0; i < std::min(x.size(), i0 + ring); ++i) {
            const double t = (static_cast<double>(i) - strike) / fs_hz;
            x[i] += a * std::exp(-zeta * wn * t) * std::sin(wd * t);
        }
    }
}

// ---- Direct model of the paper's filter bank -------------------------------

// Window-method FIR: Hamming-windowed ideal low-pass of the given order,
// cut-off in units of Nyquist, scaled to unit gain at DC.
std::vector<double> windowed_lowpass(int order, double cutoff) {
    std::vector<double> h(static_cast<std::size_t>(order) + 1);
    double sum = 0.0;
    for (int k = 0; k <= order; ++k) {
        const double t = k - 0.5 * order;
        const double ideal = t == 0.0 ? cutoff : std::sin(std::numbers::pi * cutoff * t) / (std::numbers::pi * t);
        const double w = 0.54 - 0.46 * std::cos(kTwoPi * k / order);
        h[static_cast<std::size_t>(k)] = ideal * w;
        sum += ideal * w;
    }
    for (double& v : h) v /= sum;
    return h;
}

// Causal FIR with zero initial state, keeping outputs first, first + step, ...
std::vector<cplx> filter_keep(const std::vector<cplx>& h, const std::vector<cplx>& x, std::size_t first,
                              std::size_t step) {
    std::vector<cplx> y;
    for (std::size_t i = first; i < x.size(); i += step) {
        cplx acc = 0.0;
        for (std::size_t k = 0; k < h.size() && k <= i; ++k) acc += h[k] * x[i - k];
        y.push_back(acc);
    }
    return y;
}

double kurt_complex(const std::vector<cplx>& c, std::size_t first, double floor) {
    cplx m = 0.0;
    for (std::size_t i = first; i < c.size(); ++i) m += c[i];
    const auto n = static_cast<double>(c.size() - first);
    m /= n;
    double s2 = 0.0, s4 = 0.0;
    for (std::size_t i = first; i < c.size(); ++i) {
        const double p = std::norm(c[i] - m);
        s2 += p;
        s4 += p * p;
    }
    const double e = s2 / n;
    return e > floor ? std::max(0.0, s4 / n / (e * e) - 2.0) : 0.0;
}

// Rows of the kurtogram by direct convolution with h, g, h1, h2, h3.
std::vector<std::vector<double>> direct_kurtogram(const std::vector<double>& x_in, int levels) {
    const auto h0 = windowed_lowpass(16, 0.4);
    std::vector<cplx> h, g, h1, h2, h3;
    for (int k = 0; k <= 16; ++k) h.push_back(h0[static_cast<std::size_t>(k)] * std::polar(1.0, kTwoPi * k / 8.0));
    // g[m] = (-1)^(m+1) h[15 - m], m = 0..15 (0-based form of the paper's upper filter).
    for (int m = 0; m < 16; ++m) g.push_back((m % 2 == 0 ? -1.0 : 1.0) * h[static_cast<std::size_t>(15 - m)]);
    const auto p = windowed_lowpass(24, 0.4 * 2.0 / 3.0);
    for (int k = 0; k <= 24; ++k) {
        h1.push_back(p[static_cast<std::size_t>(k)] * std::polar(1.0, kTwoPi * k / 12.0));
        h2.push_back(h1.back() * std::polar(1.0, kTwoPi * k / 6.0));
        h3.push_back(h1.back() * std::polar(1.0, kTwoPi * k / 3.0));
    }
    const auto n = static_cast<double>(x_in.size());
    double mean = 0.0;
    for (double v : x_in) mean += v;
    mean /= n;
    std::vector<cplx> x;
    double s2 = 0.0, s4 = 0.0;
    for (double v : x_in) {
        x.emplace_back(v - mean);
        s2 += (v - mean) * (v - mean);
        s4 += std::pow(v - mean, 4);
    }
    const double power = s2 / n;
    const double floor = std::numeric_limits<double>::epsilon() * power;
    std::vector<std::vector<double>> rows(2 * static_cast<std::size_t>(levels));
    rows[0].push_back(std::max(0.0, s4 / n / (power * power) - 3.0));
    std::vector<std::vector<cplx>> nodes{x};
    for (int d = 0; d < levels; ++d) {
        const auto r = static_cast<std::size_t>(2 * d);
        std::vector<std::vector<cplx>> next;
        for (const auto& node : nodes) {
            auto a = filter_keep(h, node, 1, 2);
            auto u = filter_keep(g, node, 1, 2);
            for (std::size_t m = 0; m < u.size(); m += 2) u[m] = -u[m];  // (-1)^(m+1)
            rows[r + 1].push_back(kurt_complex(a, 16, floor));
            rows[r + 1].push_back(kurt_complex(u, 15, floor));
            next.push_back(a);
            next.push_back(u);
            if (d + 2 <= levels)
                for (const auto* f : {&h1, &h2, &h3})
                    rows[r + 2].push_back(kurt_complex(filter_keep(*f, node, 2, 3), 16, floor));
        }
        nodes = next;
    }
    return rows;
}

// Row of the given level (exact for integer levels, nearest for the others).
std::size_t row_of(const FastKurtogram& k, double level) {
    for (std::size_t r = 0; r < k.rows(); ++r)
        if (std::abs(k.row_level(r) - level) < 1e-3) return r;
    FAIL("no row at level " << level);
    return 0;
}

std::size_t argmax_band(const FastKurtogram& k, std::size_t r) {
    std::size_t best = 0;
    for (std::size_t b = 1; b < k.row_bands(r); ++b)
        if (k.last(r, b) > k.last(r, best)) best = b;
    return best;
}

}  // namespace

TEST_CASE("The kurtogram rows are the 1/3-binary levels with their band counts and widths", "[signal]") {
    // Antoni (2007) and his reference code: levels 0, 1, 1 + log2(3) - 1, 2, ...,
    // level k has fs 2^-(k+1) wide bands, fs / (2 Bw) of them, centred at (i + 0.5) Bw.
    const double fs_hz = 48000.0;
    FastKurtogram k(KurtogramConfig{3, 0.0}, fs_hz, 1024);  // 1024 = 2^(3 + 7): the shortest segment for 3 levels
    REQUIRE(k.rows() == 6);
    const double levels[] = {0.0, 1.0, std::log2(3.0), 2.0, 1.0 + std::log2(3.0), 3.0};
    const std::size_t bands[] = {1, 2, 3, 4, 6, 8};
    const double widths[] = {fs_hz / 2, fs_hz / 4, fs_hz / 6, fs_hz / 8, fs_hz / 12, fs_hz / 16};
    for (std::size_t r = 0; r < 6; ++r) {
        CHECK_THAT(k.row_level(r), WithinAbs(levels[r], 1e-12));
        CHECK(k.row_bands(r) == bands[r]);
        CHECK_THAT(k.row_bandwidth_hz(r), WithinRel(widths[r], 1e-12));
        CHECK_THAT(k.row_bandwidth_hz(r), WithinRel(fs_hz * std::exp2(-(levels[r] + 1.0)), 1e-12));
        for (std::size_t b = 0; b < bands[r]; ++b)
            CHECK_THAT(k.center_hz(r, b), WithinRel((static_cast<double>(b) + 0.5) * widths[r], 1e-12));
    }
    CHECK_THAT(k.row_level(2), WithinAbs(1.585, 5e-4));
    CHECK_THAT(k.row_level(4), WithinAbs(2.585, 5e-4));
    CHECK(k.segments() == 0);
    CHECK_THROWS_AS(k.row_bands(6), std::out_of_range);
    CHECK_THROWS_AS(k.last(3, 4), std::out_of_range);
}

TEST_CASE("An invalid kurtogram configuration is rejected with a message naming the field", "[signal]") {
    // Limits from Antoni (2007): levels <= log2(N) - 7, at least one level.
    CHECK_THROWS_WITH(FastKurtogram(KurtogramConfig{12, 0.0}, 48000.0, 8192),
                      Contains("KurtogramConfig.levels = 12 exceeds log2(segment_size) - 7 = 6"));
    CHECK_NOTHROW(FastKurtogram(KurtogramConfig{6, 0.0}, 48000.0, 8192));
    CHECK_THROWS_WITH(FastKurtogram(KurtogramConfig{7, 0.0}, 48000.0, 16383), Contains("= 6"));
    CHECK_THROWS_WITH(FastKurtogram(KurtogramConfig{0, 0.0}, 48000.0, 8192), Contains("KurtogramConfig.levels = 0"));
    CHECK_THROWS_AS(FastKurtogram(KurtogramConfig{-1, 0.0}, 48000.0, 8192), std::invalid_argument);
    CHECK_THROWS_WITH(FastKurtogram(KurtogramConfig{3, 0.0}, 0.0, 8192), Contains("fs_hz"));
    CHECK_THROWS_AS(FastKurtogram(KurtogramConfig{3, 0.0}, -48000.0, 8192), std::invalid_argument);
    CHECK_THROWS_AS(FastKurtogram(KurtogramConfig{3, 0.0}, std::nan(""), 8192), std::invalid_argument);
    CHECK_THROWS_WITH(FastKurtogram(KurtogramConfig{1, 0.0}, 48000.0, 255), Contains("segment_size = 255"));
    CHECK_THROWS_WITH(FastKurtogram(KurtogramConfig{3, -1.0}, 48000.0, 8192),
                      Contains("KurtogramConfig.min_center_hz = -1"));
    // The highest centre at 3 levels is fs/2 - fs/32 = 22500 Hz (computed from the definition).
    CHECK_NOTHROW(FastKurtogram(KurtogramConfig{3, 22500.0}, 48000.0, 8192));
    CHECK_THROWS_WITH(FastKurtogram(KurtogramConfig{3, 22600.0}, 48000.0, 8192), Contains("22500"));
}

TEST_CASE("A silent or constant segment gives an all-zero kurtogram", "[signal]") {
    // Edge case: no power after the mean is removed, so every band is empty and
    // reads 0, never NaN (computed from the definition). The shortest legal
    // segment, 256 samples at one level, is used as well.
    for (std::size_t n : {std::size_t{256}, std::size_t{4096}}) {
        const int levels = n == 256 ? 1 : 5;
        FastKurtogram k(KurtogramConfig{levels, 0.0}, 48000.0, n);
        for (float level : {0.0f, 0.37f, -1250.0f}) {
            k.process(std::vector<float>(n, level));
            CAPTURE(n, level);
            for (std::size_t r = 0; r < k.rows(); ++r)
                for (std::size_t b = 0; b < k.row_bands(r); ++b) CHECK(k.last(r, b) == 0.0);
            CHECK(k.best_last().kurtosis == 0.0);
        }
        CHECK(k.segments() == 3);
    }
}

TEST_CASE("The fast filter bank gives the kurtosis of direct convolution with the paper's filters", "[signal]") {
    // Computed from the definition (the direct model above): noise plus a burst
    // train at 0.3 fs so that many cells are non-zero.
    const double fs_hz = 48000.0;
    const std::size_t n = 4096;
    auto x = gaussian(n, 11);
    add_impulse_train(x, fs_hz, 0.3 * fs_hz, 0.03, 0.01, 4.0);
    const auto xf = to_float(x);
    const std::vector<double> xd(xf.begin(), xf.end());
    const int levels = 5;
    FastKurtogram k(KurtogramConfig{levels, 0.0}, fs_hz, n);
    k.process(xf);
    const auto ref = direct_kurtogram(xd, levels);
    REQUIRE(ref.size() == k.rows());
    std::size_t non_zero = 0;
    for (std::size_t r = 0; r < k.rows(); ++r) {
        REQUIRE(ref[r].size() == k.row_bands(r));
        for (std::size_t b = 0; b < k.row_bands(r); ++b) {
            CAPTURE(r, b);
            // The fast bank runs in single precision (the direct model in
            // double): differences measured up to 6e-8 here; 1e-6 bounds them.
            CHECK_THAT(k.last(r, b), WithinAbs(ref[r][b], 1e-6 * std::max(1.0, ref[r][b])));
            if (ref[r][b] > 0.1) ++non_zero;
        }
    }
    CHECK(non_zero >= 10);  // the comparison is not between two all-zero maps
}

TEST_CASE("White Gaussian noise gives a kurtogram near zero in every cell", "[signal]") {
    // Circular complex Gaussian noise has kurt2 = 0 and real Gaussian noise m4/m2^2 - 3 = 0.
    // The first split of a real input is not circular, though: c = sum h[k] x[n-k]
    // has E c^2 = sigma^2 sum h^2, so kurt2 = |sum h^2|^2 / (sum |h|^2)^2 there,
    // 0.18 for the paper's h and g (computed from the definition, below), and the
    // same for the outer ternary channels h1, h3 (0 for h2). Deeper, the sampling
    // spread dominates: the deepest row keeps 375 - 16 coefficients per band at a
    // 2x oversampled rate, sd of kurt2 ~ sqrt(4 / 180) = 0.15 per segment, the
    // clipping at 0 leaves a mean of ~0.4 sd = 0.06, and the largest of the ~500
    // cells' 8-segment means (sd 0.05) lands ~3.5 sd above that, ~0.24 (computed
    // from the definition). Hence < 0.3 for every cell, which also covers the 0.18.
    const double fs_hz = 48000.0;
    const std::size_t n = 48000;
    FastKurtogram k(KurtogramConfig{7, 0.0}, fs_hz, n);
    for (std::uint64_t s = 0; s < 8; ++s) k.process(to_float(gaussian(n, 100 + s)));
    REQUIRE(k.segments() == 8);
    double worst = 0.0, total = 0.0;
    std::size_t cells = 0;
    for (std::size_t r = 0; r < k.rows(); ++r)
        for (std::size_t b = 0; b < k.row_bands(r); ++b) {
            worst = std::max(worst, k.mean(r, b));
            total += k.mean(r, b);
            ++cells;
        }
    INFO("largest mean cell " << worst << ", mean over cells " << total / static_cast<double>(cells));
    CHECK(worst < 0.3);
    CHECK(total / static_cast<double>(cells) < 0.1);  // most cells are deep, mean ~0.03-0.06 there
    CHECK(k.best_mean().kurtosis < 0.3);
    CHECK(k.mean(0, 0) < 0.05);  // real level 0: sd of the excess kurtosis sqrt(24 / 48000) = 0.02

    // The level-1 bias of the first split, from its taps.
    const auto h0 = windowed_lowpass(16, 0.4);
    cplx sum_sq = 0.0;
    double energy = 0.0;
    for (int j = 0; j <= 16; ++j) {
        const cplx hj = h0[static_cast<std::size_t>(j)] * std::polar(1.0, kTwoPi * j / 8.0);
        sum_sq += hj * hj;
        energy += std::norm(hj);
    }
    const double bias = std::norm(sum_sq) / (energy * energy);
    CHECK_THAT(bias, WithinAbs(0.182, 0.001));
    const std::size_t level1 = row_of(k, 1.0);
    CHECK_THAT(k.mean(level1, 0), WithinAbs(bias, 0.03));
    CHECK_THAT(k.mean(level1, 1), WithinAbs(bias, 0.03));
}

TEST_CASE("A pure tone reads zero kurtosis in the bands that carry it", "[signal]") {
    // A constant-amplitude sinusoid has kurt2 = -1 (|c| constant: mean|c|^4 =
    // (mean|c|^2)^2), the real level 0 has 1.5 - 3 = -1.5; both clip to 0
    // (computed from the definition). Checked in the band holding the tone at
    // each row, away from band edges so that one band carries it.
    const double fs_hz = 48000.0;
    const std::size_t n = 16384;
    const double f = 7000.0;
    std::vector<double> x(n);
    for (std::size_t i = 0; i < n; ++i) x[i] = std::sin(kTwoPi * f * static_cast<double>(i) / fs_hz);
    FastKurtogram k(KurtogramConfig{6, 0.0}, fs_hz, n);
    k.process(to_float(x));
    CHECK_THAT(k.last(0, 0), WithinAbs(0.0, 1e-12));
    for (std::size_t r = 1; r < k.rows(); ++r) {
        const double bw = k.row_bandwidth_hz(r);
        const auto b = static_cast<std::size_t>(f / bw);
        const double from_edge = std::min(f - static_cast<double>(b) * bw, static_cast<double>(b + 1) * bw - f);
        if (from_edge < 0.25 * bw) continue;
        CAPTURE(r, b);
        CHECK(k.last(r, b) < 0.05);
    }
}

TEST_CASE("The kurtogram finds the resonance excited by an impulse train", "[signal]") {
    // Synthetic cavitation-like signal (common practice, no source): unit white
    // noise plus a 9 kHz, zeta = 0.02 resonance struck 50 times a second.
    const double fs_hz = 48000.0;
    const std::size_t n = 48000;
    const int levels = 7;
    auto x = gaussian(n, 5);
    FastKurtogram noise_only(KurtogramConfig{levels, 0.0}, fs_hz, n);
    noise_only.process(to_float(x));
    add_impulse_train(x, fs_hz, 9000.0, 0.02, 1.0 / 50.0, 3.0);
    FastKurtogram k(KurtogramConfig{levels, 0.0}, fs_hz, n);
    k.process(to_float(x));
    const KurtogramBand best = k.best_last();
    INFO("best: level " << best.level << ", " << best.center_hz << " Hz +- " << best.bandwidth_hz / 2
                        << ", kurtosis " << best.kurtosis << "; noise only " << noise_only.best_last().kurtosis);
    // The band holds 9 kHz, within one band width.
    CHECK(std::abs(best.center_hz - 9000.0) <= best.bandwidth_hz);
    CHECK(best.low_hz() - best.bandwidth_hz <= 9000.0);
    CHECK(best.high_hz() + best.bandwidth_hz >= 9000.0);
    // Narrow enough to be a band, not the whole spectrum (level >= 2: <= fs/8 wide).
    CHECK(best.level >= 2.0);
    CHECK(best.kurtosis > 5.0 * noise_only.best_last().kurtosis);
    CHECK(best.kurtosis > 2.0);
    CHECK_THAT(best.low_hz(), WithinRel(best.center_hz - best.bandwidth_hz / 2, 1e-12));
}

TEST_CASE("Scaling the input by 1000 leaves the kurtogram unchanged", "[signal]") {
    // Kurtosis is a ratio of moments, so it is scale-free (computed from the
    // definition). Samples are 13-bit integer counts, so x * 1000 is exact in float.
    const double fs_hz = 48000.0;
    const std::size_t n = 8192;
    auto x = gaussian(n, 21);
    add_impulse_train(x, fs_hz, 12000.0, 0.03, 0.02, 3.0);
    std::vector<float> a(n), b(n);
    for (std::size_t i = 0; i < n; ++i) {
        const double counts = std::clamp(std::round(x[i] * 500.0), -4095.0, 4095.0);
        a[i] = static_cast<float>(counts);
        b[i] = static_cast<float>(counts * 1000.0);
    }
    FastKurtogram ka(KurtogramConfig{6, 0.0}, fs_hz, n), kb(KurtogramConfig{6, 0.0}, fs_hz, n);
    ka.process(a);
    kb.process(b);
    for (std::size_t r = 0; r < ka.rows(); ++r)
        for (std::size_t b2 = 0; b2 < ka.row_bands(r); ++b2) {
            CAPTURE(r, b2);
            // Equal up to the single-precision rounding of the filter bank
            // (x 1000 is not a power of two, so the roundings differ; measured
            // up to 1.8e-7 absolute on kurtosis values near 0).
            CHECK_THAT(kb.last(r, b2), WithinRel(ka.last(r, b2), 1e-5) || WithinAbs(ka.last(r, b2), 1e-6));
        }
    CHECK(ka.best_last().kurtosis > 1.0);  // a map with content, not all zeros
    CHECK_THAT(kb.best_last().center_hz, WithinRel(ka.best_last().center_hz, 1e-12));
}

TEST_CASE("Band indices increase with frequency at levels 1 and 2", "[signal]") {
    // Guards the (-1)^(m+1) correction of the upper branch (Antoni 2007): with
    // it the upper child keeps the orientation of its band, so band index =
    // branch digits read MSB first. Tone bursts (a struck resonance, decay time
    // about 1 ms, 100 strikes a second) at 3 fs/16 lie in band 0 of level 1 and
    // band 1 of level 2, at 5 fs/16 in bands 1 and 2; a mirrored (Gray-code)
    // order of the upper children would swap these (computed from the definition).
    const double fs_hz = 48000.0;
    const std::size_t n = 16384;
    struct Case {
        double f_hz;
        std::size_t band1, band2, band_t1, band_t2;  // levels 1, 2, log2(3), 1 + log2(3)
    };
    // The ternary rows have fs/6 and fs/12 wide bands.
    const Case cases[] = {{1.0 * fs_hz / 16.0, 0, 0, 0, 0},
                          {3.0 * fs_hz / 16.0, 0, 1, 1, 2},
                          {5.0 * fs_hz / 16.0, 1, 2, 1, 3},
                          {7.0 * fs_hz / 16.0, 1, 3, 2, 5}};
    for (const Case& c : cases) {
        auto x = gaussian(n, 31);
        for (double& v : x) v *= 0.3;
        add_impulse_train(x, fs_hz, c.f_hz, 150.0 / c.f_hz, 0.01, 3.0);  // zeta f = 150 Hz: ~1 ms decay
        FastKurtogram k(KurtogramConfig{4, 0.0}, fs_hz, n);
        k.process(to_float(x));
        CAPTURE(c.f_hz);
        CHECK(argmax_band(k, row_of(k, 1.0)) == c.band1);
        CHECK(argmax_band(k, row_of(k, 2.0)) == c.band2);
        CHECK(argmax_band(k, row_of(k, std::log2(3.0))) == c.band_t1);
        CHECK(argmax_band(k, row_of(k, 1.0 + std::log2(3.0))) == c.band_t2);
        CHECK_THAT(k.center_hz(row_of(k, 2.0), c.band2),
                   WithinAbs(c.f_hz, 0.5 * k.row_bandwidth_hz(row_of(k, 2.0))));
    }
}

TEST_CASE("The mean map averages the segments and reset clears it", "[signal]") {
    // Computed from the definition: mean = sum of the last maps / segments.
    const double fs_hz = 48000.0;
    const std::size_t n = 4096;
    FastKurtogram k(KurtogramConfig{4, 0.0}, fs_hz, n);
    auto x1 = gaussian(n, 41);
    auto x2 = gaussian(n, 42);
    add_impulse_train(x2, fs_hz, 15000.0, 0.02, 0.01, 4.0);
    k.process(to_float(x1));
    std::vector<double> first;
    for (std::size_t r = 0; r < k.rows(); ++r)
        for (std::size_t b = 0; b < k.row_bands(r); ++b) first.push_back(k.last(r, b));
    k.process(to_float(x2));
    REQUIRE(k.segments() == 2);
    std::size_t i = 0;
    for (std::size_t r = 0; r < k.rows(); ++r)
        for (std::size_t b = 0; b < k.row_bands(r); ++b, ++i)
            CHECK_THAT(k.mean(r, b), WithinAbs(0.5 * (first[i] + k.last(r, b)), 1e-12));
    CHECK_THAT(k.best_mean().kurtosis, WithinRel(k.best_last().kurtosis * 0.5, 0.3));
    k.reset();
    CHECK(k.segments() == 0);
    CHECK(k.mean(1, 0) == 0.0);
    CHECK(k.last(1, 0) == 0.0);
    CHECK(k.best_mean().kurtosis == 0.0);
}

TEST_CASE("Bands centred below min_center_hz are left out of the selection", "[signal]") {
    // A strong low resonance (2 kHz) and a weaker high one (15 kHz): with the
    // floor at 8 kHz the selection moves to the high one (computed from the definition).
    const double fs_hz = 48000.0;
    const std::size_t n = 16384;
    auto x = gaussian(n, 51);
    add_impulse_train(x, fs_hz, 2000.0, 0.05, 0.02, 8.0);
    add_impulse_train(x, fs_hz, 15000.0, 0.01, 0.013, 3.0);
    FastKurtogram all(KurtogramConfig{5, 0.0}, fs_hz, n), high(KurtogramConfig{5, 8000.0}, fs_hz, n);
    const auto xf = to_float(x);
    all.process(xf);
    high.process(xf);
    const KurtogramBand a = all.best_last(), h = high.best_last();
    INFO("all: " << a.center_hz << " Hz K " << a.kurtosis << "; above 8 kHz: " << h.center_hz << " Hz K "
                  << h.kurtosis);
    CHECK(a.center_hz < 8000.0);
    CHECK(std::abs(a.center_hz - 2000.0) <= a.bandwidth_hz);
    CHECK(h.center_hz >= 8000.0);
    CHECK(std::abs(h.center_hz - 15000.0) <= h.bandwidth_hz);
    CHECK(h.kurtosis < a.kurtosis);
}
