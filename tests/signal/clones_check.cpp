// Prints a digest of what the cloned loops (signal/clones.hpp) compute on a
// fixed input. Built twice: against cavitas_signal (the processor's version,
// AVX2 where it has it) and against the same sources built with
// CAVITAS_NO_CLONES (the baseline x86-64 version only); tests/clones_compare.cmake
// runs both and requires the same digest, bit for bit.
#include <cstdint>
#include <cstdio>
#include <cstring>
#include <vector>

#include "signal/decimate.hpp"
#include "signal/kurtogram.hpp"

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
#if defined(__x86_64__) && (defined(__GNUC__) || defined(__clang__))
    const int avx2 = __builtin_cpu_supports("avx2") ? 1 : 0;
#else
    const int avx2 = 0;
#endif
    std::printf("digest %016llx\nprocessor has AVX2: %d\n", static_cast<unsigned long long>(d.h), avx2);
    return 0;
}
