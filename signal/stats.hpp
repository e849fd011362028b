// Time statistics of a signal: RMS, peak, crest factor, kurtosis.
//
// Conventions (the ones vibration analysts use for "overall" values):
//  - rms is the AC rms, about the mean: sqrt(mean((x - mean)^2)); the DC part is
//    reported separately (mean).
//  - peak is max |x - mean|; crest factor = peak / rms.
//  - kurtosis is the non-excess, population (biased) moment ratio
//    m4 / m2^2 about the mean: 1.5 for a sine, 3 for Gaussian noise. The same as
//    scipy.stats.kurtosis(x, fisher=False, bias=True).
// Empty input throws; an all-constant input gives rms = peak = 0, crest = 0,
// kurtosis = 0 (never NaN).
#pragma once

#include <cstddef>
#include <cstdint>
#include <span>
#include <vector>

namespace cavitas::dsp {

struct Moments {
    std::size_t count = 0;
    double mean = 0.0;
    double rms = 0.0;
    double peak = 0.0;
    double crest = 0.0;
    double kurtosis = 0.0;
};

Moments moments(std::span<const float> x);
Moments moments(std::span<const double> x);

/// Streaming moments over many blocks (sums are kept in double with a shift by
/// the first sample so that a large DC offset does not cost precision).
class MomentAccumulator {
public:
    void add(std::span<const float> x);
    void add(std::span<const double> x);
    Moments result() const;
    void reset();

private:
    template <typename T>
    void add_impl(std::span<const T> x);
    bool have_shift_ = false;
    double shift_ = 0.0;
    std::size_t n_ = 0;
    double s1_ = 0, s2_ = 0, s3_ = 0, s4_ = 0;
    double max_ = 0, min_ = 0;
};

/// The k-th smallest (0-based) of up to `capacity` values: the value
/// std::nth_element would put at position k, found in linear time. Non-negative
/// finite doubles order like their IEEE-754 bit patterns, so one pass counts the
/// values per bucket of the top bits (exponent and 3 mantissa bits), a second
/// copies the one bucket that holds rank k, and nth_element runs on that bucket
/// alone. A negative or non-finite value falls back to nth_element on a copy.
/// Scratch is allocated once; select() allocates nothing.
class OrderSelector {
public:
    explicit OrderSelector(std::size_t capacity);
    double select(std::span<const double> x, std::size_t k);
    /// The same value, found faster when `near` is close to it (within 10 %;
    /// e.g. the previous segment's answer): one counting pass finds how many
    /// values lie below, inside and above [0.9 near, 1.1 near), and when rank k
    /// falls inside, nth_element runs on that window's values alone. Otherwise
    /// (or for near <= 0, or any NaN) it is select(x, k). The answer never
    /// depends on `near`, only the time does.
    double select_near(std::span<const double> x, std::size_t k, double near);

private:
    static constexpr int kBucketShift = 49;  // 64 - sign bit - 11 exponent bits - 3 mantissa bits
    std::vector<double> scratch_;
    std::vector<std::uint32_t> counts_;
};

/// Standard normal quantile Phi^-1(p), 0 < p < 1 (Acklam's approximation
/// polished by a Halley step: relative error near machine precision).
double normal_quantile(double p);
/// Standard normal upper tail 1 - Phi(z).
double normal_sf(double z);

}  // namespace cavitas::dsp
