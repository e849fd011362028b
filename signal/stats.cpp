#include "signal/stats.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>

namespace cavitas::dsp {
namespace {

template <typename T>
Moments moments_impl(std::span<const T> x) {
    if (x.empty()) throw std::invalid_argument("moments: empty input");
    // Two passes: the mean first, then central sums, for accuracy.
    double sum = 0.0;
    T lo = x[0], hi = x[0];
    for (T v : x) {
        sum += static_cast<double>(v);
        lo = std::min(lo, v);
        hi = std::max(hi, v);
    }
    const double n = static_cast<double>(x.size());
    const double mean = sum / n;
    double m2 = 0.0, m4 = 0.0, peak = 0.0;
    for (T v : x) {
        const double d = static_cast<double>(v) - mean;
        const double d2 = d * d;
        m2 += d2;
        m4 += d2 * d2;
        peak = std::max(peak, std::abs(d));
    }
    m2 /= n;
    m4 /= n;
    Moments m;
    m.count = x.size();
    m.mean = mean;
    // A constant record: the computed mean can sit a rounding error away from
    // the samples, which must not leave a spurious rms of 1e-15.
    if (lo == hi) {
        m.mean = static_cast<double>(lo);
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

}  // namespace

Moments moments(std::span<const float> x) { return moments_impl(x); }
Moments moments(std::span<const double> x) { return moments_impl(x); }

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
