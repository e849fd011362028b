// Analytic-truth tests of RealFft and ComplexFft (signal/fft.hpp).
//
// Conventions under test: forward X_k = sum_t x_t e^{-j 2 pi k t / n}, inverse
// with e^{+j ...}, neither normalised, so a round trip multiplies by n.
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <complex>
#include <cstddef>
#include <cstdint>
#include <numbers>
#include <random>
#include <stdexcept>
#include <thread>
#include <utility>
#include <vector>

#include "signal/fft.hpp"

using cavitas::dsp::ComplexFft;
using cavitas::dsp::RealFft;
using Catch::Matchers::WithinAbs;
using Catch::Matchers::WithinRel;

namespace {

constexpr double kTwoPi = 2.0 * std::numbers::pi;

// Uniform values in [-1, 1) from a fixed seed: generic test data.
std::vector<double> uniform_values(std::size_t n, std::uint64_t seed) {
    std::mt19937_64 gen(seed);
    std::vector<double> v(n);
    for (auto& x : v) x = 2.0 * (static_cast<double>(gen() >> 11) * 0x1.0p-53) - 1.0;
    return v;
}

double sum_squares(const std::vector<double>& v) {
    double s = 0.0;
    for (double x : v) s += x * x;
    return s;
}

// |X_k| of a cosine A cos(2 pi k0 t / n + phi) at bin k0 is A n / 2 and every
// other bin (k != k0 in the one-sided spectrum) is 0 (computed from the
// definition: the cosine is two complex exponentials of amplitude A/2, and the
// DFT of e^{j 2 pi k0 t / n} is n at k0 and 0 elsewhere). The caller's plan is
// used, so this doubles as a check that a plan works.
void check_cosine_at_exact_bin(RealFft& fft, std::size_t k0, double amplitude, double phase) {
    const std::size_t n = fft.size();
    const double nd = static_cast<double>(n);
    auto t = fft.time();
    for (std::size_t i = 0; i < n; ++i)
        t[i] = amplitude * std::cos(kTwoPi * static_cast<double>(k0 * i) / nd + phase);
    fft.forward();
    const auto s = fft.spectrum();
    // Tolerance: rounding of n products and sums in double, relative to the
    // line height A n / 2; 1e-12 leaves a margin of ~1e3 over n * eps for n <= 1024.
    const double tol = 1e-12 * amplitude * nd;
    for (std::size_t k = 0; k < s.size(); ++k) {
        INFO("bin " << k << " of n = " << n);
        if (k == k0)
            CHECK_THAT(std::abs(s[k]), WithinAbs(amplitude * nd / 2.0, tol));
        else
            CHECK_THAT(std::abs(s[k]), WithinAbs(0.0, tol));
    }
}

}  // namespace

TEST_CASE("A real forward then inverse transform returns the input multiplied by n", "[signal]") {
    // Computed from the definition: both directions are unnormalised, so
    // inverse(forward(x)) = n x. Even and odd n take different FFTW codelets.
    for (std::size_t n : {std::size_t{2}, std::size_t{64}, std::size_t{63}, std::size_t{1000}}) {
        INFO("n = " << n);
        RealFft fft(n);
        const auto x = uniform_values(n, 11 + n);
        auto t = fft.time();
        std::copy(x.begin(), x.end(), t.begin());
        fft.forward();
        fft.inverse();
        const double nd = static_cast<double>(n);
        // Tolerance 1e-12 absolute on values of order n: double rounding grows
        // like eps log2(n); 1e-12 is ~1e3 above that (common practice, no source).
        for (std::size_t i = 0; i < n; ++i) CHECK_THAT(fft.time()[i], WithinAbs(nd * x[i], 1e-12 * nd));
    }
}

TEST_CASE("A complex forward then inverse transform returns the input multiplied by n", "[signal]") {
    // Computed from the definition, as for the real transform.
    for (std::size_t n : {std::size_t{2}, std::size_t{64}, std::size_t{63}, std::size_t{1000}}) {
        INFO("n = " << n);
        ComplexFft fft(n);
        const auto re = uniform_values(n, 21 + n);
        const auto im = uniform_values(n, 31 + n);
        auto d = fft.data();
        for (std::size_t i = 0; i < n; ++i) d[i] = {re[i], im[i]};
        fft.forward();
        fft.inverse();
        const double nd = static_cast<double>(n);
        // Tolerance: as for the real round trip.
        for (std::size_t i = 0; i < n; ++i) {
            CHECK_THAT(fft.data()[i].real(), WithinAbs(nd * re[i], 1e-12 * nd));
            CHECK_THAT(fft.data()[i].imag(), WithinAbs(nd * im[i], 1e-12 * nd));
        }
    }
}

