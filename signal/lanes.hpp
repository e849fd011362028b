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

}  // namespace cavitas::dsp::lanes
