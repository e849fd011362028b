// Two-lane double vectors for the streaming sums (GCC/Clang vector
// extensions: SSE2 on any x86-64, NEON on ARM64). Sums over a record are kept
// in 8 lanes, sample i in lane i mod 8, and the lanes are added in one fixed
// order at the end: the result does not depend on how the record was cut into
// blocks, and the loops vectorise without -ffast-math.
#pragma once

#include <array>
#include <cstddef>
#include <cstring>

namespace cavitas::dsp::lanes {

typedef float f2 __attribute__((vector_size(8)));
typedef double d2 __attribute__((vector_size(16)));

inline constexpr std::size_t kLanes = 8;

/// Two samples from p (no alignment needed), widened to double.
inline d2 load(const float* p) {
    f2 v;
    std::memcpy(&v, p, sizeof v);
    return __builtin_convertvector(v, d2);
}
inline d2 load(const double* p) {
    d2 v;
    std::memcpy(&v, p, sizeof v);
    return v;
}
inline d2 splat(double v) { return d2{v, v}; }

/// Eight lanes of doubles: lanes 2j and 2j+1 in v[j].
struct Lanes8 {
    d2 v[4] = {{0, 0}, {0, 0}, {0, 0}, {0, 0}};
    std::array<double, kLanes> to_array() const {
        std::array<double, kLanes> a;
        std::memcpy(a.data(), v, sizeof v);
        return a;
    }
    static Lanes8 from_array(const std::array<double, kLanes>& a) {
        Lanes8 s;
        std::memcpy(s.v, a.data(), sizeof s.v);
        return s;
    }
};

/// The lanes added in a fixed pairwise order.
inline double total(const std::array<double, kLanes>& a) {
    return ((a[0] + a[1]) + (a[2] + a[3])) + ((a[4] + a[5]) + (a[6] + a[7]));
}

/// Sum of x[0 .. n) in lanes (x[i] in lane i mod 8), added in the fixed order.
inline double sum(const double* x, std::size_t n) {
    const std::size_t body = n - n % kLanes;
    Lanes8 s;
    for (std::size_t i = 0; i < body; i += kLanes)
        for (std::size_t j = 0; j < 4; ++j) s.v[j] += load(x + i + 2 * j);
    auto a = s.to_array();
    for (std::size_t i = body; i < n; ++i) a[i - body] += x[i];
    return total(a);
}

/// Sum, sum of squares and maximum of x (x non-empty), in lanes.
struct PowerSums {
    double sum = 0.0, sum_sq = 0.0, max = 0.0;
};
inline PowerSums power_sums(const double* x, std::size_t n) {
    const std::size_t body = n - n % kLanes;
    Lanes8 s, q, m;
    if (n > 0)
        for (auto& v : m.v) v = splat(x[0]);
    for (std::size_t i = 0; i < body; i += kLanes)
        for (std::size_t j = 0; j < 4; ++j) {
            const d2 a = load(x + i + 2 * j);
            s.v[j] += a;
            q.v[j] += a * a;
            m.v[j] = m.v[j] < a ? a : m.v[j];
        }
    auto sa = s.to_array(), qa = q.to_array();
    const auto ma = m.to_array();
    PowerSums r;
    r.max = n > 0 ? x[0] : 0.0;
    for (const double v : ma) r.max = v > r.max ? v : r.max;
    for (std::size_t i = body; i < n; ++i) {
        sa[i - body] += x[i];
        qa[i - body] += x[i] * x[i];
        r.max = x[i] > r.max ? x[i] : r.max;
    }
    r.sum = total(sa);
    r.sum_sq = total(qa);
    return r;
}

}  // namespace cavitas::dsp::lanes