TEST_CASE("The real transform obeys Parseval's theorem once the negative half is rebuilt from the one-sided spectrum",
          "[signal]") {
    // Parseval (computed from the definition): sum x^2 = (1/n) sum_{k=0}^{n-1} |X_k|^2.
    // For real x, X_{n-k} = conj(X_k): bins 1 .. ceil(n/2)-1 appear twice in the
    // full spectrum, DC once and, for even n only, Nyquist (k = n/2) once.
    for (std::size_t n : {std::size_t{64}, std::size_t{63}, std::size_t{1024}}) {
        INFO("n = " << n);
        RealFft fft(n);
        const auto x = uniform_values(n, 41 + n);
        std::copy(x.begin(), x.end(), fft.time().begin());
        fft.forward();
        const auto s = fft.spectrum();
        double full = 0.0;
        for (std::size_t k = 0; k < n; ++k) {
            // Full-spectrum bin k taken from the one-sided spectrum.
            const std::complex<double> xk = k <= n / 2 ? s[k] : std::conj(s[n - k]);
            full += std::norm(xk);
        }
        // Relative 1e-12: sums of n positive terms in double (common practice, no source).
        CHECK_THAT(full / static_cast<double>(n), WithinRel(sum_squares(x), 1e-12));
    }
}

TEST_CASE("The complex transform obeys Parseval's theorem", "[signal]") {
    // Computed from the definition: sum |x|^2 = (1/n) sum |X_k|^2.
    const std::size_t n = 96;
    ComplexFft fft(n);
    const auto re = uniform_values(n, 51);
    const auto im = uniform_values(n, 52);
    double time_energy = 0.0;
    for (std::size_t i = 0; i < n; ++i) {
        fft.data()[i] = {re[i], im[i]};
        time_energy += re[i] * re[i] + im[i] * im[i];
    }
    fft.forward();
    double freq_energy = 0.0;
    for (const auto& v : fft.data()) freq_energy += std::norm(v);
    // Relative 1e-12: sums of n positive terms in double (common practice, no source).
    CHECK_THAT(freq_energy / static_cast<double>(n), WithinRel(time_energy, 1e-12));
}

TEST_CASE("A cosine at an exact bin gives a line of height A n / 2 and nothing elsewhere", "[signal]") {
    // Computed from the definition (see check_cosine_at_exact_bin).
    RealFft even(256);
    check_cosine_at_exact_bin(even, 17, 0.7, 0.3);
    RealFft odd(255);
    check_cosine_at_exact_bin(odd, 40, 2.5, -1.1);
}

TEST_CASE("The complex forward transform uses e^{-j} so that e^{+j 2 pi k0 t / n} lands in bin k0", "[signal]") {
    // Computed from the definition: sum_t e^{j 2 pi (k0 - k) t / n} = n if k = k0, else 0.
    // A wrong sign would put the line in bin n - k0.
    const std::size_t n = 128, k0 = 5;
    ComplexFft fft(n);
    const double nd = static_cast<double>(n);
    for (std::size_t i = 0; i < n; ++i)
        fft.data()[i] = std::polar(1.0, kTwoPi * static_cast<double>(k0 * i) / nd);
    fft.forward();
    // Tolerance 1e-12 n: double rounding on a line of height n (common practice, no source).
    CHECK_THAT(std::abs(fft.data()[k0]), WithinAbs(nd, 1e-12 * nd));
    CHECK_THAT(std::abs(fft.data()[n - k0]), WithinAbs(0.0, 1e-12 * nd));
}

TEST_CASE("A real transform keeps a working plan after being moved", "[signal]") {
    RealFft source(128);
    RealFft moved(std::move(source));
    REQUIRE(moved.size() == 128);
    check_cosine_at_exact_bin(moved, 9, 1.0, 0.0);

    RealFft assigned(16);
    assigned = std::move(moved);
    REQUIRE(assigned.size() == 128);
    check_cosine_at_exact_bin(assigned, 33, 1.5, 0.2);
    // The moved-from objects are destroyed at scope exit; a double free of
    // their former plans or buffers would abort the run.
}

