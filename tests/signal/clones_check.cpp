// Prints a digest of what the cloned loops (signal/clones.hpp) compute on a
// fixed input. Built twice: against cavitas_signal (the processor's version,
// AVX2 where it has it) and against the same sources built with
// CAVITAS_NO_CLONES (the baseline x86-64 version only); tests/clones_compare.cmake
// runs both and requires the same digest, bit for bit.
#include <cstdint>
#include <cstdio>
#include <cstring>
#include <limits>
#include <vector>

#include "signal/decimate.hpp"
#include "signal/envelope.hpp"
#include "signal/kurtogram.hpp"
#include "signal/quality.hpp"
#include "signal/spectral_kurtosis.hpp"
#include "signal/stats.hpp"

namespace {

struct Digest {
    std::uint64_t h = 1469598103934665603ull;  // FNV-1a, 64 bit
    template <typename T>
    void add(const T& v) {
        unsigned char b[sizeof(T)];
        std::memcpy(b, &v, sizeof(T));
        for (unsigned char c : b) {
            h ^= c;
            h *= 1099511628211ull;
        }
    }
};

}  // namespace

int main() {
    // Noise with bursts (a deterministic generator), 2^16 + 100 samples so that
    // blocks end in partial ones too.
    const std::size_t n = (1u << 16) + 100;
    std::vector<float> x(n);
    std::uint64_t s = 0x9e3779b97f4a7c15ull;
    for (std::size_t i = 0; i < n; ++i) {
        s = s * 6364136223846793005ull + 1442695040888963407ull;
        const double u = static_cast<double>(s >> 11) / 9007199254740992.0 - 0.5;
        x[i] = static_cast<float>(u + (i % 4000 < 40 ? 3.0 * u : 0.0));
    }
    Digest d;
    // Kurtogram: every band's kurtosis of two segments (the running mean too).
    cavitas::dsp::FastKurtogram k(cavitas::dsp::KurtogramConfig{7, 0.0}, 96000.0, 1u << 16);
    for (int rep = 0; rep < 2; ++rep) {
        k.process(std::span<const float>(x.data() + rep * 100, 1u << 16));
        for (std::size_t r = 0; r < k.rows(); ++r)
            for (std::size_t b = 0; b < k.row_bands(r); ++b) {
                d.add(k.last(r, b));
                d.add(k.mean(r, b));
            }
    }
    // Decimator by 12 (the fine spectrum's), fed in uneven blocks.
    cavitas::dsp::Decimator dec(cavitas::dsp::DecimatorConfig{12});
    std::vector<float> out(n / 12 + 16);
    std::size_t at = 0, step = 1000;
    while (at < n) {
        const std::size_t len = std::min(step, n - at);
        const std::size_t got = dec.process(std::span<const float>(x.data() + at, len), out);
        for (std::size_t i = 0; i < got; ++i) d.add(out[i]);
        at += len;
        step = step * 7 % 5003 + 17;
    }
    // Envelope, single precision and decimated (squared envelope, band
    // statistics, envelope spectrum and the segment PSD from its transform).
    const std::size_t seg = 1u << 16;
    cavitas::dsp::EnvelopeAnalyzer env(cavitas::dsp::EnvelopeConfig{5000.0, 38400.0, true, true}, 96000.0, seg);
    env.process(std::span<const float>(x.data(), seg));
    for (double v : env.squared_envelope()) d.add(v);
    for (double v : env.envelope_spectrum()) d.add(v);
    d.add(env.band_kurtosis());
    d.add(env.band_crest());
    d.add(env.mean_squared_envelope());
    std::vector<double> psd(seg / 2 + 1);
    env.segment_psd(psd);
    for (double v : psd) d.add(v);
    // Spectral kurtosis, single precision.
    cavitas::dsp::SpectralKurtosis sk(cavitas::dsp::SpectralKurtosisConfig{1024, 512, true}, 96000.0);
    std::vector<double> sk_out(sk.bins());
    sk.compute(std::span<const float>(x.data(), seg), sk_out);
    for (double v : sk_out) d.add(v);
    // Moments of float samples.
    const auto mo = cavitas::dsp::moments(std::span<const float>(x.data(), n));
    d.add(mo.mean);
    d.add(mo.rms);
    d.add(mo.kurtosis);
    d.add(mo.peak);
    // Quality meter, with a non-finite sample, a flat run and a clipped stretch.
    std::vector<float> q(x);
    q[100] = std::numeric_limits<float>::quiet_NaN();
    for (std::size_t i = 5000; i < 5100; ++i) q[i] = 0.25f;
    for (std::size_t i = 9000; i < 9010; ++i) q[i] = 2.0f;
    cavitas::dsp::QualityMeter qm(cavitas::dsp::QualityConfig{2.0, 0.999, 3, 64});
    qm.process(std::span<float>(q.data(), 7777));
    qm.process(std::span<float>(q.data() + 7777, n - 7777));
    const auto qc = qm.counts();
    d.add(qc.non_finite);
    d.add(qc.at_full_scale);
    d.add(qc.longest_flat_run);
    d.add(qc.dropout_samples);
    d.add(qc.zero_samples);
    d.add(qc.max_abs);
    d.add(qc.sum);
    d.add(qc.sum_sq);
#if defined(__x86_64__) && (defined(__GNUC__) || defined(__clang__))
    const int avx2 = __builtin_cpu_supports("avx2") ? 1 : 0;
#else
    const int avx2 = 0;
#endif
    std::printf("digest %016llx\nprocessor has AVX2: %d\n", static_cast<unsigned long long>(d.h), avx2);
    return 0;
}
