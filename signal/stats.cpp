#include "signal/stats.hpp"

#include "signal/clones.hpp"
#include "signal/lanes.hpp"

#include <algorithm>
#include <array>
#include <cstring>
#include <string>
#include <cmath>
#include <numbers>
#include <stdexcept>

namespace cavitas::dsp {

// Standard normal quantile: P. J. Acklam's rational approximation (relative
// error < 1.2e-9) polished by one Halley step on Phi(x) - p, with Phi from
// erfc. The lower tail is taken as given and the upper tail by symmetry, so a
// small tail probability keeps its digits.
double normal_quantile(double p) {
    static constexpr double a[] = {-3.969683028665376e+01, 2.209460984245205e+02, -2.759285104469687e+02,
                                   1.383577518672690e+02,  -3.066479806614716e+01, 2.506628277459239e+00};
    static constexpr double b[] = {-5.447609879822406e+01, 1.615858368580409e+02, -1.556989798598866e+02,
                                   6.680131188771972e+01, -1.328068155288572e+01};
    static constexpr double c[] = {-7.784894002430293e-03, -3.223964580411365e-01, -2.400758277161838e+00,
                                   -2.549732539343734e+00, 4.374664141464968e+00,  2.938163982698783e+00};
    static constexpr double d[] = {7.784695709041462e-03, 3.224671290700398e-01, 2.445134137142996e+00,
                                   3.754408661907416e+00};
    constexpr double p_low = 0.02425;
    if (p > 0.5) return -normal_quantile(1.0 - p);
    double x;
    if (p < p_low) {
        const double q = std::sqrt(-2.0 * std::log(p));
        x = (((((c[0] * q + c[1]) * q + c[2]) * q + c[3]) * q + c[4]) * q + c[5]) /
            ((((d[0] * q + d[1]) * q + d[2]) * q + d[3]) * q + 1.0);
    } else {
        const double q = p - 0.5;
        const double r = q * q;
        x = (((((a[0] * r + a[1]) * r + a[2]) * r + a[3]) * r + a[4]) * r + a[5]) * q /
            (((((b[0] * r + b[1]) * r + b[2]) * r + b[3]) * r + b[4]) * r + 1.0);
    }
    // Halley: with e = Phi(x) - p and u = e / phi(x), x <- x - u / (1 + x u / 2).
    const double e = 0.5 * std::erfc(-x / std::numbers::sqrt2) - p;
    const double u = e * std::sqrt(2.0 * std::numbers::pi) * std::exp(0.5 * x * x);
    return x - u / (1.0 + 0.5 * x * u);
}

OrderSelector::OrderSelector(std::size_t capacity)
    : scratch_(capacity), counts_(std::size_t{1} << (63 - kBucketShift), 0) {}

double OrderSelector::select(std::span<const double> x, std::size_t k) {
    if (x.size() > scratch_.size())
        throw std::invalid_argument("OrderSelector: " + std::to_string(x.size()) + " values exceed the capacity of " +
                                    std::to_string(scratch_.size()));
    if (k >= x.size()) throw std::invalid_argument("OrderSelector: rank " + std::to_string(k) + " out of range");
    const auto nth = [&](std::size_t count, std::size_t rank) {
        auto first = scratch_.begin(), mid = first + static_cast<std::ptrdiff_t>(rank);
        std::nth_element(first, mid, first + static_cast<std::ptrdiff_t>(count));
        return *mid;
    };
    constexpr std::uint64_t kExponent = 0x7ff0000000000000ull;
    std::uint64_t bad = 0;  // any sign bit, or an all-ones exponent (Inf, NaN)
    for (const double v : x) {
        std::uint64_t u;
        std::memcpy(&u, &v, sizeof u);
        bad |= (u >> 63) | static_cast<std::uint64_t>((u & kExponent) == kExponent);
        ++counts_[(u >> kBucketShift) & (counts_.size() - 1)];
    }
    if (bad) {
        std::fill(counts_.begin(), counts_.end(), 0u);
        std::copy(x.begin(), x.end(), scratch_.begin());
        return nth(x.size(), k);
    }
    std::size_t bucket = 0, below = 0;
    while (below + counts_[bucket] <= k) below += counts_[bucket++];
    std::fill(counts_.begin(), counts_.end(), 0u);
    std::size_t m = 0;
    for (const double v : x) {
        std::uint64_t u;
        std::memcpy(&u, &v, sizeof u);
        if ((u >> kBucketShift) == bucket) scratch_[m++] = v;
    }
    return nth(m, k - below);
}

namespace {

struct WindowCounts {
    std::size_t below = 0, above = 0;
};

// How many of x lie below lo and at or above hi (NaN in neither).
CAVITAS_CLONED WindowCounts count_outside(const double* x, std::size_t n, double lo, double hi) {
    std::uint64_t below = 0, above = 0;
    for (std::size_t i = 0; i < n; ++i) {
        below += x[i] < lo;
        above += x[i] >= hi;
    }
    return {static_cast<std::size_t>(below), static_cast<std::size_t>(above)};
}

}  // namespace

double OrderSelector::select_near(std::span<const double> x, std::size_t k, double near) {
    if (x.size() > scratch_.size() || k >= x.size() || !(near > 0.0) || !std::isfinite(near)) return select(x, k);
    const double lo = 0.9 * near, hi = 1.1 * near;
    const WindowCounts c = count_outside(x.data(), x.size(), lo, hi);
    const std::size_t inside = x.size() - c.below - c.above;
    if (k < c.below || k >= c.below + inside) return select(x, k);
    std::size_t m = 0;
    for (const double v : x) {
        scratch_[m] = v;
        m += (v >= lo) & (v < hi);
    }
    // A NaN is in no count and no window: the window then holds fewer values.
    if (m != inside) return select(x, k);
    auto first = scratch_.begin(), mid = first + static_cast<std::ptrdiff_t>(k - c.below);
    std::nth_element(first, mid, first + static_cast<std::ptrdiff_t>(m));
    return *mid;
}

double normal_sf(double z) { return 0.5 * std::erfc(z / std::numbers::sqrt2); }

namespace {

using lanes::d4;
using lanes::kLanes;

template <typename T>
CAVITAS_ALWAYS_INLINE Moments moments_impl(std::span<const T> x) {
    if (x.empty()) throw std::invalid_argument("moments: empty input");
    const std::size_t count = x.size(), body = count - count % kLanes;
    // Two passes: the mean first, then central sums, for accuracy. Sums in
    // 8 lanes (signal/lanes.hpp); the extremes in double lanes (exact for float).
    const double first = static_cast<double>(x[0]);
    lanes::Lanes8 s, lo_l, hi_l;
    lanes::splat(first, lo_l.lo);
    lanes::splat(first, lo_l.hi);
    hi_l = lo_l;
    for (std::size_t i = 0; i < body; i += kLanes) {
        d4 a, b;
        lanes::load(x.data() + i, a);
        lanes::load(x.data() + i + 4, b);
        s.lo += a;
        s.hi += b;
        lo_l.lo = a < lo_l.lo ? a : lo_l.lo;
        lo_l.hi = b < lo_l.hi ? b : lo_l.hi;
        hi_l.lo = hi_l.lo < a ? a : hi_l.lo;
        hi_l.hi = hi_l.hi < b ? b : hi_l.hi;
    }
    auto sums = s.to_array();
    const auto los = lo_l.to_array(), his = hi_l.to_array();
    double lo = *std::min_element(los.begin(), los.end()), hi = *std::max_element(his.begin(), his.end());
    for (std::size_t i = body; i < count; ++i) {
        const double v = static_cast<double>(x[i]);
        sums[i - body] += v;
        lo = std::min(lo, v);
        hi = std::max(hi, v);
    }
    const double n = static_cast<double>(count);
    const double mean = lanes::total(sums) / n;
    lanes::Lanes8 q2, q4;
    d4 mu;
    lanes::splat(mean, mu);
    for (std::size_t i = 0; i < body; i += kLanes) {
        d4 a, b;
        lanes::load(x.data() + i, a);
        lanes::load(x.data() + i + 4, b);
        a -= mu;
        b -= mu;
        const d4 a2 = a * a, b2 = b * b;
        q2.lo += a2;
        q2.hi += b2;
        q4.lo += a2 * a2;
        q4.hi += b2 * b2;
    }
    auto s2 = q2.to_array(), s4 = q4.to_array();
    for (std::size_t i = body; i < count; ++i) {
        const double d = static_cast<double>(x[i]) - mean;
        const double d2v = d * d;
        s2[i - body] += d2v;
        s4[i - body] += d2v * d2v;
    }
    double m2 = lanes::total(s2), m4 = lanes::total(s4);
    // max |x - mean| is reached at the smallest or the largest sample.
    const double peak = std::max(hi - mean, mean - lo);
    m2 /= n;
    m4 /= n;
    Moments m;
    m.count = x.size();
    m.mean = mean;
    // A constant record: the computed mean can sit a rounding error away from
    // the samples, which must not leave a spurious rms of 1e-15.
    if (lo == hi) {
        m.mean = lo;
        return m;
    }
    m.rms = std::sqrt(m2);
    m.peak = peak;
    if (m2 > 0.0) {
        m.crest = peak / m.rms;
        m.kurtosis = m4 / (m2 * m2);
    }
    return m;
}

// Sums in fixed lanes (the same in every version of the clones). The cloned
// versions have internal names and the public functions call them: some
// compilers want the attribute on every declaration of a multiversioned
// function, and the header's stay plain.
CAVITAS_CLONED Moments moments_of(std::span<const float> x) { return moments_impl(x); }
CAVITAS_CLONED Moments moments_of(std::span<const double> x) { return moments_impl(x); }
CAVITAS_CLONED double lane_sum(const double* x, std::size_t n) { return lanes::sum(x, n); }

}  // namespace

Moments moments(std::span<const float> x) { return moments_of(x); }
Moments moments(std::span<const double> x) { return moments_of(x); }
double lanes::sum_of(const double* x, std::size_t n) { return lane_sum(x, n); }


template <typename T>
void MomentAccumulator::add_impl(std::span<const T> x) {
    if (x.empty()) return;
    if (!have_shift_) {
        shift_ = static_cast<double>(x[0]);
        have_shift_ = true;
        max_ = min_ = shift_;
    }
    for (T v : x) {
        const double xv = static_cast<double>(v);
        const double d = xv - shift_;
        const double d2 = d * d;
        s1_ += d;
        s2_ += d2;
        s3_ += d2 * d;
        s4_ += d2 * d2;
        max_ = std::max(max_, xv);
        min_ = std::min(min_, xv);
    }
    n_ += x.size();
}

void MomentAccumulator::add(std::span<const float> x) { add_impl(x); }
void MomentAccumulator::add(std::span<const double> x) { add_impl(x); }

Moments MomentAccumulator::result() const {
    if (n_ == 0) throw std::invalid_argument("MomentAccumulator: no samples");
    const double n = static_cast<double>(n_);
    // Raw moments about the shift, converted to central moments about the mean.
    const double a = s1_ / n;
    const double r2 = s2_ / n, r3 = s3_ / n, r4 = s4_ / n;
    const double m2 = std::max(0.0, r2 - a * a);
    const double m4 = r4 - 4.0 * a * r3 + 6.0 * a * a * r2 - 3.0 * a * a * a * a;
    Moments m;
    m.count = n_;
    m.mean = shift_ + a;
    m.rms = std::sqrt(m2);
    m.peak = std::max(max_ - m.mean, m.mean - min_);
    if (m2 > 0.0) {
        m.crest = m.peak / m.rms;
        m.kurtosis = std::max(0.0, m4) / (m2 * m2);
    }
    return m;
}

void MomentAccumulator::reset() { *this = MomentAccumulator{}; }

}  // namespace cavitas::dsp