TEST_CASE("A complex transform keeps a working plan after being moved", "[signal]") {
    auto check = [](ComplexFft& fft, std::size_t k0) {
        const std::size_t n = fft.size();
        const double nd = static_cast<double>(n);
        for (std::size_t i = 0; i < n; ++i)
            fft.data()[i] = std::polar(1.0, kTwoPi * static_cast<double>(k0 * i) / nd);
        fft.forward();
        // Computed from the definition: a line of height n at k0 (tolerance as above).
        CHECK_THAT(std::abs(fft.data()[k0]), WithinAbs(nd, 1e-12 * nd));
        double rest = 0.0;
        for (std::size_t k = 0; k < n; ++k)
            if (k != k0) rest = std::max(rest, std::abs(fft.data()[k]));
        CHECK_THAT(rest, WithinAbs(0.0, 1e-12 * nd));
    };
    ComplexFft source(64);
    ComplexFft moved(std::move(source));
    REQUIRE(moved.size() == 64);
    check(moved, 3);

    ComplexFft assigned(8);
    assigned = std::move(moved);
    REQUIRE(assigned.size() == 64);
    check(assigned, 21);
}

TEST_CASE("A transform of size 0 or 1 is rejected", "[signal]") {
    CHECK_THROWS_AS(RealFft(0), std::invalid_argument);
    CHECK_THROWS_AS(RealFft(1), std::invalid_argument);
    CHECK_THROWS_AS(ComplexFft(0), std::invalid_argument);
    CHECK_THROWS_AS(ComplexFft(1), std::invalid_argument);
    CHECK_NOTHROW(RealFft(2));
    CHECK_NOTHROW(ComplexFft(2));
}

// Single precision: the same transforms as the double ones to the accuracy of
// float arithmetic. The error of an FFT grows like the rounding unit (6e-8 for
// float) times log2 n (from memory); 1e-5 of the largest bin is a loose bound
// for n up to 10^5.
TEST_CASE("Single-precision transforms agree with the double ones to float accuracy", "[signal]") {
    using cavitas::dsp::ComplexFftF;
    using cavitas::dsp::RealFftF;
    for (const std::size_t n : {std::size_t{1000}, std::size_t{67500}, std::size_t{96000}}) {
        const auto x = uniform_values(n, n);
        RealFft d(n, cavitas::dsp::FftDirections::forward_only);
        RealFftF f(n, cavitas::dsp::FftDirections::forward_only);
        for (std::size_t i = 0; i < n; ++i) {
            d.time()[i] = x[i];
            f.time()[i] = static_cast<float>(x[i]);
        }
        d.forward();
        f.forward();
        double peak = 0.0, worst = 0.0;
        for (std::size_t k = 0; k < d.spectrum().size(); ++k) {
            peak = std::max(peak, std::abs(d.spectrum()[k]));
            const std::complex<double> fk(f.spectrum()[k].real(), f.spectrum()[k].imag());
            worst = std::max(worst, std::abs(fk - d.spectrum()[k]));
        }
        CHECK(worst <= 1e-5 * peak);
        // Complex inverse in float against double, and the round trip scales by n.
        ComplexFft cd(n);
        ComplexFftF cf(n);
        for (std::size_t i = 0; i < n; ++i) {
            cd.data()[i] = {x[i], x[(i * 7) % n]};
            cf.data()[i] = {static_cast<float>(x[i]), static_cast<float>(x[(i * 7) % n])};
        }
        cd.inverse();
        cf.inverse();
        double cpeak = 0.0, cworst = 0.0;
        for (std::size_t i = 0; i < n; ++i) {
            cpeak = std::max(cpeak, std::abs(cd.data()[i]));
            const std::complex<double> fi(cf.data()[i].real(), cf.data()[i].imag());
            cworst = std::max(cworst, std::abs(fi - cd.data()[i]));
        }
        CHECK(cworst <= 1e-5 * cpeak);
        cf.forward();
        for (std::size_t i = 0; i < n; i += n / 10)
            CHECK_THAT(static_cast<double>(cf.data()[i].real()) / static_cast<double>(n), WithinAbs(x[i], 1e-5));
    }
}

// Objects of one size share one plan (signal/fft.cpp, PlanCache): a transform
// made after the first object of its size is gone, and two objects run at once
// on two threads, give exactly the result of a lone object.
TEST_CASE("Transforms sharing a plan give identical results, alone, later and on two threads", "[signal]") {
    const std::size_t n = 12000;
    const auto x = uniform_values(n, 99);
    std::vector<std::complex<double>> expected;
    {
        RealFft lone(n, cavitas::dsp::FftDirections::forward_only);
        std::copy(x.begin(), x.end(), lone.time().begin());
        lone.forward();
        expected.assign(lone.spectrum().begin(), lone.spectrum().end());
    }
    std::vector<std::vector<std::complex<double>>> got(2);
    auto run = [&](std::size_t t) {
        RealFft f(n, cavitas::dsp::FftDirections::forward_only);
        for (int rep = 0; rep < 50; ++rep) {
            std::copy(x.begin(), x.end(), f.time().begin());
            f.forward();
        }
        got[t].assign(f.spectrum().begin(), f.spectrum().end());
    };
    std::thread a(run, 0), b(run, 1);
    a.join();
    b.join();
    CHECK(got[0] == expected);
    CHECK(got[1] == expected);
}

