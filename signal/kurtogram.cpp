// Fast kurtogram after J. Antoni, "Fast computation of the kurtogram for the
// detection of transient faults", MSSP 21(1) (2007) 108-124.
//
// Filter bank (as in the paper):
//  - binary pair: h[k] = h0[k] e^{j pi k / 4} (k = 0..16) passes [0, fs/4];
//    g[k] = (-1)^(k+1) h[15 - k] (k = 0..15) passes [fs/4, fs/2]; both outputs
//    are kept at odd samples, and the upper one is multiplied by (-1)^(m+1) so
//    that its band lands in [0, fs'/2] with its orientation kept. The band index
//    of a node is therefore its branch digits read MSB first (lower = 0).
//  - ternary triplet: h_t[k] = p[k] e^{j pi (2t + 1) k / 6} (t = 0, 1, 2;
//    k = 0..24), centres fs/12, fs/4, 5 fs/12, outputs kept at samples 2, 5, 8, ...
//  h0 and p are Hamming-windowed sinc low-pass prototypes with cut-offs 0.4 and
//  0.4 * 2/3 of Nyquist, normalised to unit DC gain.
//
// Implementation. Every filter above is a real prototype times a complex
// exponential, so it is applied as "demodulate, filter with real taps,
// remodulate": with u[n] = e^{-j pi n / 4} x[n] split into its even and odd
// samples u_e[s] = u[2s], u_o[s] = u[2s + 1],
//   (h * x)[2m+1] = e^{j pi (2m+1)/4} A[m],
//       A[m] = sum_q h0[2q] u_o[m-q] + sum_q h0[2q+1] u_e[m-q];
//   g[k] = e^{j 3pi/4} h0[k+1] e^{j 3pi k / 4}  (h0 is symmetric), hence
//   (-1)^(m+1) (g * x)[2m+1] = (-j)^m B[m],
//       B[m] = sum_q (-1)^q h0[2q+1] u_o[m-q] + j sum_q (-1)^q h0[2q+2] u_e[m-q].
// For the triplet, with w[n] = e^{-j pi n / 6} x[n] and the prototype split into
// six phases S_r[m] = sum_q p[6q + r] w[3m + 2 - r - 6q] (r = 0..5),
//   (h_t * x)[3m+2] = e^{j pi/3} j^m sum_r e^{j pi t r / 3} S_r[m],
// so the three channels share one set of 25 real-tap products. Only the kept
// (decimated) outputs are ever computed. The results equal direct convolution
// with the complex filters up to rounding.
#include "signal/kurtogram.hpp"

#include "signal/lanes.hpp"

#include <algorithm>
#include <bit>
#include <cassert>
#include <cmath>
#include <cstring>
#include <limits>
#include <numbers>
#include <stdexcept>
#include <string>

#include "signal/clones.hpp"

