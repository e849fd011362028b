#include "signal/stats.hpp"

#include <algorithm>
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

double normal_sf(double z) { return 0.5 * std::erfc(z / std::numbers::sqrt2); }

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