TEST_CASE("FFT wisdom exports the plans made, reads back, and damaged text is refused", "[signal]") {
    // A size no other test plans, in both precisions, so the wisdom must name it.
    cavitas::dsp::RealFft d(1000 * 7);
    cavitas::dsp::RealFftF f(1000 * 7);
    const auto w = cavitas::dsp::export_fft_wisdom();
    CHECK(w.single_precision.find("fftwf_wisdom") != std::string::npos);  // FFTW's own header (from FFTW's format)
    CHECK(w.double_precision.find("fftw_wisdom") != std::string::npos);
    CHECK(cavitas::dsp::import_fft_wisdom(w));
    CHECK(cavitas::dsp::import_fft_wisdom({}));  // nothing to add is not an error
    CHECK_FALSE(cavitas::dsp::import_fft_wisdom({"(not wisdom at all", ""}));
    CHECK_FALSE(cavitas::dsp::import_fft_wisdom({"", "(fftw-0.0.0 fftw_wisdom #x0 #x0 #x0 #x0)"}));
    // A transform planned after the import gives the same numbers as before.
    std::vector<double> x(7000);
    for (std::size_t i = 0; i < x.size(); ++i) x[i] = std::sin(0.01 * static_cast<double>(i * i % 997));
    std::copy(x.begin(), x.end(), d.time().begin());
    d.forward();
    cavitas::dsp::RealFft again(7000);
    std::copy(x.begin(), x.end(), again.time().begin());
    again.forward();
    for (std::size_t k = 0; k < d.spectrum().size(); ++k) CHECK(again.spectrum()[k] == d.spectrum()[k]);
}

TEST_CASE("Plans are counted as made only when FFTW had no wisdom for them", "[signal]") {
    // Sizes no other test plans. A new size is planned (counted); the same size
    // again reuses the process's plan (not counted).
    const std::size_t before = cavitas::dsp::fft_plans_made();
    cavitas::dsp::RealFftF a(6930, cavitas::dsp::FftDirections::forward_only);
    CHECK(cavitas::dsp::fft_plans_made() == before + 1);
    cavitas::dsp::RealFftF b(6930, cavitas::dsp::FftDirections::forward_only);
    CHECK(cavitas::dsp::fft_plans_made() == before + 1);
    // The double-precision twin is another transform: counted.
    cavitas::dsp::RealFft c(6930, cavitas::dsp::FftDirections::forward_only);
    CHECK(cavitas::dsp::fft_plans_made() == before + 2);
}

TEST_CASE("A complex transform with its result apart gives the in-place numbers", "[signal]") {
    // The same FFTW algorithm family on a second buffer: equal within single-precision
    // rounding of the 72000-point size the envelope uses (tolerance: our statement).
    const std::size_t n = 72000;
    cavitas::dsp::ComplexFftF in_place(n, cavitas::dsp::FftDirections::inverse_only);
    cavitas::dsp::ComplexFftF apart(n, cavitas::dsp::FftDirections::inverse_only, cavitas::dsp::FftPlacement::apart);
    CHECK(apart.output().data() != apart.data().data());
    CHECK(in_place.output().data() == in_place.data().data());
    for (std::size_t k = 0; k < n; ++k) {
        const std::complex<float> v(static_cast<float>(std::sin(0.001 * static_cast<double>(k * k % 7919))),
                                    static_cast<float>(std::cos(0.37 * static_cast<double>(k))));
        in_place.data()[k] = v;
        apart.data()[k] = v;
    }
    in_place.inverse();
    apart.inverse();
    double worst = 0.0, scale = 0.0;
    for (std::size_t k = 0; k < n; ++k) {
        worst = std::max(worst, static_cast<double>(std::abs(in_place.output()[k] - apart.output()[k])));
        scale = std::max(scale, static_cast<double>(std::abs(in_place.output()[k])));
    }
    CHECK(scale > 100.0);
    CHECK(worst <= 1e-5 * scale);
}