namespace cavitas::dsp {
namespace {

using Sample = float;  // the filter bank's arithmetic (kurtogram.hpp)

constexpr std::size_t kBinaryTaps = 17;   // the paper's 16th-order prototype
constexpr std::size_t kTernaryTaps = 25;  // 3/2 of the binary order, for the 3/2 narrower band
constexpr double kBinaryCutoff = 0.4;     // of Nyquist
constexpr double kTernaryCutoff = 0.4 * 2.0 / 3.0;
constexpr std::size_t kPad = 8;      // zeros ahead of each polyphase stream: the deepest tap reaches 8 back
constexpr std::size_t kBlock = 256;  // outputs per pass, so the per-block sums stay in L1
// The first kept coefficients carry the filters' start-up transient; the paper
// drops as many as the filter is long (1-based index L onward: 0-based L - 1).
constexpr std::size_t kSkipLower = kBinaryTaps - 1;
constexpr std::size_t kSkipUpper = kBinaryTaps - 2;  // g has 16 taps
constexpr std::size_t kSkipTernary = kBinaryTaps - 1;  // the paper uses the binary length here too
// Levels are bounded by log2(N) - 7 (paper): the deepest node keeps >= 128 samples.
constexpr int kMinLog2Samples = 7;
// Share of the segment power below which a band counts as empty (see process()).
constexpr double kEmptyBand = 1e-10;

// Hamming-windowed sinc, cut-off in units of Nyquist, unit DC gain (the window
// design of a linear-phase FIR). Built from its centre outwards so that it is
// exactly symmetric, which the folded kernels below rely on.
template <std::size_t Taps>
std::array<double, Taps> hamming_lowpass(double cutoff_of_nyquist) {
    static_assert(Taps % 2 == 1, "odd length: integer centre");
    std::array<double, Taps> h{};
    constexpr std::size_t half = (Taps - 1) / 2;
    const double order = static_cast<double>(Taps - 1);
    for (std::size_t k = 0; k <= half; ++k) {
        const double t = static_cast<double>(half - k);  // distance from the centre
        const double ideal =
            t == 0.0 ? cutoff_of_nyquist : std::sin(std::numbers::pi * cutoff_of_nyquist * t) / (std::numbers::pi * t);
        const double window = 0.54 - 0.46 * std::cos(2.0 * std::numbers::pi * static_cast<double>(k) / order);
        h[k] = h[Taps - 1 - k] = ideal * window;
    }
    double sum = 0.0;
    for (double v : h) sum += v;
    for (double& v : h) v /= sum;
    return h;
}

struct Rotation {
    Sample c, s;
};

// e^{sign j 2 pi k / Period}, k = 0 .. Period - 1, exact on the axes so that the
// quarter-turn steps add no rounding.
template <std::size_t Period>
std::array<Rotation, Period> rotations(double sign) {
    std::array<Rotation, Period> r{};
    for (std::size_t k = 0; k < Period; ++k) {
        if (4 * k % Period == 0) {
            const std::size_t quarter = 4 * k / Period;
            const Sample c = quarter == 0 ? 1.0f : (quarter == 2 ? -1.0f : 0.0f);
            const Sample s = quarter == 1 ? 1.0f : (quarter == 3 ? -1.0f : 0.0f);
            r[k] = {c, static_cast<Sample>(sign) * s};
        } else {
            const double a = 2.0 * std::numbers::pi * static_cast<double>(k) / static_cast<double>(Period);
            r[k] = {static_cast<Sample>(std::cos(a)), static_cast<Sample>(sign * std::sin(a))};
        }
    }
    return r;
}

const std::array<Rotation, 8>& demod_binary() {
    static const std::array<Rotation, 8> r = rotations<8>(-1.0);  // e^{-j pi n / 4}
    return r;
}
const std::array<Rotation, 12>& demod_ternary() {
    static const std::array<Rotation, 12> r = rotations<12>(-1.0);  // e^{-j pi n / 6}
    return r;
}

// out[s] = x[n0 + Step s] e^{-j 2 pi (n0 + Step s) / Period}, s < count.
// Step * 4 is a multiple of Period for both banks, so the rotation repeats
// every 4 outputs.
template <std::size_t Step, std::size_t Period>
CAVITAS_ALWAYS_INLINE void demodulate(const Sample* __restrict xr, const Sample* __restrict xi, std::size_t n0, std::size_t count,
                const std::array<Rotation, Period>& rot, Sample* __restrict outr, Sample* __restrict outi) {
    static_assert(Step * 4 % Period == 0);
    Rotation r[4];
    for (std::size_t k = 0; k < 4; ++k) r[k] = rot[(n0 + Step * k) % Period];
    xr += n0;
    xi += n0;
    std::size_t s = 0;
    for (; s + 4 <= count; s += 4) {
#pragma GCC unroll 4
        for (std::size_t k = 0; k < 4; ++k) {
            const Sample a = xr[Step * (s + k)], b = xi[Step * (s + k)];
            outr[s + k] = a * r[k].c - b * r[k].s;
            outi[s + k] = a * r[k].s + b * r[k].c;
        }
    }
    for (; s < count; ++s) {
        const Rotation q = r[s & 3];
        const Sample a = xr[Step * s], b = xi[Step * s];
        outr[s] = a * q.c - b * q.s;
        outi[s] = a * q.s + b * q.c;
    }
}

// Polyphase stream `phase` of the demodulated node for the outputs m0 .. m0+count-1
// of one block, with the kPad samples before them (zero ahead of the node start):
// out[i] = u[Step (m0 - kPad + i) + phase], i < kPad + count.
template <std::size_t Step, std::size_t Period>
CAVITAS_ALWAYS_INLINE void stream_block(const Sample* xr, const Sample* xi, std::size_t phase, std::size_t m0, std::size_t count,
                  const std::array<Rotation, Period>& rot, Sample* outr, Sample* outi) {
    std::size_t lead = 0;
    if (m0 < kPad) {
        lead = kPad - m0;
        std::fill(outr, outr + lead, Sample{0});
        std::fill(outi, outi + lead, Sample{0});
    }
    const std::size_t s0 = m0 + lead - kPad;
    demodulate<Step>(xr, xi, Step * s0 + phase, kPad + count - lead, rot, outr + lead, outi + lead);
}

// The binary split for count outputs: A into (ar, ai), B into (br, bi) (see the
// top of the file). The prototype is symmetric, so the branches fold:
//   a_odd[q] = a_odd[8 - q], a_even[q] = a_even[7 - q], d_odd[q] = -d_odd[7 - q],
//   d_even[q] = d_even[6 - q] (q < 7) and d_even[7] on its own.
// The taps come by value so the compiler sees that they cannot alias the outputs.
// Fixed != 0 fixes count at compile time, which lets -O2 vectorise the loop too.
template <std::size_t Fixed>
CAVITAS_ALWAYS_INLINE void binary_block(const std::array<Sample, 9> a_odd, const std::array<Sample, 8> a_even,
                  const std::array<Sample, 8> d_odd, const std::array<Sample, 8> d_even,
                  const Sample* __restrict er, const Sample* __restrict ei, const Sample* __restrict o_r,
                  const Sample* __restrict o_i, std::size_t count, Sample* __restrict ar, Sample* __restrict ai,
                  Sample* __restrict br, Sample* __restrict bi) {
    const std::size_t n = Fixed != 0 ? Fixed : count;
    for (std::size_t t = 0; t < n; ++t) {
        const Sample* o_re = o_r + t;
        const Sample* o_im = o_i + t;
        const Sample* e_re = er + t;
        const Sample* e_im = ei + t;
        Sample a_r = a_odd[4] * o_re[-4], a_i = a_odd[4] * o_im[-4];
        Sample p_r = 0, p_i = 0;
        Sample q_r = d_even[3] * e_re[-3] + d_even[7] * e_re[-7];
        Sample q_i = d_even[3] * e_im[-3] + d_even[7] * e_im[-7];
#pragma GCC unroll 4
        for (std::ptrdiff_t q = 0; q < 4; ++q) {
            const auto k = static_cast<std::size_t>(q);
            a_r += a_odd[k] * (o_re[-q] + o_re[q - 8]) + a_even[k] * (e_re[-q] + e_re[q - 7]);
            a_i += a_odd[k] * (o_im[-q] + o_im[q - 8]) + a_even[k] * (e_im[-q] + e_im[q - 7]);
            p_r += d_odd[k] * (o_re[-q] - o_re[q - 7]);
            p_i += d_odd[k] * (o_im[-q] - o_im[q - 7]);
        }
#pragma GCC unroll 3
        for (std::ptrdiff_t q = 0; q < 3; ++q) {
            const auto k = static_cast<std::size_t>(q);
            q_r += d_even[k] * (e_re[-q] + e_re[q - 6]);
            q_i += d_even[k] * (e_im[-q] + e_im[q - 6]);
        }
        ar[t] = a_r;
        ai[t] = a_i;
        br[t] = p_r - q_i;  // B = P + jQ
        bi[t] = p_i + q_r;
    }
}

// sum_q c[q] s[t - delay - 2q]: one phase of the ternary prototype.
template <std::size_t Taps>
CAVITAS_ALWAYS_INLINE void phase_sum(const std::array<Sample, Taps>& c, const Sample* s, std::ptrdiff_t delay, Sample& acc) {
#pragma GCC unroll 8
    for (std::size_t q = 0; q < Taps; ++q) acc += c[q] * s[-delay - 2 * static_cast<std::ptrdiff_t>(q)];
}

// Y_0, Y_1, Y_2 of the ternary split from the three phase streams of w.
// Phases 0 and 3 of the symmetric prototype are themselves symmetric and fold.
template <std::size_t Fixed>
CAVITAS_ALWAYS_INLINE void ternary_block(const std::array<Sample, 5> t0, const std::array<Sample, 4> t1, const std::array<Sample, 4> t2,
                   const std::array<Sample, 4> t3, const std::array<Sample, 4> t4, const std::array<Sample, 4> t5,
                   const Sample* __restrict w0r, const Sample* __restrict w0i, const Sample* __restrict w1r,
                   const Sample* __restrict w1i, const Sample* __restrict w2r, const Sample* __restrict w2i,
                   std::size_t count, Sample* __restrict y0r, Sample* __restrict y0i, Sample* __restrict y1r,
                   Sample* __restrict y1i, Sample* __restrict y2r, Sample* __restrict y2i) {
    constexpr Sample h = 0.86602540378443864676f;  // sin(pi/3)
    constexpr Sample half = 0.5f;
    const std::size_t n = Fixed != 0 ? Fixed : count;
    for (std::size_t t = 0; t < n; ++t) {
        const Sample *u0r = w0r + t, *u0i = w0i + t, *u1r = w1r + t, *u1i = w1i + t, *u2r = w2r + t,
                     *u2i = w2i + t;
        Sample s0r = t0[0] * (u2r[0] + u2r[-8]) + t0[1] * (u2r[-2] + u2r[-6]) + t0[2] * u2r[-4];
        Sample s0i = t0[0] * (u2i[0] + u2i[-8]) + t0[1] * (u2i[-2] + u2i[-6]) + t0[2] * u2i[-4];
        const Sample s3r = t3[0] * (u2r[-1] + u2r[-7]) + t3[1] * (u2r[-3] + u2r[-5]);
        const Sample s3i = t3[0] * (u2i[-1] + u2i[-7]) + t3[1] * (u2i[-3] + u2i[-5]);
        Sample s1r = 0, s1i = 0, s2r = 0, s2i = 0, s4r = 0, s4i = 0, s5r = 0, s5i = 0;
        phase_sum(t1, u1r, 0, s1r);
        phase_sum(t1, u1i, 0, s1i);
        phase_sum(t2, u0r, 0, s2r);
        phase_sum(t2, u0i, 0, s2i);
        phase_sum(t4, u1r, 1, s4r);
        phase_sum(t4, u1i, 1, s4i);
        phase_sum(t5, u0r, 1, s5r);
        phase_sum(t5, u0i, 1, s5i);
        // Y_t = sum_r zeta^(t r) S_r with zeta = e^{j pi/3}, zeta^3 = -1:
        //   Y_0 = E0 + E1 + E2, Y_1 = D0 + zeta D1 + zeta^2 D2,
        //   Y_2 = E0 + zeta^2 E1 - zeta E2   (E_r = S_r + S_(r+3), D_r = S_r - S_(r+3));
        // zeta z = (zr/2 - h zi) + j(h zr + zi/2), zeta^2 z = (-zr/2 - h zi) + j(h zr - zi/2).
        const Sample e0r = s0r + s3r, e0i = s0i + s3i, d0r = s0r - s3r, d0i = s0i - s3i;
        const Sample e1r = s1r + s4r, e1i = s1i + s4i, d1r = s1r - s4r, d1i = s1i - s4i;
        const Sample e2r = s2r + s5r, e2i = s2i + s5i, d2r = s2r - s5r, d2i = s2i - s5i;
        y0r[t] = e0r + e1r + e2r;
        y0i[t] = e0i + e1i + e2i;
        y1r[t] = d0r + (half * d1r - h * d1i) + (-half * d2r - h * d2i);
        y1i[t] = d0i + (h * d1r + half * d1i) + (h * d2r - half * d2i);
        y2r[t] = e0r + (-half * e1r - h * e1i) - (half * e2r - h * e2i);
        y2i[t] = e0i + (h * e1r - half * e1i) - (h * e2r + half * e2i);
    }
}

// out[t] = in[t] * base * turn^t, turn = +j or -j (quarter_sign = +1 / -1).
CAVITAS_ALWAYS_INLINE void rotate_quarters(const Sample* __restrict inr, const Sample* __restrict ini, std::size_t count, Rotation base,
                     Sample quarter_sign, Sample* __restrict outr, Sample* __restrict outi) {
    Rotation r[4];
    r[0] = base;
    for (std::size_t k = 1; k < 4; ++k) r[k] = {-quarter_sign * r[k - 1].s, quarter_sign * r[k - 1].c};
    std::size_t t = 0;
    for (; t + 4 <= count; t += 4) {
#pragma GCC unroll 4
        for (std::size_t k = 0; k < 4; ++k) {
            const Sample a = inr[t + k], b = ini[t + k];
            outr[t + k] = a * r[k].c - b * r[k].s;
            outi[t + k] = a * r[k].s + b * r[k].c;
        }
    }
    for (; t < count; ++t) {
        const Rotation q = r[t & 3];
        const Sample a = inr[t], b = ini[t];
        outr[t] = a * q.c - b * q.s;
        outi[t] = a * q.s + b * q.c;
    }
}

// The binary split of one node (see FastKurtogram::split), block by block.
CAVITAS_CLONED void split_pass(const std::array<Sample, 9>& a_odd, const std::array<Sample, 8>& a_even,
                               const std::array<Sample, 8>& d_odd, const std::array<Sample, 8>& d_even,
                               const Sample* xr, const Sample* xi, std::size_t len, Sample* ar, Sample* ai,
                               Sample* dr, Sample* di, Sample* stream_re, Sample* stream_im, Sample* block) {
    const std::size_t m_count = len / 2;
    constexpr std::size_t span = kPad + kBlock;
    Sample* er = stream_re;
    Sample* ei = stream_im;
    Sample* o_r = er + span;
    Sample* o_i = ei + span;
    Sample* s_ar = block;
    Sample* s_ai = s_ar + kBlock;
    Sample* s_br = s_ai + kBlock;
    Sample* s_bi = s_br + kBlock;
    constexpr Sample kHalfRoot2 = 0.70710678118654752440f;
    for (std::size_t m0 = 0; m0 < m_count; m0 += kBlock) {  // m0 % 4 == 0
        const std::size_t count = std::min(kBlock, m_count - m0);
        stream_block<2>(xr, xi, 0, m0, count, demod_binary(), er, ei);
        stream_block<2>(xr, xi, 1, m0, count, demod_binary(), o_r, o_i);
        if (count == kBlock)
            binary_block<kBlock>(a_odd, a_even, d_odd, d_even, er + kPad, ei + kPad, o_r + kPad, o_i + kPad, count,
                                 s_ar, s_ai, s_br, s_bi);
        else
            binary_block<0>(a_odd, a_even, d_odd, d_even, er + kPad, ei + kPad, o_r + kPad, o_i + kPad, count, s_ar,
                            s_ai, s_br, s_bi);
        // a = e^{j pi (2m+1)/4} A = e^{j pi/4} j^m A;  d = (-j)^m B.
        rotate_quarters(s_ar, s_ai, count, {kHalfRoot2, kHalfRoot2}, 1.0, ar + m0, ai + m0);
        rotate_quarters(s_br, s_bi, count, {1.0, 0.0}, -1.0, dr + m0, di + m0);
    }
}

// The ternary split of one node (see FastKurtogram::ternary) into out (three
// channels of len / 3 outputs each), block by block.
CAVITAS_CLONED void ternary_pass(const std::array<Sample, 5>& t0, const std::array<Sample, 4>& t1,
                                 const std::array<Sample, 4>& t2, const std::array<Sample, 4>& t3,
                                 const std::array<Sample, 4>& t4, const std::array<Sample, 4>& t5, const Sample* xr,
                                 const Sample* xi, std::size_t len, Sample* stream_re, Sample* stream_im, Sample* y,
                                 Sample* out_re, Sample* out_im) {
    const std::size_t m_count = len / 3;
    constexpr std::size_t span = kPad + kBlock;
    const Rotation base{0.5f, 0.86602540378443864676f};  // e^{j pi/3}
    Sample* wr = stream_re;
    Sample* wi = stream_im;
    for (std::size_t m0 = 0; m0 < m_count; m0 += kBlock) {  // m0 % 4 == 0
        const std::size_t count = std::min(kBlock, m_count - m0);
        for (std::size_t f = 0; f < 3; ++f)
            stream_block<3>(xr, xi, f, m0, count, demod_ternary(), wr + f * span, wi + f * span);
        if (count == kBlock)
            ternary_block<kBlock>(t0, t1, t2, t3, t4, t5, wr + kPad, wi + kPad, wr + span + kPad, wi + span + kPad,
                                  wr + 2 * span + kPad, wi + 2 * span + kPad, count, y, y + kBlock, y + 2 * kBlock,
                                  y + 3 * kBlock, y + 4 * kBlock, y + 5 * kBlock);
        else
            ternary_block<0>(t0, t1, t2, t3, t4, t5, wr + kPad, wi + kPad, wr + span + kPad, wi + span + kPad,
                             wr + 2 * span + kPad, wi + 2 * span + kPad, count, y, y + kBlock, y + 2 * kBlock,
                             y + 3 * kBlock, y + 4 * kBlock, y + 5 * kBlock);
        // Every channel is remodulated by e^{j pi (3m+2)/6} = e^{j pi/3} j^m.
        for (std::size_t ch = 0; ch < 3; ++ch)
            rotate_quarters(y + 2 * ch * kBlock, y + (2 * ch + 1) * kBlock, count, base, 1.0,
                            out_re + ch * m_count + m0, out_im + ch * m_count + m0);
    }
}

// Kurtosis ('kurt2' of the paper) of c[first..n): about the mean, 0 when the
// band is empty (mean power <= floor), negative values clipped to 0. The
// samples are single precision; the sums are in double, in fixed lanes
// (signal/lanes.hpp), so the order of addition is fixed by hand.
CAVITAS_CLONED double complex_kurtosis(const Sample* re, const Sample* im, std::size_t first, std::size_t n, double floor) {
    // Sums in four lanes (sample k in lane k mod 4), added pairwise at the end.
    using lanes::d4;
    const std::size_t count = n - first;
    re += first;
    im += first;
    d4 r{0, 0, 0, 0}, i{0, 0, 0, 0};
    std::size_t k = 0;
    for (; k + 4 <= count; k += 4) {
        d4 a, b;
        lanes::load(re + k, a);
        lanes::load(im + k, b);
        r += a;
        i += b;
    }
    double sum_r = (r[0] + r[1]) + (r[2] + r[3]), sum_i = (i[0] + i[1]) + (i[2] + i[3]);
    for (std::size_t t = k; t < count; ++t) {
        sum_r += static_cast<double>(re[t]);
        sum_i += static_cast<double>(im[t]);
    }
    const double inv = 1.0 / static_cast<double>(count);
    const double mean_r = sum_r * inv, mean_i = sum_i * inv;
    d4 mr, mi;
    lanes::splat(mean_r, mr);
    lanes::splat(mean_i, mi);
    d4 p2{0, 0, 0, 0}, p4{0, 0, 0, 0};
    for (k = 0; k + 4 <= count; k += 4) {
        d4 a, b;
        lanes::load(re + k, a);
        lanes::load(im + k, b);
        a -= mr;
        b -= mi;
        const d4 q = a * a + b * b;
        p2 += q;
        p4 += q * q;
    }
    double s2 = (p2[0] + p2[1]) + (p2[2] + p2[3]), s4 = (p4[0] + p4[1]) + (p4[2] + p4[3]);
    for (std::size_t t = k; t < count; ++t) {
        const double a = static_cast<double>(re[t]) - mean_r, b = static_cast<double>(im[t]) - mean_i;
        const double q = a * a + b * b;
        s2 += q;
        s4 += q * q;
    }
    const double e = s2 * inv;
    if (!(e > floor)) return 0.0;
    return std::max(0.0, s4 * inv / (e * e) - 2.0);
}

std::string number(double v) {
    std::string s = std::to_string(v);
    if (s.find('.') != std::string::npos) {
        while (!s.empty() && s.back() == '0') s.pop_back();
        if (!s.empty() && s.back() == '.') s.pop_back();
    }
    return s;
}

}  // namespace

FastKurtogram::FastKurtogram(const KurtogramConfig& config, double fs_hz, std::size_t segment_size)
    : config_(config), fs_hz_(fs_hz), n_(segment_size) {
    if (!(fs_hz > 0.0) || !std::isfinite(fs_hz))
        throw std::invalid_argument("FastKurtogram fs_hz = " + number(fs_hz) + " must be a finite value > 0");
    if (segment_size < (std::size_t{1} << (kMinLog2Samples + 1)))
        throw std::invalid_argument("FastKurtogram segment_size = " + std::to_string(segment_size) +
                                    " is below 256, the shortest segment with one level");
    const int max_levels = static_cast<int>(std::bit_width(segment_size)) - 1 - kMinLog2Samples;
    if (config.levels < 1)
        throw std::invalid_argument("KurtogramConfig.levels = " + std::to_string(config.levels) +
                                    " is below 1 (allowed 1 .. " + std::to_string(max_levels) + ")");
    if (config.levels > max_levels)
        throw std::invalid_argument("KurtogramConfig.levels = " + std::to_string(config.levels) +
                                    " exceeds log2(segment_size) - 7 = " + std::to_string(max_levels) +
                                    " (segment_size = " + std::to_string(segment_size) + ")");
    const auto levels = static_cast<std::size_t>(config.levels);
    const double top_center_hz = 0.5 * fs_hz - fs_hz / std::ldexp(1.0, config.levels + 2);
    if (!(config.min_center_hz >= 0.0) || !(config.min_center_hz <= top_center_hz))
        throw std::invalid_argument("KurtogramConfig.min_center_hz = " + number(config.min_center_hz) +
                                    " is outside 0 .. " + number(top_center_hz) +
                                    " Hz, the highest band centre at fs = " + number(fs_hz) +
                                    " Hz and levels = " + std::to_string(config.levels));

    // Rows: 0, then binary depth d at row 2d - 1 and the ternary split of depth
    // d - 1 at row 2d (d < levels), and the deepest binary depth last.
    rows_.resize(2 * levels);
    rows_[0] = {0.0, 1, 0};
    for (std::size_t d = 1; d <= levels; ++d) {
        rows_[2 * d - 1] = {static_cast<double>(d), std::size_t{1} << d, 0};
        if (d < levels)
            rows_[2 * d] = {static_cast<double>(d - 1) + std::log2(3.0), 3 * (std::size_t{1} << (d - 1)), 0};
    }
    std::size_t cells = 0;
    for (Row& r : rows_) {
        r.offset = cells;
        cells += r.bands;
    }
    last_.assign(cells, 0.0);
    sum_.assign(cells, 0.0);

    const auto h0 = hamming_lowpass<kBinaryTaps>(kBinaryCutoff);
    const auto f = [](double v) { return static_cast<Sample>(v); };
    for (std::size_t q = 0; q < 9; ++q) binary_.a_odd[q] = f(h0[2 * q]);
    for (std::size_t q = 0; q < 8; ++q) {
        const double sign = q % 2 == 0 ? 1.0 : -1.0;
        binary_.a_even[q] = f(h0[2 * q + 1]);
        binary_.d_odd[q] = f(sign * h0[2 * q + 1]);
        binary_.d_even[q] = f(sign * h0[2 * q + 2]);
    }
    const auto p = hamming_lowpass<kTernaryTaps>(kTernaryCutoff);
    for (std::size_t q = 0; q < 5; ++q) ternary_.t0[q] = f(p[6 * q]);
    for (std::size_t q = 0; q < 4; ++q) {
        ternary_.t1[q] = f(p[6 * q + 1]);
        ternary_.t2[q] = f(p[6 * q + 2]);
        ternary_.t3[q] = f(p[6 * q + 3]);
        ternary_.t4[q] = f(p[6 * q + 4]);
        ternary_.t5[q] = f(p[6 * q + 5]);
    }

    root_re_.assign(n_, 0.0f);
    root_im_.assign(n_, 0.0f);
    // tree_offset_[d]: the two children (2 * len_d samples) of the node being split at depth d - 1.
    tree_offset_.assign(levels + 1, 0);
    std::size_t len = n_, total = 0;
    for (std::size_t d = 1; d <= levels; ++d) {
        len /= 2;
        tree_offset_[d] = total;
        total += 2 * len;
    }
    tree_re_.assign(total, 0.0f);
    tree_im_.assign(total, 0.0f);
    stream_re_.assign(3 * (kPad + kBlock), 0.0f);
    stream_im_.assign(3 * (kPad + kBlock), 0.0f);
    block_.assign(6 * kBlock, 0.0f);
    out_re_.assign(n_, 0.0f);
    out_im_.assign(n_, 0.0f);
}

void FastKurtogram::split(const Sample* xr, const Sample* xi, std::size_t len, Sample* ar, Sample* ai, Sample* dr,
                          Sample* di) {
    split_pass(binary_.a_odd, binary_.a_even, binary_.d_odd, binary_.d_even, xr, xi, len, ar, ai, dr, di,
               stream_re_.data(), stream_im_.data(), block_.data());
}

void FastKurtogram::ternary(const Sample* xr, const Sample* xi, std::size_t len) {
    const TernaryTaps& c = ternary_;
    ternary_pass(c.t0, c.t1, c.t2, c.t3, c.t4, c.t5, xr, xi, len, stream_re_.data(), stream_im_.data(), block_.data(),
                 out_re_.data(), out_im_.data());
}

void FastKurtogram::visit(std::size_t depth, std::size_t node, const Sample* xr, const Sample* xi, std::size_t len) {
    // Depth first, so that below the top levels a node and its children stay in cache.
    const auto levels = static_cast<std::size_t>(config_.levels);
    const std::size_t half = len / 2;
    Sample* ar = tree_re_.data() + tree_offset_[depth + 1];
    Sample* ai = tree_im_.data() + tree_offset_[depth + 1];
    Sample* dr = ar + half;
    Sample* di = ai + half;
    split(xr, xi, len, ar, ai, dr, di);
    const Row& bin_row = rows_[2 * depth + 1];
    last_[bin_row.offset + 2 * node] = complex_kurtosis(ar, ai, kSkipLower, half, energy_floor_);
    last_[bin_row.offset + 2 * node + 1] = complex_kurtosis(dr, di, kSkipUpper, half, energy_floor_);
    if (depth + 2 <= levels) {
        ternary(xr, xi, len);
        const Row& ter_row = rows_[2 * depth + 2];
        const std::size_t m_count = len / 3;
        for (std::size_t ch = 0; ch < 3; ++ch)
            last_[ter_row.offset + 3 * node + ch] = complex_kurtosis(
                out_re_.data() + ch * m_count, out_im_.data() + ch * m_count, kSkipTernary, m_count, energy_floor_);
    }
    if (depth + 1 < levels) {
        visit(depth + 1, 2 * node, ar, ai, half);
        visit(depth + 1, 2 * node + 1, dr, di, half);
    }
}

void FastKurtogram::process(std::span<const float> x) {
    assert(x.size() == n_);
    double dc = 0.0;
    for (float v : x) dc += static_cast<double>(v);
    dc /= static_cast<double>(n_);

    Sample* xr = root_re_.data();
    const Sample* xi = root_im_.data();
    double s2 = 0.0, s4 = 0.0;
    for (std::size_t k = 0; k < n_; ++k) {
        const double v = static_cast<double>(x[k]) - dc;
        xr[k] = static_cast<Sample>(v);
        s2 += v * v;
        s4 += v * v * v * v;
    }
    const double inv_n = 1.0 / static_cast<double>(n_);
    const double power = s2 * inv_n;
    // Relative version of the paper's "E < eps -> 0", so the map does not depend
    // on the unit of x: a band holding less than 1e-10 of the segment power
    // (-100 dB) is rounding noise of the single-precision filter bank, whose
    // rounding sits near (6e-8)^2 = 4e-15 of the power per operation.
    energy_floor_ = kEmptyBand * power;
    // Level 0 is real: excess kurtosis about 3.
    last_[0] = power > 0.0 ? std::max(0.0, s4 * inv_n / (power * power) - 3.0) : 0.0;

    visit(0, 0, xr, xi, n_);

    for (std::size_t k = 0; k < last_.size(); ++k) sum_[k] += last_[k];
    ++segments_;
}

std::size_t FastKurtogram::rows() const { return rows_.size(); }

void FastKurtogram::check_cell(std::size_t r, std::size_t b) const {
    if (r >= rows_.size())
        throw std::out_of_range("FastKurtogram: row " + std::to_string(r) + " >= rows() = " +
                                std::to_string(rows_.size()));
    if (b >= rows_[r].bands)
        throw std::out_of_range("FastKurtogram: band " + std::to_string(b) + " >= row_bands(" + std::to_string(r) +
                                ") = " + std::to_string(rows_[r].bands));
}

double FastKurtogram::row_level(std::size_t r) const {
    check_cell(r, 0);
    return rows_[r].level;
}

std::size_t FastKurtogram::row_bands(std::size_t r) const {
    check_cell(r, 0);
    return rows_[r].bands;
}

double FastKurtogram::row_bandwidth_hz(std::size_t r) const {
    check_cell(r, 0);
    return fs_hz_ / (2.0 * static_cast<double>(rows_[r].bands));
}

double FastKurtogram::center_hz(std::size_t r, std::size_t b) const {
    check_cell(r, b);
    return (static_cast<double>(b) + 0.5) * row_bandwidth_hz(r);
}

double FastKurtogram::last(std::size_t r, std::size_t b) const {
    check_cell(r, b);
    return last_[rows_[r].offset + b];
}

double FastKurtogram::mean(std::size_t r, std::size_t b) const {
    check_cell(r, b);
    return segments_ == 0 ? 0.0 : sum_[rows_[r].offset + b] / static_cast<double>(segments_);
}

KurtogramBand FastKurtogram::best_of(const std::vector<double>& map, double scale) const {
    // First maximum in (level, frequency) order, as in the paper's selection.
    KurtogramBand best;
    bool found = false;
    for (std::size_t r = 0; r < rows_.size(); ++r) {
        const double bw = row_bandwidth_hz(r);
        for (std::size_t b = 0; b < rows_[r].bands; ++b) {
            const double fc = (static_cast<double>(b) + 0.5) * bw;
            if (fc < config_.min_center_hz) continue;
            const double k = map[rows_[r].offset + b] * scale;
            if (!found || k > best.kurtosis) {
                best = {k, rows_[r].level, fc, bw};
                found = true;
            }
        }
    }
    return best;
}

KurtogramBand FastKurtogram::best_last() const { return best_of(last_, 1.0); }

KurtogramBand FastKurtogram::best_mean() const {
    return best_of(sum_, segments_ == 0 ? 0.0 : 1.0 / static_cast<double>(segments_));
}

void FastKurtogram::reset() {
    std::fill(last_.begin(), last_.end(), 0.0);
    std::fill(sum_.begin(), sum_.end(), 0.0);
    segments_ = 0;
}

}  // namespace cavitas::dsp
