// Deterministic test signals shared by the tests.
//
// Gaussian values come from a fixed-seed std::mt19937_64 through our own 53-bit
// uniform and the Box-Muller transform: the standard library's
// normal_distribution is implementation-defined, so it would make the test data
// differ between standard libraries.
#pragma once

#include <cmath>
#include <cstdint>
#include <numbers>
#include <random>
#include <vector>

namespace cavitas::testing {

/// n standard-normal values scaled by sigma.
inline std::vector<double> gaussian_noise(std::size_t n, std::uint64_t seed, double sigma = 1.0) {
    std::mt19937_64 gen(seed);
    auto uniform = [&gen] { return (static_cast<double>(gen() >> 11) + 0.5) * 0x1.0p-53; };  // in (0, 1)
    std::vector<double> v(n);
    for (std::size_t i = 0; i < n; i += 2) {
        const double r = sigma * std::sqrt(-2.0 * std::log(uniform()));
        const double a = 2.0 * std::numbers::pi * uniform();
        v[i] = r * std::cos(a);
        if (i + 1 < n) v[i + 1] = r * std::sin(a);
    }
    return v;
}

inline std::vector<float> to_float(const std::vector<double>& v) {
    std::vector<float> f(v.size());
    for (std::size_t i = 0; i < v.size(); ++i) f[i] = static_cast<float>(v[i]);
    return f;
}

}  // namespace cavitas::testing
