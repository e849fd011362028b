#include "signal/quality.hpp"

#include "signal/clones.hpp"
#include "signal/lanes.hpp"

#include <algorithm>
#include <cmath>
#include <cstring>
#include <limits>

namespace cavitas::dsp {

double QualityCounts::ac_rms() const {
    if (samples == 0) return 0.0;
    const double m = mean();
    return std::sqrt(std::max(0.0, sum_sq / static_cast<double>(samples) - m * m));
}

std::size_t QualityCounts::flat_top_samples(double fraction) const {
    if (!(max_abs > 0.0)) return 0;
    std::size_t n = 0;
    for (const auto& b : flat_runs)
        if (b.samples > 0 && b.magnitude >= fraction * max_abs) n += b.samples;
    return n;
}

namespace {

std::uint32_t bits_of(float v) {
    std::uint32_t u;
    std::memcpy(&u, &v, sizeof u);
    return u;
}

constexpr std::uint32_t kExp = 0x7f800000u, kMag = 0x7fffffffu;

struct BitCounts {
    std::uint32_t non_finite = 0, zeros = 0, at_fs = 0, max_bits = 0;
};

// Non-finite samples, zeros, samples at full scale and the largest |x|, on the
// bits of |x|, in one pass. Counts in 32-bit lanes (a block is far below 2^32
// samples), so the loop vectorises without widening; integer counts come out
// the same however the lanes are grouped.
CAVITAS_CLONED BitCounts count_bits(const float* x, std::size_t n, std::uint32_t clip_bits) {
    BitCounts c;
    std::uint32_t non_finite = 0, zeros = 0, at_fs = 0, max_bits = 0;
    for (std::size_t i = 0; i < n; ++i) {
        const std::uint32_t a = bits_of(x[i]) & kMag;
        non_finite += a >= kExp;
        zeros += a == 0;
        at_fs += a >= clip_bits;
        max_bits = std::max(max_bits, a);
    }
    c.non_finite = non_finite;
    c.zeros = zeros;
    c.at_fs = at_fs;
    c.max_bits = max_bits;
    return c;
}

// Sums and sums of squares of x[0 .. n) (n a multiple of 8) into the lanes,
// sample i into lane i mod 8 (signal/lanes.hpp).
CAVITAS_CLONED void add_lane_sums(const float* x, std::size_t n, lanes::Lanes8& s, lanes::Lanes8& q) {
    for (std::size_t i = 0; i + lanes::kLanes <= n; i += lanes::kLanes) {
        lanes::d4 a, b;
        lanes::load(x + i, a);
        lanes::load(x + i + 4, b);
        s.lo += a;
        s.hi += b;
        q.lo += a * a;
        q.hi += b * b;
    }
}

}  // namespace

QualityMeter::QualityMeter(const QualityConfig& config) : config_(config) {
    config_.clip_run_min = std::max<std::size_t>(config_.clip_run_min, 2);
    config_.dropout_run_min = std::max<std::size_t>(config_.dropout_run_min, 2);
    const double clip = config_.full_scale > 0.0 ? config_.near_full_scale * config_.full_scale : 0.0;
    if (!(clip > 0.0)) {
        clip_bits_ = 0xffffffffu;  // no |x| reaches it: nothing counts as at full scale
    } else {
        // |v| >= clip (in double) holds exactly when |v| >= the smallest float not below clip.
        float c = static_cast<float>(std::min(clip, static_cast<double>(std::numeric_limits<float>::max())));
        if (static_cast<double>(c) < clip) c = std::nextafter(c, std::numeric_limits<float>::infinity());
        clip_bits_ = bits_of(c);
    }
}

void QualityMeter::close_run(QualityCounts& c, float value, std::size_t run) const {
    if (run >= config_.dropout_run_min) c.dropout_samples += run;
    if (run >= config_.clip_run_min && value != 0.0f) {
        const double mag = std::abs(static_cast<double>(value));
        // Add to the bin of this magnitude, or take the smallest bin if it is smaller.
        auto& bins = c.flat_runs;
        auto it = std::find_if(bins.begin(), bins.end(), [&](const QualityCounts::RunBin& b) {
            return b.samples > 0 && b.magnitude == mag;
        });
        if (it == bins.end()) {
            it = std::min_element(bins.begin(), bins.end(), [](const auto& a, const auto& b) {
                return (a.samples == 0 ? -1.0 : a.magnitude) < (b.samples == 0 ? -1.0 : b.magnitude);
            });
            if (it->samples > 0 && it->magnitude >= mag) return;
            *it = {mag, 0};
        }
        it->samples += run;
    }
}

void QualityMeter::process(std::span<float> x) {
    constexpr std::size_t kMaxBlock = std::size_t{1} << 30;  // the counts below are 32-bit
    if (x.size() > kMaxBlock) {
        for (std::size_t i = 0; i < x.size(); i += kMaxBlock) process(x.subspan(i, std::min(kMaxBlock, x.size() - i)));
        return;
    }
    QualityCounts& c = counts_;
    const std::size_t n = x.size();
    // 1-2. Non-finite samples, zeros, samples at full scale and the largest
    // |x| in one pass; non-finite samples become 0 (rare: a scalar fix-up and
    // a second count, since they took part in the first).
    BitCounts bc = count_bits(x.data(), n, clip_bits_);
    if (bc.non_finite > 0) {
        c.non_finite += bc.non_finite;
        for (float& v : x)
            if (!std::isfinite(v)) v = 0.0f;
        bc = count_bits(x.data(), n, clip_bits_);
    }
    c.zero_samples += bc.zeros;
    c.at_full_scale += bc.at_fs;
    float max_abs;
    std::memcpy(&max_abs, &bc.max_bits, sizeof max_abs);
    c.max_abs = std::max(c.max_abs, static_cast<double>(max_abs));
    // 3. Sums for the mean and rms, sample i of the record into lane i mod 8.
    std::size_t i = 0;
    for (; i < n && (c.samples + i) % kLanes != 0; ++i) {
        const double d = x[i];
        lane_sum_[(c.samples + i) % kLanes] += d;
        lane_sum_sq_[(c.samples + i) % kLanes] += d * d;
    }
    {
        auto s = lanes::Lanes8::from_array(lane_sum_), q = lanes::Lanes8::from_array(lane_sum_sq_);
        const std::size_t body = (n - i) - (n - i) % kLanes;
        add_lane_sums(x.data() + i, body, s, q);
        i += body;
        lane_sum_ = s.to_array();
        lane_sum_sq_ = q.to_array();
    }
    for (; i < n; ++i) {
        const double d = x[i];
        lane_sum_[(c.samples + i) % kLanes] += d;
        lane_sum_sq_[(c.samples + i) % kLanes] += d * d;
    }
    // 4. Runs of equal values (the first sample of the record opens a run of 1).
    const std::size_t shortest = std::min(config_.clip_run_min, config_.dropout_run_min);
    float last = last_;
    std::size_t run = run_, longest = c.longest_flat_run;
    constexpr std::size_t kChunk = 16;
    for (std::size_t j = 0; j < n;) {
        // Fast path (the usual case): no sample of the chunk equals the one
        // before it, so the open run ends at its first sample and every run in
        // it has length 1 (never closed: shortest >= 2, see the constructor). The
        // test vectorises; the outcome is the loop's below.
        if (j > 0 && j + kChunk <= n) {
            typedef float v4 __attribute__((vector_size(16)));
            typedef std::int32_t i4 __attribute__((vector_size(16)));
            i4 equal = {0, 0, 0, 0};
            for (std::size_t k = 0; k < kChunk; k += 4) {
                v4 now, before;
                __builtin_memcpy(&now, x.data() + j + k, sizeof now);
                __builtin_memcpy(&before, x.data() + j + k - 1, sizeof before);
                equal |= now == before;
            }
            if ((equal[0] | equal[1] | equal[2] | equal[3]) == 0) {
                if (run >= shortest) close_run(c, last, run);
                run = 1;
                longest = std::max<std::size_t>(longest, 1);
                last = x[j + kChunk - 1];
                j += kChunk;
                continue;
            }
        }
        const std::size_t end = std::min(n, j + kChunk);
        for (; j < end; ++j) {
            const float v = x[j];
            if (v == last) {
                ++run;
            } else {
                if (run >= shortest) close_run(c, last, run);
                run = 1;
            }
            longest = std::max(longest, run);
            last = v;
        }
    }
    last_ = last;
    run_ = run;
    c.longest_flat_run = longest;
    c.samples += n;
}

QualityCounts QualityMeter::counts() const {
    QualityCounts c = counts_;
    if (c.samples > 0 && run_ >= std::min(config_.clip_run_min, config_.dropout_run_min)) close_run(c, last_, run_);
    double s = 0.0, q = 0.0;
    for (std::size_t l = 0; l < kLanes; ++l) {
        s += lane_sum_[l];
        q += lane_sum_sq_[l];
    }
    c.sum = s;
    c.sum_sq = q;
    return c;
}

}  // namespace cavitas::dsp
