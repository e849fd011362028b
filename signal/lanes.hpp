// Double-precision vectors for the streaming sums (GCC/Clang vector
// extensions: two SSE2 registers per four lanes on any x86-64, one AVX
// register in the AVX2 versions of signal/clones.hpp, NEON on ARM64). Sums over
// a record are kept in 8 lanes, sample i in lane i mod 8, and the lanes are
// added in one fixed order at the end: the result does not depend on how the
// record was cut into blocks, nor on the vector width the processor offers,
// and the loops vectorise without -ffast-math.
#pragma once

#include <array>
#include <cstddef>
#include <cstring>

#include "signal/clones.hpp"

namespace cavitas::dsp::lanes {

typedef float f4 __attribute__((vector_size(16)));
typedef double d4 __attribute__((vector_size(32)));

inline constexpr std::size_t kLanes = 8;

/// Four samples from p (no alignment needed), widened to double.
CAVITAS_ALWAYS_INLINE void load(const float* p, d4& out) {
    f4 v;
    std::memcpy(&v, p, sizeof v);
    out = __builtin_convertvector(v, d4);
}
CAVITAS_ALWAYS_INLINE void load(const double* p, d4& out) { std::memcpy(&out, p, sizeof out); }
CAVITAS_ALWAYS_INLINE void splat(double v, d4& out) { out = d4{v, v, v, v}; }
/// Eight values from p: lanes 0-3 into lo, 4-7 into hi.
template <typename T>
CAVITAS_ALWAYS_INLINE void load8(const T* p, d4& lo, d4& hi) {
    load(p, lo);
    load(p + 4, hi);
}

/// Eight lanes of doubles: lanes 0-3 in lo, 4-7 in hi.
struct Lanes8 {
    d4 lo = {0, 0, 0, 0}, hi = {0, 0, 0, 0};
    std::array<double, kLanes> to_array() const {
        std::array<double, kLanes> a;
        std::memcpy(a.data(), &lo, sizeof lo);
        std::memcpy(a.data() + 4, &hi, sizeof hi);
        return a;
    }
    static Lanes8 from_array(const std::array<double, kLanes>& a) {
        Lanes8 s;
        std::memcpy(&s.lo, a.data(), sizeof s.lo);
        std::memcpy(&s.hi, a.data() + 4, sizeof s.hi);
        return s;
    }
};

/// The lanes added in a fixed pairwise order.
inline double total(const std::array<double, kLanes>& a) {
    return ((a[0] + a[1]) + (a[2] + a[3])) + ((a[4] + a[5]) + (a[6] + a[7]));
}

/// Sum of x[0 .. n) in lanes (x[i] in lane i mod 8), added in the fixed order.
CAVITAS_ALWAYS_INLINE double sum(const double* x, std::size_t n) {
    const std::size_t body = n - n % kLanes;
    Lanes8 s;
    for (std::size_t i = 0; i < body; i += kLanes) {
        d4 a, b;
        load8(x + i, a, b);
        s.lo += a;
        s.hi += b;
    }
    auto a = s.to_array();
    for (std::size_t i = body; i < n; ++i) a[i - body] += x[i];
    return total(a);
}

/// sum(x, n) compiled out of line in the versions of signal/clones.hpp: for
/// callers that are not themselves cloned (the four-wide halves need AVX to be
/// fast; in baseline x86-64 code they are split and spilled).
double sum_of(const double* x, std::size_t n);

/// Sum, sum of squares and maximum of x (x non-empty), in lanes.
struct PowerSums {
    double sum = 0.0, sum_sq = 0.0, max = 0.0;
};
CAVITAS_ALWAYS_INLINE PowerSums power_sums(const double* x, std::size_t n) {
    const std::size_t body = n - n % kLanes;
    Lanes8 s, q, m;
    if (n > 0) {
        splat(x[0], m.lo);
        splat(x[0], m.hi);
    }
    for (std::size_t i = 0; i < body; i += kLanes) {
        d4 a, b;
        load8(x + i, a, b);
        s.lo += a;
        s.hi += b;
        q.lo += a * a;
        q.hi += b * b;
        m.lo = m.lo < a ? a : m.lo;
        m.hi = m.hi < b ? b : m.hi;
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
