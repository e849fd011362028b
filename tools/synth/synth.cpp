// Signal model of the synthetic recordings; see synth.hpp for the overview.
//
// All filtering is plain time-domain IIR (biquads, direct form II transposed, in
// double). Fault strengths are calibrated from the *exact* frequency responses of
// those same filters: the expected power of white noise (or of a Poisson train of
// pulses, by Campbell's theorem) through a filter bank in a band is an integral
// of |H|^2 that we evaluate numerically, so no trial runs are needed and the
// result does not depend on the recording's random draw.
#include "tools/synth/synth.hpp"

#include <matio.h>
#include <sndfile.h>

#include "models/operating_point.hpp"

#include <algorithm>
#include <cmath>
#include <complex>
#include <cstdio>
#include <cstring>
#include <fstream>
#include <map>
#include <memory>
#include <numbers>
#include <ostream>
#include <random>
#include <sstream>
#include <stdexcept>
#include <system_error>
#include <utility>

namespace cavitas::synth {
namespace {

constexpr double kTwoPi = 2.0 * std::numbers::pi;

// ---------------------------------------------------------------------------
// Randomness: mt19937_64 is fully specified by the standard; the distributions
// are not, so the uniform and the Gaussian are ours.
class Rng {
public:
    explicit Rng(std::uint64_t seed) : engine_(seed) {}

    /// [0, 1) from the top 53 bits of one draw.
    double uniform() { return static_cast<double>(engine_() >> 11) * 0x1.0p-53; }
    double uniform(double lo, double hi) { return lo + (hi - lo) * uniform(); }

    /// Standard normal by Box-Muller (both outputs used).
    double gaussian() {
        if (has_spare_) {
            has_spare_ = false;
            return spare_;
        }
        const double u1 = 1.0 - uniform();  // (0, 1]: log is finite
        const double u2 = uniform();
        const double r = std::sqrt(-2.0 * std::log(u1));
        spare_ = r * std::sin(kTwoPi * u2);
        has_spare_ = true;
        return r * std::cos(kTwoPi * u2);
    }

    /// Waiting time of a Poisson process of `rate_per_s`.
    double exponential_s(double rate_per_s) { return -std::log(1.0 - uniform()) / rate_per_s; }

private:
    std::mt19937_64 engine_;
    double spare_ = 0.0;
    bool has_spare_ = false;
};

// Independent random streams of one recording: the fault-free part is drawn from
// the same streams whatever the kind, so a recording and its healthy twin (same
// seed) differ only by the fault.
enum Stream : std::uint64_t {
    kStreamTones = 1,
    kStreamFloor = 2,
    kStreamPink = 3,
    kStreamParams = 4,
    kStreamEvents = 5,
    kStreamFaultNoise = 6,
    kStreamMains = 7,
    kStreamStep = 8,
};

// ---------------------------------------------------------------------------
// Filters.
struct Biquad {
    double b0 = 1, b1 = 0, b2 = 0, a1 = 0, a2 = 0;

    /// H at nu = f / fs.
    std::complex<double> response(double nu) const {
        const std::complex<double> z1 = std::polar(1.0, -kTwoPi * nu);
        const std::complex<double> z2 = z1 * z1;
        return (b0 + b1 * z1 + b2 * z2) / (1.0 + a1 * z1 + a2 * z2);
    }
};

Biquad normalised(double b0, double b1, double b2, double a0, double a1, double a2) {
    return {b0 / a0, b1 / a0, b2 / a0, a1 / a0, a2 / a0};
}

// Second-order sections from the bilinear transform with the corner pre-warped.
Biquad lowpass2(double f_hz, double fs_hz, double q) {
    const double w = kTwoPi * f_hz / fs_hz, c = std::cos(w), alpha = std::sin(w) / (2 * q);
    return normalised((1 - c) / 2, 1 - c, (1 - c) / 2, 1 + alpha, -2 * c, 1 - alpha);
}
Biquad highpass2(double f_hz, double fs_hz, double q) {
    const double w = kTwoPi * f_hz / fs_hz, c = std::cos(w), alpha = std::sin(w) / (2 * q);
    return normalised((1 + c) / 2, -(1 + c), (1 + c) / 2, 1 + alpha, -2 * c, 1 - alpha);
}
/// Resonator with unit gain at f0 and -3 dB bandwidth f0 / q.
Biquad bandpass2(double f0_hz, double fs_hz, double q) {
    const double w = kTwoPi * f0_hz / fs_hz, c = std::cos(w), alpha = std::sin(w) / (2 * q);
    return normalised(alpha, 0, -alpha, 1 + alpha, -2 * c, 1 - alpha);
}
/// First-order pole/zero pair (unity at DC): -20 dB/decade between pole and zero.
Biquad shelf1(double pole_hz, double zero_hz, double fs_hz) {
    const double k = 2 * fs_hz;
    const double wp = k * std::tan(std::numbers::pi * pole_hz / fs_hz);
    const double wz = k * std::tan(std::numbers::pi * zero_hz / fs_hz);
    const double c = wp / wz;
    return normalised(c * (k + wz), c * (wz - k), 0, k + wp, wp - k, 0);
}

/// Butterworth of even `order` as second-order sections.
std::vector<Biquad> butterworth(bool high, int order, double f_hz, double fs_hz) {
    std::vector<Biquad> s;
    for (int k = 1; k <= order / 2; ++k) {
        const double q = 1.0 / (2.0 * std::cos((2.0 * k - 1.0) * std::numbers::pi / (2.0 * order)));
        s.push_back(high ? highpass2(f_hz, fs_hz, q) : lowpass2(f_hz, fs_hz, q));
    }
    return s;
}

struct Chain {
    double gain = 1.0;
    std::vector<Biquad> sections;
};

/// Sections whose gain rises by tilt_db_per_decade * log10(f / f_ref) dB:
/// first-order shelves every quarter decade, centred from 5 Hz to 0.3 fs, each
/// stepping a quarter of the tilt (their transitions, about a decade wide,
/// blend into a straight line in dB against log f). Centres end at 0.3 fs, not
/// at the top, because the bilinear transform finishes a shelf near Nyquist
/// sooner than its analog prototype; with this span the line holds within 4 %
/// of the tilt from 20 Hz to 0.45 fs at 8..96 kHz sampling (computed from the
/// responses in the design; our choice of spacing and span).
Chain tilt_chain(double tilt_db_per_decade, double f_ref_hz, double fs_hz) {
    constexpr double kLowestCentreHz = 5.0, kTopCentreOfFs = 0.3, kSpacingDecades = 0.25;
    const double span_decades = std::log10(kTopCentreOfFs * fs_hz / kLowestCentreHz);
    const int steps = static_cast<int>(std::ceil(span_decades / kSpacingDecades));
    const double spacing = span_decades / steps;
    const double half_ratio = std::pow(10.0, tilt_db_per_decade * spacing / 40.0);  // sqrt(pole / zero)
    Chain c;
    for (int k = 0; k < steps; ++k) {
        const double centre_hz = kLowestCentreHz * std::pow(10.0, (k + 0.5) * spacing);
        c.sections.push_back(shelf1(centre_hz * half_ratio, centre_hz / half_ratio, fs_hz));
    }
    std::complex<double> at_ref = 1.0;
    for (const auto& sec : c.sections) at_ref *= sec.response(f_ref_hz / fs_hz);
    c.gain = 1.0 / std::abs(at_ref);
    return c;
}

/// Parallel sum of cascades: y = sum_i gain_i * (sections_i applied to x).
struct Path {
    std::vector<Chain> branches;

    std::complex<double> response(double nu) const {
        std::complex<double> h = 0;
        for (const auto& b : branches) {
            std::complex<double> hb = b.gain;
            for (const auto& s : b.sections) hb *= s.response(nu);
            h += hb;
        }
        return h;
    }

    /// Adds the filtered `x` to `out` (same length).
    void apply_add(const std::vector<double>& x, std::vector<double>& out) const {
        std::vector<double> y;
        for (const auto& b : branches) {
            y = x;
            for (const auto& s : b.sections) {
                double z1 = 0, z2 = 0;
                for (double& v : y) {
                    const double in = v;
                    const double o = s.b0 * in + z1;
                    z1 = s.b1 * in - s.a1 * o + z2;
                    z2 = s.b2 * in - s.a2 * o;
                    v = o;
                }
            }
            for (std::size_t n = 0; n < out.size(); ++n) out[n] += b.gain * y[n];
        }
    }
};

// ---------------------------------------------------------------------------
// The collapse/impact pulse: a Gaussian of sigma = half a sample period,
// averaged over each sample interval (what an anti-aliased recorder sees), so
// its samples always sum to the amplitude wherever it falls between samples.
// It spans 1..3 samples in practice.
constexpr double kPulseSigmaSamples = 0.5;
constexpr int kPulseFirstTap = -2;
constexpr int kPulseLastTap = 3;

double normal_cdf(double x) { return 0.5 * std::erfc(-x / std::numbers::sqrt2); }

double pulse_tap(int i, double frac) {
    return normal_cdf((i + 1 - frac) / kPulseSigmaSamples) - normal_cdf((i - frac) / kPulseSigmaSamples);
}

void add_pulse(std::vector<double>& e, double position_samples, double amplitude) {
    const double whole = std::floor(position_samples);
    const double frac = position_samples - whole;
    const auto n0 = static_cast<std::ptrdiff_t>(whole);
    const auto size = static_cast<std::ptrdiff_t>(e.size());
    for (int i = kPulseFirstTap; i <= kPulseLastTap; ++i) {
        const std::ptrdiff_t n = n0 + i;
        if (n >= 0 && n < size) e[static_cast<std::size_t>(n)] += amplitude * pulse_tap(i, frac);
    }
}

/// Power spectrum of one unit pulse, averaged over its position between samples:
/// S(nu) = r0 + 2 sum_d r_d cos(2 pi nu d) from the mean autocorrelation r_d.
double pulse_spectrum(double nu) {
    static const std::vector<double> r = [] {
        constexpr int kOffsets = 64;
        constexpr int kTaps = kPulseLastTap - kPulseFirstTap + 1;
        std::vector<double> acc(kTaps, 0.0);
        for (int j = 0; j < kOffsets; ++j) {
            const double frac = (j + 0.5) / kOffsets;
            std::array<double, kTaps> t{};
            for (int i = 0; i < kTaps; ++i) t[static_cast<std::size_t>(i)] = pulse_tap(i + kPulseFirstTap, frac);
            for (int d = 0; d < kTaps; ++d)
                for (int i = 0; i + d < kTaps; ++i)
                    acc[static_cast<std::size_t>(d)] += t[static_cast<std::size_t>(i)] * t[static_cast<std::size_t>(i + d)] / kOffsets;
        }
        return acc;
    }();
    double s = r[0];
    for (std::size_t d = 1; d < r.size(); ++d) s += 2.0 * r[d] * std::cos(kTwoPi * nu * static_cast<double>(d));
    return s;
}

/// One-sided integral over `band` of weight(nu) |H(nu)|^2, as the power that a
/// unit-variance white input (weight 1) produces in the band. Midpoint rule on
/// a logarithmic grid (0.05 % steps) so that both the 5 Hz corners and the
/// narrow resonances are resolved at any sample rate.
template <class Weight>
double band_power(const Path& path, Band band, double fs_hz, Weight weight) {
    const double hi = std::min(band.high_hz, 0.5 * fs_hz);
    constexpr double kFloorHz = 0.05;  // below: negligible (every path here is flat or falling there)
    const double lo = std::max(band.low_hz, kFloorHz);
    if (hi <= lo) return 0.0;
    const double span = std::log(hi / lo);
    const int points = std::max(2000, static_cast<int>(std::ceil(span / 5e-4)));
    const double step = span / points;
    auto g = [&](double f_hz) {
        const double nu = f_hz / fs_hz;
        return weight(nu) * std::norm(path.response(nu));
    };
    double sum = 0.0;
    for (int i = 0; i < points; ++i) {
        const double f = lo * std::exp((i + 0.5) * step);
        sum += g(f) * f * step;
    }
    if (band.low_hz < kFloorHz) sum += g(kFloorHz) * (kFloorHz - std::max(band.low_hz, 0.0));
    return 2.0 * sum / fs_hz;
}

double noise_band_power(const Path& p, Band b, double fs_hz) {
    return band_power(p, b, fs_hz, [](double) { return 1.0; });
}
/// Expected band power of a train of unit pulses at one pulse per sample.
double pulse_band_power(const Path& p, Band b, double fs_hz) {
    return band_power(p, b, fs_hz, [](double nu) { return pulse_spectrum(nu); });
}

void add_white_through(const Path& path, double sigma, Rng& rng, std::vector<double>& out) {
    if (!(sigma > 0)) return;
    std::vector<double> w(out.size());
    for (double& v : w) v = sigma * rng.gaussian();
    path.apply_add(w, out);
}

double db_to_power_ratio(double db) { return std::pow(10.0, db / 10.0); }

// ---------------------------------------------------------------------------
// The fault-free background (rms in g): a flat floor that also drives the
// resonances, and a pink-ish part below 1 kHz. Together about 0.06 g rms.
constexpr double kFloorRmsG = 0.03;
constexpr double kPinkRmsG = 0.05;

struct Tone {
    double f_hz;
    double amplitude_g;
    double phase_rad;
};

struct Structure {
    Path bank;        // the three resonances
    Path floor_path;  // flat floor: direct + bank
    Path pink_path;   // -10 dB/decade from 10 Hz, rolling off above 1 kHz
    Path pulse_path;  // collapse pulses: direct above the first mode + bank
};

Structure make_structure(const Machine& m) {
    const double fs = m.fs_hz;
    Structure s;
    for (const auto& mode : m.modes)
        s.bank.branches.push_back({mode.gain, {bandpass2(mode.fraction_of_fs * fs, fs, 1.0 / (2.0 * mode.damping_ratio))}});
    s.floor_path.branches.push_back({1.0, {}});
    for (const auto& b : s.bank.branches) s.floor_path.branches.push_back(b);
    // Poles every 2/3 decade with zeros half-way give -10 dB/decade on average.
    s.pink_path.branches.push_back({1.0,
                                    {highpass2(5.0, fs, std::numbers::sqrt2 / 2), shelf1(10.0, 21.5, fs),
                                     shelf1(46.4, 100.0, fs), shelf1(215.0, 464.0, fs),
                                     lowpass2(1000.0, fs, std::numbers::sqrt2 / 2)}});
    // A casing is stiff below its first mode: a collapse reaches the sensor
    // directly only above about half that frequency (4th order, so that the
    // collapses add almost nothing below 1 kHz even at 12.8 kHz sampling).
    const double direct_hp_hz = 0.5 * m.modes[0].fraction_of_fs * fs;
    s.pulse_path.branches.push_back({1.0, butterworth(true, 4, direct_hp_hz, fs)});
    for (const auto& b : s.bank.branches) s.pulse_path.branches.push_back(b);
    return s;
}

/// Where a bearing impact goes: it rings one resonance, and a little reaches the
/// sensor directly.
Path impact_path(const Structure& st, const Machine& m, int mode_index) {
    const double fs = m.fs_hz;
    const Mode& mode = m.modes[static_cast<std::size_t>(mode_index)];
    Path path;
    path.branches.push_back({mode.gain, {bandpass2(mode.fraction_of_fs * fs, fs, 1.0 / (2.0 * mode.damping_ratio))}});
    path.branches.push_back({0.15, st.pulse_path.branches[0].sections});
    return path;
}

void validate(const CaseSpec& spec) {
    const Machine& m = spec.machine;
    auto fail = [&](const std::string& what) {
        throw std::invalid_argument("synthesize " + (m.tag.empty() ? std::string("(untagged)") : m.tag) + ": " + what);
    };
    if (!(m.fs_hz >= 8000.0 && m.fs_hz <= 1.0e6)) fail("fs_hz must be within 8 000..1 000 000 Hz");
    if (!(spec.duration_s > 0.0 && spec.duration_s <= 7200.0)) fail("duration_s must be within (0, 7200] s");
    if (!(m.rpm >= 60.0 && m.rpm <= 60000.0)) fail("rpm must be within 60..60 000");
    if (m.vanes < 1 || m.vanes > 40) fail("vanes must be within 1..40");
    if (!(spec.rpm_override >= 0.0 && spec.rpm_override <= 60000.0)) fail("rpm_override must be 0 or up to 60 000");
    if (!(spec.severity >= 0.0 && spec.severity <= 1.0)) fail("severity must be within 0..1");
    if (!(spec.level_speed_exponent_hf >= 0.0 && spec.level_speed_exponent_hf <= 4.0) ||
        !(spec.level_speed_exponent_lf >= 0.0 && spec.level_speed_exponent_lf <= 4.0))
        fail("level_speed_exponent_hf and _lf must be within 0..4");
    if (!(spec.gain_db >= -40.0 && spec.gain_db <= 40.0)) fail("gain_db must be within -40..40 dB");
    if (!(spec.tilt_db_per_decade >= -6.0 && spec.tilt_db_per_decade <= 6.0))
        fail("tilt_db_per_decade must be within -6..6 dB/decade");
    if (!(spec.step_db >= 0.0 && spec.step_db <= 40.0)) fail("step_db must be within 0..40 dB");
    if (!(spec.step_at_s >= 0.0 && spec.step_at_s <= spec.duration_s)) fail("step_at_s must be within 0..duration_s");
    for (const auto& mode : m.modes) {
        if (!(mode.fraction_of_fs > 0.0 && mode.fraction_of_fs < 0.4)) fail("each mode must lie below 0.4 fs");
        if (!(mode.damping_ratio > 0.0 && mode.damping_ratio < 0.5)) fail("mode damping ratio must be within (0, 0.5)");
        if (!(mode.gain >= 0.0)) fail("mode gain must be >= 0");
    }
}

void check_params(const FaultParams& p, Kind kind) {
    auto fail = [](const std::string& what) { throw std::invalid_argument("fault parameters: " + what); };
    const auto& c = p.cavitation;
    if (kind == Kind::incipient || kind == Kind::developed) {
        if (!(c.collapse_rate_per_s > 0.0 && c.collapse_rate_per_s <= 1.0e6)) fail("collapse_rate_per_s must be within (0, 1e6]");
        if (!(c.bpf_depth >= 0.0 && c.bpf_depth <= 1.0) || !(c.shaft_depth >= 0.0 && c.shaft_depth <= 1.0))
            fail("modulation depths must be within 0..1");
        if (!(c.amplitude_sigma_ln >= 0.0 && c.amplitude_sigma_ln <= 3.0)) fail("amplitude_sigma_ln must be within 0..3");
        if (!(c.hf_rise_db > 0.0 && c.hf_rise_db <= 60.0)) fail("hf_rise_db must be within (0, 60]");
        if (!(c.lf_rise_db >= 0.0 && c.lf_rise_db <= 30.0)) fail("lf_rise_db must be within 0..30");
    }
    if (kind == Kind::bearing) {
        const auto& b = p.bearing;
        if (!(b.order >= 0.5 && b.order <= 50.0)) fail("bearing order must be within 0.5..50");
        if (!(b.slip_frac >= 0.0 && b.slip_frac <= 0.2)) fail("bearing slip_frac must be within 0..0.2");
        if (b.mode_index < 0 || b.mode_index > 2) fail("bearing mode_index must be 0, 1 or 2");
        if (!(b.hf_rise_db > 0.0 && b.hf_rise_db <= 60.0)) fail("bearing hf_rise_db must be within (0, 60]");
        if (!(b.amplitude_spread >= 0.0 && b.amplitude_spread <= 1.0)) fail("bearing amplitude_spread must be within 0..1");
    }
    if (kind == Kind::inner_race) {
        const auto& b = p.inner_race;
        if (!(b.order >= 0.5 && b.order <= 50.0)) fail("inner-race order must be within 0.5..50");
        if (!(b.slip_frac >= 0.0 && b.slip_frac <= 0.2)) fail("inner-race slip_frac must be within 0..0.2");
        if (!(b.load_depth >= 0.0 && b.load_depth <= 1.0) || !(b.load_depth_2x >= 0.0 && b.load_depth_2x <= 1.0))
            fail("inner-race load depths must be within 0..1");
        if (b.mode_index < 0 || b.mode_index > 2) fail("inner-race mode_index must be 0, 1 or 2");
        if (!(b.hf_rise_db > 0.0 && b.hf_rise_db <= 60.0)) fail("inner-race hf_rise_db must be within (0, 60]");
        if (!(b.amplitude_spread >= 0.0 && b.amplitude_spread <= 1.0)) fail("inner-race amplitude_spread must be within 0..1");
    }
    if (kind == Kind::turbulence) {
        const auto& t = p.turbulence;
        if (!(t.lf_rise_db > 0.0 && t.lf_rise_db <= 40.0)) fail("turbulence lf_rise_db must be within (0, 40]");
        if (!(t.low_hz > 0.0 && t.high_hz > t.low_hz && t.high_hz <= 1000.0)) fail("turbulence band must lie within (0, 1000] Hz");
    }
    if (kind == Kind::mains) {
        if (!(p.mains.mains_hz >= 40.0 && p.mains.mains_hz <= 70.0)) fail("mains_hz must be within 40..70");
        if (!(p.mains.amplitude_g >= 0.0 && p.mains.amplitude_g <= 10.0)) fail("mains amplitude_g must be within 0..10");
    }
    if (kind == Kind::speed && !(std::abs(p.speed.offset_frac) <= 0.5)) fail("speed offset_frac must be within -0.5..0.5");
}

}  // namespace

// ---------------------------------------------------------------------------
std::string label_of(Kind kind) {
    switch (kind) {
        case Kind::incipient: return "incipient";
        case Kind::developed: return "developed";
        default: return "normal";
    }
}

std::string name_of(Kind kind) {
    switch (kind) {
        case Kind::healthy: return "healthy";
        case Kind::incipient: return "incipient";
        case Kind::developed: return "developed";
        case Kind::bearing: return "bearing";
        case Kind::turbulence: return "turbulence";
        case Kind::mains: return "mains";
        case Kind::speed: return "speed";
        case Kind::inner_race: return "inner_race";
    }
    return "healthy";
}

Kind kind_from_name(std::string_view name) {
    for (Kind k : kEveryKind)
        if (name_of(k) == name) return k;
    throw std::invalid_argument("unknown kind '" + std::string(name) +
                                "' (healthy, incipient, developed, bearing, turbulence, mains, speed, inner_race)");
}

const std::vector<Machine>& scenario_machines() {
    static const std::vector<Machine> machines{
        {"OW-P101", 1485.0, 7, 25600.0, "raw-water lift pump", {{{0.112, 0.030, 5.0}, {0.226, 0.025, 6.0}, {0.358, 0.040, 5.0}}}},
        {"OW-P102", 2960.0, 5, 51200.0, "treated-water booster", {{{0.105, 0.030, 4.5}, {0.214, 0.022, 6.5}, {0.371, 0.028, 4.0}}}},
        {"OW-P103", 985.0, 6, 12800.0, "backwash pump", {{{0.118, 0.025, 5.5}, {0.232, 0.030, 5.0}, {0.347, 0.050, 4.5}}}},
    };
    return machines;
}

const Machine& drive_machine() {
    // Our invention: a clear-well transfer pump on a variable-speed drive, its
    // three modes placed apart from the other pumps'.
    static const Machine machine{"OW-P104", 1780.0, 5, 25600.0, "clear-well transfer pump (variable-speed drive)",
                                 {{{0.108, 0.028, 5.0}, {0.219, 0.024, 6.0}, {0.366, 0.036, 4.5}}}};
    return machine;
}

const std::vector<Machine>& every_machine() {
    static const std::vector<Machine> machines = [] {
        std::vector<Machine> v = scenario_machines();
        v.push_back(drive_machine());
        return v;
    }();
    return machines;
}

const Machine& machine_by_tag(std::string_view tag) {
    for (const auto& m : every_machine())
        if (m.tag == tag) return m;
    throw std::invalid_argument("unknown machine '" + std::string(tag) + "' (OW-P101, OW-P102, OW-P103, OW-P104)");
}

Band hf_band(double fs_hz) { return {0.2 * fs_hz, 0.45 * fs_hz}; }
Band lf_band() { return {0.0, 1000.0}; }

std::uint64_t derive_seed(std::uint64_t master, std::uint64_t index) {
    // splitmix64 of a mix of both, so nearby (master, index) pairs are unrelated.
    std::uint64_t z = master ^ (index * 0x9E3779B97F4A7C15ULL + 0xD1B54A32D192ED03ULL);
    z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ULL;
    z = (z ^ (z >> 27)) * 0x94D049BB133111EBULL;
    z += 0x9E3779B97F4A7C15ULL;
    z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ULL;
    z = (z ^ (z >> 27)) * 0x94D049BB133111EBULL;
    return z ^ (z >> 31);
}

FaultParams draw_params(Kind kind, double severity, std::uint64_t seed) {
    if (!(severity >= 0.0 && severity <= 1.0)) throw std::invalid_argument("severity must be within 0..1");
    const double s = severity;
    Rng rng(derive_seed(seed, kStreamParams));
    FaultParams p;
    // Drawn in a fixed order whatever the kind, so a kind's draws never shift another's.
    // Blade-pass modulation depth: 0.4..0.9 for sparse collapses; developed
    // cavities persist through the whole blade passage, so 0.4..0.7 there.
    const double depth_u = rng.uniform();
    p.cavitation.bpf_depth = kind == Kind::developed ? 0.4 + 0.3 * depth_u : 0.4 + 0.5 * depth_u;
    p.cavitation.shaft_depth = rng.uniform(0.1, 0.3);
    {
        // Outer-race order in 3..5.6, at least 0.15 from any integer:
        // [3.15, 3.85] u [4.15, 4.85] u [5.15, 5.6] (total length 1.85).
        double u = rng.uniform(0.0, 1.85);
        p.bearing.order = u < 0.7 ? 3.15 + u : (u < 1.4 ? 4.15 + (u - 0.7) : 5.15 + (u - 1.4));
    }
    p.bearing.slip_frac = rng.uniform(0.01, 0.02);
    // One of the two modes inside the HF band; mostly the higher, more damped
    // one, whose short ring-down makes the impacts stand out most.
    p.bearing.mode_index = rng.uniform() < 1.0 / 3.0 ? 1 : 2;
    p.mains.mains_hz = 50.0 + rng.uniform(-0.05, 0.05);
    const double speed_sign = rng.uniform() < 0.5 ? -1.0 : 1.0;
    {
        // Inner-race order (BPFI / f_r) in 4.6..6.4, at least 0.15 from any integer:
        // [4.6, 4.85] u [5.15, 5.85] u [6.15, 6.4] (total length 1.2). BPFI =
        // 0.5 n (1 + d/D cos alpha) f_r (the kinematic formula, from memory): about
        // 4.8..7.5 f_r for 8..12 rolling elements with d/D 0.2..0.25; the range
        // and the load-zone depths are our choice.
        const double u = rng.uniform(0.0, 1.2);
        p.inner_race.order = u < 0.25 ? 4.6 + u : (u < 0.95 ? 5.15 + (u - 0.25) : 6.15 + (u - 0.95));
    }
    p.inner_race.slip_frac = rng.uniform(0.01, 0.02);
    p.inner_race.load_depth = rng.uniform(0.5, 0.9);
    p.inner_race.load_depth_2x = p.inner_race.load_depth * rng.uniform(0.2, 0.4);
    p.inner_race.mode_index = rng.uniform() < 1.0 / 3.0 ? 1 : 2;

    if (kind == Kind::developed) {
        p.cavitation.collapse_rate_per_s = 2000.0 * std::pow(10.0, s);
        p.cavitation.hf_rise_db = 11.0 + 13.0 * s;
        p.cavitation.lf_rise_db = 2.0 + 2.0 * s;
    } else {
        p.cavitation.collapse_rate_per_s = 20.0 * std::pow(7.5, s);
        p.cavitation.hf_rise_db = 3.5 + 4.0 * s;
        p.cavitation.lf_rise_db = 0.0;
    }
    p.bearing.hf_rise_db = 6.0 + 9.0 * s;
    p.inner_race.hf_rise_db = 6.0 + 9.0 * s;
    p.turbulence.lf_rise_db = 6.0 + 6.0 * s;
    p.mains.amplitude_g = 0.1 + 0.3 * s;
    p.speed.offset_frac = speed_sign * (0.02 + 0.02 * s);
    return p;
}

Recording synthesize_recording(const CaseSpec& spec) {
    validate(spec);
    const Machine& m = spec.machine;
    const double fs = m.fs_hz;
    Recording rec;
    rec.fs_hz = fs;
    rec.params = spec.params ? *spec.params : draw_params(spec.kind, spec.severity, spec.seed);
    check_params(rec.params, spec.kind);
    const FaultParams& fp = rec.params;

    rec.rpm = spec.rpm_override > 0.0 ? spec.rpm_override
              : spec.kind == Kind::speed ? m.rpm * (1.0 + fp.speed.offset_frac)
                                         : m.rpm;
    const double f1_hz = rec.rpm / 60.0;
    const double bpf_hz = m.vanes * f1_hz;

    // Half a second of pre-roll lets every filter (5 Hz corners) settle; it is
    // dropped, so the first sample is already stationary.
    const auto n_out = static_cast<std::size_t>(std::llround(spec.duration_s * fs));
    const auto n_pre = static_cast<std::size_t>(std::llround(0.5 * fs));
    const std::size_t n_all = n_out + n_pre;
    const double t_start_s = -static_cast<double>(n_pre) / fs;
    const double t_end_s = static_cast<double>(n_out) / fs;

    const Structure st = make_structure(m);
    const Band hf = spec.rise_band.high_hz > 0.0 ? spec.rise_band : hf_band(fs), lf = lf_band();

    // Tones: shaft 1x..3x and blade pass 1x, 2x, amplitude +-10 % per recording.
    std::vector<Tone> tones;
    {
        Rng rng(derive_seed(spec.seed, kStreamTones));
        const std::array<std::pair<double, double>, 5> nominal{
            {{f1_hz, 0.05}, {2 * f1_hz, 0.02}, {3 * f1_hz, 0.01}, {bpf_hz, 0.08}, {2 * bpf_hz, 0.03}}};
        for (const auto& [f, a] : nominal) {
            const double amp = a * rng.uniform(0.9, 1.1);
            const double phase = rng.uniform(0.0, kTwoPi);
            if (f < 0.45 * fs) tones.push_back({f, amp, phase});
        }
    }
    // Speed scaling of levels (1 unless an exponent is set: x * 1.0 is exact, so
    // a spec without it keeps its samples bit for bit).
    const double speed_ratio = rec.rpm / m.rpm;
    const double hf_speed_gain =
        spec.level_speed_exponent_hf != 0.0 ? std::pow(speed_ratio, spec.level_speed_exponent_hf) : 1.0;
    const double lf_speed_gain =
        spec.level_speed_exponent_lf != 0.0 ? std::pow(speed_ratio, spec.level_speed_exponent_lf) : 1.0;
    for (auto& tone : tones) tone.amplitude_g *= lf_speed_gain;
    const std::size_t machine_tones = tones.size();
    if (spec.kind == Kind::mains) {
        // Pickup at the grid frequency; odd harmonics (magnetic) stronger than even.
        Rng rng(derive_seed(spec.seed, kStreamMains));
        for (int h = 1; h * fp.mains.mains_hz <= 1000.0; ++h) {
            const double rel = h == 1 ? 1.0 : (h % 2 == 1 ? 0.9 / h : 0.25 / h);
            const double phase = rng.uniform(0.0, kTwoPi);
            if (h * fp.mains.mains_hz < 0.45 * fs) tones.push_back({h * fp.mains.mains_hz, fp.mains.amplitude_g * rel, phase});
        }
    }

    // Background levels and the fault-free band powers (expected, g^2).
    const double sigma_floor =
        hf_speed_gain * kFloorRmsG / std::sqrt(noise_band_power(st.floor_path, {0.0, 0.5 * fs}, fs));
    const double sigma_pink =
        lf_speed_gain * kPinkRmsG / std::sqrt(noise_band_power(st.pink_path, {0.0, 0.5 * fs}, fs));
    double tone_lf = 0.0;  // only the shaft/vane tones: the mains "fault" is not part of the reference
    for (std::size_t i = 0; i < machine_tones; ++i)
        if (tones[i].f_hz <= lf.high_hz) tone_lf += 0.5 * tones[i].amplitude_g * tones[i].amplitude_g;
    const double bg_hf = sigma_floor * sigma_floor * noise_band_power(st.floor_path, hf, fs) +
                         sigma_pink * sigma_pink * noise_band_power(st.pink_path, hf, fs);
    const double bg_lf = sigma_floor * sigma_floor * noise_band_power(st.floor_path, lf, fs) +
                         sigma_pink * sigma_pink * noise_band_power(st.pink_path, lf, fs) + tone_lf;
    rec.healthy_hf_rms_g = std::sqrt(bg_hf);
    rec.healthy_lf_rms_g = std::sqrt(bg_lf);

    std::vector<double> x(n_all, 0.0);
    {
        Rng rng(derive_seed(spec.seed, kStreamFloor));
        add_white_through(st.floor_path, sigma_floor, rng, x);
    }
    {
        Rng rng(derive_seed(spec.seed, kStreamPink));
        add_white_through(st.pink_path, sigma_pink, rng, x);
    }
    if (spec.step_db > 0.0) {
        // More of the same floor from step_at_s on, kept above 1 kHz by a 4th-order
        // high-pass (our choice): independent noise adds power, so its variance is
        // set for exactly step_db more in hf_band() (the pink part there is negligible).
        Path extra = st.floor_path;
        for (auto& b : extra.branches)
            for (const auto& sec : butterworth(true, 4, 1000.0, fs)) b.sections.push_back(sec);
        const double var = bg_hf * (db_to_power_ratio(spec.step_db) - 1.0) / noise_band_power(extra, hf, fs);
        const auto first = n_pre + static_cast<std::size_t>(std::llround(spec.step_at_s * fs));
        Rng rng(derive_seed(spec.seed, kStreamStep));
        std::vector<double> w(n_all, 0.0);
        for (std::size_t n = first; n < n_all; ++n) w[n] = std::sqrt(var) * rng.gaussian();
        extra.apply_add(w, x);
    }

    if (spec.kind == Kind::incipient || spec.kind == Kind::developed) {
        const CavitationParams& c = fp.cavitation;
        const double per_sample = c.collapse_rate_per_s / fs;
        const double mean_sq = std::exp(2.0 * c.amplitude_sigma_ln * c.amplitude_sigma_ln);  // E[A^2] at median 1
        const double cav_hf1 = per_sample * mean_sq * pulse_band_power(st.pulse_path, hf, fs);
        const double cav_lf1 = per_sample * mean_sq * pulse_band_power(st.pulse_path, lf, fs);
        const double want_hf = bg_hf * (db_to_power_ratio(c.hf_rise_db) - 1.0);
        const double want_lf = bg_lf * (db_to_power_ratio(c.lf_rise_db) - 1.0);
        // Flow unsteadiness: broadband below 1 kHz.
        Path unsteady;
        unsteady.branches.push_back({1.0, {highpass2(5.0, fs, std::numbers::sqrt2 / 2)}});
        for (const auto& s : butterworth(false, 4, 1000.0, fs)) unsteady.branches[0].sections.push_back(s);
        double amp_sq = want_hf / cav_hf1, unsteady_var = 0.0;
        if (c.lf_rise_db > 0.0) {
            // Both bands at once: the collapses leak a little into < 1 kHz and
            // the unsteadiness a little into the HF band.
            const double u_hf1 = noise_band_power(unsteady, hf, fs), u_lf1 = noise_band_power(unsteady, lf, fs);
            const double det = cav_hf1 * u_lf1 - u_hf1 * cav_lf1;
            unsteady_var = (cav_hf1 * want_lf - cav_lf1 * want_hf) / det;
            amp_sq = (want_hf * u_lf1 - u_hf1 * want_lf) / det;
            if (unsteady_var < 0.0) {  // collapses alone already exceed the LF target
                unsteady_var = 0.0;
                amp_sq = want_hf / cav_hf1;
            }
        }
        const double median_g = std::sqrt(std::max(amp_sq, 0.0));
        rec.pulse_amplitude_g = median_g;

        // Poisson collapses with rate lambda0 (1 + m cos(BPF)) (1 + m1 cos(1x)),
        // by thinning a homogeneous process at the peak rate. Both factors have
        // zero-mean cosines at different harmonics, so the mean rate is lambda0.
        Rng rng(derive_seed(spec.seed, kStreamEvents));
        const double phi_bpf = rng.uniform(0.0, kTwoPi), phi_1x = rng.uniform(0.0, kTwoPi);
        const double peak_rate = c.collapse_rate_per_s * (1.0 + c.bpf_depth) * (1.0 + c.shaft_depth);
        std::vector<double> e(n_all, 0.0);
        for (double t = t_start_s + rng.exponential_s(peak_rate); t < t_end_s; t += rng.exponential_s(peak_rate)) {
            const double rate = c.collapse_rate_per_s * (1.0 + c.bpf_depth * std::cos(kTwoPi * bpf_hz * t + phi_bpf)) *
                                (1.0 + c.shaft_depth * std::cos(kTwoPi * f1_hz * t + phi_1x));
            if (rng.uniform() * peak_rate >= rate) continue;
            const double a = median_g * std::exp(c.amplitude_sigma_ln * rng.gaussian());
            add_pulse(e, (t - t_start_s) * fs, a);
        }
        st.pulse_path.apply_add(e, x);
        Rng noise(derive_seed(spec.seed, kStreamFaultNoise));
        add_white_through(unsteady, std::sqrt(unsteady_var), noise, x);
    } else if (spec.kind == Kind::bearing) {
        const BearingParams& b = fp.bearing;
        const Path path = impact_path(st, m, b.mode_index);
        const double rate_per_s = b.order * f1_hz;
        const double mean_sq = 1.0 + b.amplitude_spread * b.amplitude_spread;
        const double per_impact = (rate_per_s / fs) * mean_sq * pulse_band_power(path, hf, fs);
        const double amp_g = std::sqrt(bg_hf * (db_to_power_ratio(b.hf_rise_db) - 1.0) / per_impact);
        rec.pulse_amplitude_g = amp_g;
        Rng rng(derive_seed(spec.seed, kStreamEvents));
        const double interval_s = 1.0 / rate_per_s;
        std::vector<double> e(n_all, 0.0);
        for (double t = t_start_s + rng.uniform() * interval_s; t < t_end_s;
             t += interval_s * std::max(0.5, 1.0 + b.slip_frac * rng.gaussian())) {
            const double a = amp_g * std::max(0.2, 1.0 + b.amplitude_spread * rng.gaussian());
            add_pulse(e, (t - t_start_s) * fs, a);
        }
        path.apply_add(e, x);
    } else if (spec.kind == Kind::inner_race) {
        const InnerRaceParams& b = fp.inner_race;
        const Path path = impact_path(st, m, b.mode_index);
        Rng rng(derive_seed(spec.seed, kStreamEvents));
        const double phi = rng.uniform(0.0, kTwoPi), phi2 = rng.uniform(0.0, kTwoPi);
        auto load = [&](double t) {
            return std::max(0.0, 1.0 + b.load_depth * std::cos(kTwoPi * f1_hz * t + phi) +
                                     b.load_depth_2x * std::cos(2.0 * kTwoPi * f1_hz * t + phi2));
        };
        // At a non-integer order the impacts meet every angle of the shaft alike,
        // so E[A^2] takes the mean of a^2 over one revolution (midpoint rule on
        // 3600 angles: a is smooth but for its clipped zero, well resolved).
        double load_sq = 0.0;
        constexpr int kAngles = 3600;
        for (int i = 0; i < kAngles; ++i) {
            const double a = load((i + 0.5) / (kAngles * f1_hz));
            load_sq += a * a / kAngles;
        }
        const double rate_per_s = b.order * f1_hz;
        const double mean_sq = load_sq * (1.0 + b.amplitude_spread * b.amplitude_spread);
        const double per_impact = (rate_per_s / fs) * mean_sq * pulse_band_power(path, hf, fs);
        const double amp_g = std::sqrt(bg_hf * (db_to_power_ratio(b.hf_rise_db) - 1.0) / per_impact);
        rec.pulse_amplitude_g = amp_g;
        const double interval_s = 1.0 / rate_per_s;
        std::vector<double> e(n_all, 0.0);
        for (double t = t_start_s + rng.uniform() * interval_s; t < t_end_s;
             t += interval_s * std::max(0.5, 1.0 + b.slip_frac * rng.gaussian())) {
            const double a = amp_g * load(t) * std::max(0.2, 1.0 + b.amplitude_spread * rng.gaussian());
            add_pulse(e, (t - t_start_s) * fs, a);
        }
        path.apply_add(e, x);
    } else if (spec.kind == Kind::turbulence) {
        const TurbulenceParams& tp = fp.turbulence;
        Path path;
        path.branches.push_back({1.0, butterworth(true, 4, tp.low_hz, fs)});
        // 10th order: 19 dB down at 1 kHz, 35 dB at 1.2 kHz, so nothing above ~1 kHz.
        for (const auto& s : butterworth(false, 10, tp.high_hz, fs)) path.branches[0].sections.push_back(s);
        const double var = bg_lf * (db_to_power_ratio(tp.lf_rise_db) - 1.0) / noise_band_power(path, lf, fs);
        Rng rng(derive_seed(spec.seed, kStreamFaultNoise));
        add_white_through(path, std::sqrt(var), rng, x);
    }

    rec.g.resize(n_out);
    if (spec.tilt_db_per_decade == 0.0 && spec.gain_db == 0.0) {
        for (std::size_t n = 0; n < n_out; ++n) {
            const double t = static_cast<double>(n) / fs;
            double v = x[n + n_pre];
            for (const auto& tone : tones) v += tone.amplitude_g * std::sin(kTwoPi * tone.f_hz * t + tone.phase_rad);
            rec.g[n] = static_cast<float>(v);
        }
        return rec;
    }
    // A re-mount changes what the sensor sees of everything: the tones join the
    // rest over the pre-roll too, so the tilt's sections have settled by sample 0.
    for (std::size_t i = 0; i < n_all; ++i) {
        const double t = (static_cast<double>(i) - static_cast<double>(n_pre)) / fs;
        for (const auto& tone : tones) x[i] += tone.amplitude_g * std::sin(kTwoPi * tone.f_hz * t + tone.phase_rad);
    }
    Path mount;
    if (spec.tilt_db_per_decade != 0.0) mount.branches.push_back(tilt_chain(spec.tilt_db_per_decade, 1000.0, fs));
    else mount.branches.push_back({1.0, {}});
    mount.branches[0].gain *= std::pow(10.0, spec.gain_db / 20.0);
    std::vector<double> y(n_all, 0.0);
    mount.apply_add(x, y);
    for (std::size_t n = 0; n < n_out; ++n) rec.g[n] = static_cast<float>(y[n + n_pre]);
    return rec;
}

std::vector<float> synthesize(const CaseSpec& spec) { return synthesize_recording(spec).g; }

// ---------------------------------------------------------------------------
// Files.
std::string name_of(Encoding encoding) {
    switch (encoding) {
        case Encoding::pcm16: return "pcm16";
        case Encoding::pcm24: return "pcm24";
        case Encoding::float32: return "float";
        case Encoding::flac16: return "flac16";
    }
    return "pcm16";
}

Encoding encoding_from_name(std::string_view name) {
    for (Encoding e : {Encoding::pcm16, Encoding::pcm24, Encoding::float32, Encoding::flac16})
        if (name_of(e) == name) return e;
    throw std::invalid_argument("unknown encoding '" + std::string(name) + "' (pcm16, pcm24, float, flac16)");
}

int sf_format_of(Encoding encoding) {
    switch (encoding) {
        case Encoding::pcm16: return SF_FORMAT_WAV | SF_FORMAT_PCM_16;
        case Encoding::pcm24: return SF_FORMAT_WAV | SF_FORMAT_PCM_24;
        case Encoding::float32: return SF_FORMAT_WAV | SF_FORMAT_FLOAT;
        case Encoding::flac16: return SF_FORMAT_FLAC | SF_FORMAT_PCM_16;
    }
    return SF_FORMAT_WAV | SF_FORMAT_PCM_16;
}

std::string extension_of(Encoding encoding) { return encoding == Encoding::flac16 ? ".flac" : ".wav"; }

namespace {

struct SndfileCloser {
    void operator()(SNDFILE* f) const { sf_close(f); }
};

void rename_into_place(const std::string& tmp, const std::string& path) {
    std::error_code ec;
    std::filesystem::rename(tmp, path, ec);
    if (ec) {
        std::filesystem::remove(tmp, ec);
        throw std::runtime_error("cannot write '" + path + "': rename from temporary file failed");
    }
}

std::string fmt_number(double v, int max_decimals) {
    char buf[64];
    std::snprintf(buf, sizeof buf, "%.*f", max_decimals, v);
    std::string s(buf);
    if (s.find('.') != std::string::npos) {
        while (!s.empty() && s.back() == '0') s.pop_back();
        if (!s.empty() && s.back() == '.') s.pop_back();
    }
    return s == "-0" ? "0" : s;
}

void write_text_atomically(const std::filesystem::path& path, const std::string& text) {
    const std::string tmp = path.string() + ".tmp";
    {
        std::ofstream out(tmp, std::ios::binary | std::ios::trunc);
        if (!out) throw std::runtime_error("cannot write '" + path.string() + "': cannot create file");
        out << text;
        out.flush();
        if (!out) throw std::runtime_error("cannot write '" + path.string() + "': write failed");
    }
    rename_into_place(tmp, path.string());
}

}  // namespace

std::size_t write_wav(const std::string& path, std::span<const float> g, double fs_hz, double full_scale_g,
                      int sf_format) {
    if (!(full_scale_g > 0.0)) throw std::invalid_argument("write_wav '" + path + "': full_scale_g must be > 0");
    const double rate = std::round(fs_hz);
    if (!(rate >= 1.0 && rate <= 2.0e6) || std::abs(rate - fs_hz) > 1e-6)
        throw std::invalid_argument("write_wav '" + path + "': sample rate must be a whole number of Hz");
    SF_INFO info{};
    info.samplerate = static_cast<int>(rate);
    info.channels = 1;
    info.format = sf_format;
    if (!sf_format_check(&info)) throw std::invalid_argument("write_wav '" + path + "': unsupported sound file format");

    const std::string tmp = path + ".tmp";
    std::unique_ptr<SNDFILE, SndfileCloser> file(sf_open(tmp.c_str(), SFM_WRITE, &info));
    if (!file) throw std::runtime_error("cannot write '" + path + "': " + sf_strerror(nullptr));
    // The PEAK chunk carries a time stamp, which would make float files differ run to run.
    sf_command(file.get(), SFC_SET_ADD_PEAK_CHUNK, nullptr, SF_FALSE);

    std::size_t clipped = 0;
    constexpr std::size_t kBlock = 1 << 15;
    std::vector<float> buf(kBlock);
    const double scale = 1.0 / full_scale_g;
    for (std::size_t i = 0; i < g.size(); i += kBlock) {
        const std::size_t n = std::min(kBlock, g.size() - i);
        for (std::size_t k = 0; k < n; ++k) {
            double v = static_cast<double>(g[i + k]) * scale;
            if (v > 1.0 || v < -1.0) {
                ++clipped;
                v = std::clamp(v, -1.0, 1.0);
            }
            buf[k] = static_cast<float>(v);
        }
        if (sf_writef_float(file.get(), buf.data(), static_cast<sf_count_t>(n)) != static_cast<sf_count_t>(n)) {
            const std::string why = sf_strerror(file.get());
            file.reset();
            std::error_code ec;
            std::filesystem::remove(tmp, ec);
            throw std::runtime_error("cannot write '" + path + "': " + why);
        }
    }
    if (sf_close(file.release()) != 0) {
        std::error_code ec;
        std::filesystem::remove(tmp, ec);
        throw std::runtime_error("cannot write '" + path + "': closing the file failed");
    }
    rename_into_place(tmp, path);
    return clipped;
}

namespace {

std::size_t check_channels(const std::string& path, const std::vector<std::vector<float>>& channels, double fs_hz,
                           std::size_t max_channels) {
    if (channels.empty() || channels.size() > max_channels)
        throw std::invalid_argument("'" + path + "': give 1.." + std::to_string(max_channels) + " channels");
    for (const auto& c : channels)
        if (c.size() != channels.front().size() || c.empty())
            throw std::invalid_argument("'" + path + "': the channels must be of one non-zero length");
    if (!(fs_hz > 0.0)) throw std::invalid_argument("'" + path + "': the sample rate must be > 0");
    return channels.front().size();
}

// "2026-08-03T09:35:00" as UFF ID line 3 writes a date: "03-Aug-26 09:35:00".
std::string uff_date(const std::string& iso) {
    static constexpr std::array<const char*, 12> kMonths{"Jan", "Feb", "Mar", "Apr", "May", "Jun",
                                                        "Jul", "Aug", "Sep", "Oct", "Nov", "Dec"};
    const int month = iso.size() >= 19 ? std::stoi(iso.substr(5, 2)) : 0;
    if (month < 1 || month > 12) throw std::invalid_argument("not a date and time: '" + iso + "'");
    return iso.substr(8, 2) + "-" + kMonths[static_cast<std::size_t>(month - 1)] + "-" + iso.substr(2, 2) + " " +
           iso.substr(11, 8);
}

std::string printf_string(const char* fmt, auto... args) {
    char buf[256];
    std::snprintf(buf, sizeof buf, fmt, args...);
    return buf;
}

}  // namespace

void write_uff58b(const std::string& path, const std::vector<std::vector<float>>& channels, double fs_hz,
                  std::string_view unit, std::string_view entity, std::string_view id_line, std::string_view date) {
    const std::size_t n = check_channels(path, channels, fs_hz, 3);
    if (entity.size() > 10) throw std::invalid_argument("'" + path + "': the entity name is over 10 characters");
    std::string text;
    for (std::size_t c = 0; c < channels.size(); ++c) {
        const std::size_t bytes = n * sizeof(float);
        text += "    -1\n";
        text += printf_string("%6i%c%6i%6i%12i%12zu%6i%6i%12i%12i\n", 58, 'b', 1, 2, 11, bytes, 0, 0, 0, 0);
        text += std::string(id_line) + " " + "XYZ"[c] + "\n";
        text += "NONE\n";
        text += std::string(date) + "\n";
        text += "NONE\n";
        text += "NONE\n";
        const std::string ent(entity);
        text += printf_string("%5i%10i%5i%10i %-10s%10i%4i %-10s%10i%4i\n", 1, 0, 0, 0, ent.c_str(), 1,
                              static_cast<int>(c) + 1, "NONE", 0, 0);
        text += printf_string("%10i%10zu%10i%13.5E%13.5E%13.5E\n", 2, n, 1, 0.0, 1.0 / fs_hz, 0.0);
        text += printf_string("%10i%5i%5i%5i %-20s %-20s\n", 17, 0, 0, 0, "Time", "s");
        text += printf_string("%10i%5i%5i%5i %-20s %-20s\n", 12, 0, 0, 0, "Acceleration", std::string(unit).c_str());
        text += printf_string("%10i%5i%5i%5i %-20s %-20s\n", 0, 0, 0, 0, "NONE", "NONE");
        text += printf_string("%10i%5i%5i%5i %-20s %-20s\n", 0, 0, 0, 0, "NONE", "NONE");
        std::string block(bytes, '\0');
        for (std::size_t i = 0; i < n; ++i) {
            std::uint32_t u = 0;
            std::memcpy(&u, &channels[c][i], 4);
            for (int b = 0; b < 4; ++b) block[4 * i + b] = static_cast<char>((u >> (8 * b)) & 0xFFu);  // little-endian
        }
        text += block;
        text += "\n    -1\n";
    }
    write_text_atomically(path, text);
}

void write_csv_waveform(const std::string& path, const std::vector<std::vector<float>>& channels,
                        const std::vector<std::string>& names, double fs_hz, std::string_view unit) {
    const std::size_t n = check_channels(path, channels, fs_hz, 64);
    if (names.size() != channels.size()) throw std::invalid_argument("'" + path + "': one name a channel");
    std::string text = "# sample_rate_hz = " + fmt_number(fs_hz, 6) + "\n";
    for (std::size_t c = 0; c < names.size(); ++c)
        text += (c ? "," : "") + names[c] + " [" + std::string(unit) + "]";
    text += '\n';
    text.reserve(text.size() + n * channels.size() * 11);
    for (std::size_t i = 0; i < n; ++i) {
        for (std::size_t c = 0; c < channels.size(); ++c) {
            if (c) text += ',';
            text += printf_string("%.5g", static_cast<double>(channels[c][i]));
        }
        text += '\n';
    }
    write_text_atomically(path, text);
}

void write_mat(const std::string& path, const std::vector<std::vector<float>>& channels, double fs_hz,
               const std::string& variable) {
    const std::size_t n = check_channels(path, channels, fs_hz, 64);
    const std::string tmp = path + ".tmp";
    // A header text of our own: libmatio's default carries the time of writing.
    mat_t* mat = Mat_CreateVer(tmp.c_str(), "MATLAB 5.0 MAT-file, written by cavitas-synth (synthetic demo data)",
                               MAT_FT_MAT5);
    if (mat == nullptr) throw std::runtime_error("cannot write '" + path + "': cannot create file");
    std::vector<float> column_major;
    column_major.reserve(n * channels.size());
    for (const auto& c : channels) column_major.insert(column_major.end(), c.begin(), c.end());
    std::size_t dims[2] = {n, channels.size()};
    bool ok = true;
    if (matvar_t* v = Mat_VarCreate(variable.c_str(), MAT_C_SINGLE, MAT_T_SINGLE, 2, dims, column_major.data(), 0)) {
        ok = Mat_VarWrite(mat, v, MAT_COMPRESSION_NONE) == 0;
        Mat_VarFree(v);
    } else {
        ok = false;
    }
    double fs = fs_hz;
    std::size_t one[2] = {1, 1};
    if (matvar_t* v = ok ? Mat_VarCreate("fs", MAT_C_DOUBLE, MAT_T_DOUBLE, 2, one, &fs, 0) : nullptr) {
        ok = Mat_VarWrite(mat, v, MAT_COMPRESSION_NONE) == 0;
        Mat_VarFree(v);
    } else {
        ok = false;
    }
    if (Mat_Close(mat) != 0) ok = false;
    if (!ok) {
        std::error_code ec;
        std::filesystem::remove(tmp, ec);
        throw std::runtime_error("cannot write '" + path + "': libmatio could not write the variables");
    }
    rename_into_place(tmp, path);
}

// ---------------------------------------------------------------------------
// Sets.
std::vector<PlannedRecording> demo_plan(std::uint64_t seed) {
    // The invented route of the Orrin Weir station: baselines learned on
    // 2026-08-03, then monthly visits. OW-P101's sump is drawn down through the
    // autumn (incipient on 10-05, developed on 11-02); the strainer is cleaned and
    // the sump level control reset on 11-04, and the visit of 11-09 checks the
    // repair. OW-P102 runs out on 09-07 (a second zone open: flow noise) and is
    // throttled for a network test on 10-05. OW-P103 shows a bearing look-alike.
    struct Item {
        const char* tag;
        const char* suffix;
        const char* role;
        Kind kind;
        const char* datetime;
        const char* suction;  // gauge
        const char* flow;
        const char* note;
    };
    const std::array<Item, 13> items{{
        {"OW-P101", "baseline_1", "baseline", Kind::healthy, "2026-08-03T09:10:00", "-18 kPa", "405 m3/h",
         "sump at normal level"},
        {"OW-P101", "baseline_2", "baseline", Kind::healthy, "2026-08-03T09:25:00", "-19 kPa", "410 m3/h",
         "sump at normal level"},
        {"OW-P101", "2026-09-07", "test", Kind::healthy, "2026-09-07T08:40:00", "-20 kPa", "410 m3/h", ""},
        {"OW-P101", "2026-10-05", "test", Kind::incipient, "2026-10-05T08:55:00", "-48 kPa", "415 m3/h",
         "sump drawn down 2.5 m"},
        {"OW-P101", "2026-11-02", "test", Kind::developed, "2026-11-02T09:05:00", "-70 kPa", "420 m3/h",
         "sump drawn down 4 m, suction strainer fouled"},
        {"OW-P101", "2026-11-09", "test", Kind::healthy, "2026-11-09T10:15:00", "-17 kPa", "410 m3/h",
         "after the repair of 2026-11-04: strainer cleaned, sump level control reset"},
        {"OW-P102", "baseline_1", "baseline", Kind::healthy, "2026-08-03T10:05:00", "140 kPa", "160 m3/h",
         "clear-water tank full"},
        {"OW-P102", "baseline_2", "baseline", Kind::healthy, "2026-08-03T10:20:00", "141 kPa", "158 m3/h",
         "clear-water tank full"},
        {"OW-P102", "2026-09-07", "test", Kind::turbulence, "2026-09-07T09:30:00", "138 kPa", "190 m3/h",
         "second zone valve open"},
        {"OW-P102", "2026-10-05", "test", Kind::developed, "2026-10-05T09:40:00", "135 kPa", "55 m3/h",
         "discharge valve throttled for a network test"},
        {"OW-P103", "baseline_1", "baseline", Kind::healthy, "2026-08-03T11:00:00", "25 kPa", "600 m3/h", ""},
        {"OW-P103", "baseline_2", "baseline", Kind::healthy, "2026-08-03T11:15:00", "24 kPa", "600 m3/h", ""},
        {"OW-P103", "2026-09-07", "test", Kind::bearing, "2026-09-07T10:20:00", "25 kPa", "600 m3/h", ""},
    }};
    std::vector<PlannedRecording> plan;
    for (std::size_t i = 0; i < items.size(); ++i) {
        const Item& it = items[i];
        PlannedRecording r;
        r.file = std::string(it.tag) + "_" + it.suffix + ".wav";
        r.role = it.role;
        r.point = "DE-H";
        r.datetime = it.datetime;
        r.spec.machine = machine_by_tag(it.tag);
        r.spec.kind = it.kind;
        r.spec.duration_s = 8.0;
        r.spec.seed = derive_seed(seed, i);
        r.spec.severity = 0.5;
        r.encoding = Encoding::pcm16;
        const std::string_view tag = it.tag;
        const bool p101 = tag == "OW-P101", p102 = tag == "OW-P102";
        std::ostringstream op;
        op << "# operating point of " << r.file << " (invented demo duty)\n"
           << "suction_pressure = \"" << it.suction << "\"\n"
           << "pressure_ref = \"gauge\"\n"
           << "temperature = \"" << (p101 ? "14 C" : "12 C") << "\"\n"
           << "elevation = \"62 m\"\n"
           << "gauge_height = \"" << (p101 ? "0.4 m" : "0.2 m") << "\"\n"
           << "flow = \"" << it.flow << "\"\n"
           << "bore = \"" << (p101 ? "300 mm" : p102 ? "150 mm" : "350 mm") << "\"\n";
        if (p101 || p102) op << "npsh3_curve = \"" << it.tag << ".npsh3.csv\"\n";
        else op << "npsh3 = \"2.8 m\"\n";
        op << "speed = \"" << fmt_number(r.spec.machine.rpm, 0) << " rpm\"\n";
        if (*it.note) op << "note = \"" << it.note << "\"\n";
        r.sidecar_toml = op.str();
        plan.push_back(std::move(r));
    }

    // OW-P101's triaxial point NDE-T, after the recordings above (so their seeds
    // and manifest lines stay as they were): a portable three-axis logger at
    // 12 800 Hz, channels X (radial horizontal), Y (radial vertical), Z (axial).
    // Each axis has its own seed and a gain (X 0, Y -3, Z -6 dB): the bearing
    // housing is stiffer vertically and axially. On 11-02 the collapses at the
    // impeller eye reach X (facing the volute) at full severity (HF +24 dB);
    // Y and Z receive the same collapse process (rate, modulation) 12 and 15 dB
    // weaker relative to their own backgrounds, so their HF rise is
    // 10 log10(1 + (10^(24/10) - 1) 10^(-loss/10)): about 12.3 and 9.5 dB.
    struct Triaxial {
        const char* suffix;
        const char* role;
        Kind kind;
        const char* datetime;
        const char* suction;
        const char* flow;
        const char* note;
        FileFormat format;
    };
    const std::array<Triaxial, 4> tri{{
        {"baseline_1", "baseline", Kind::healthy, "2026-08-03T09:35:00", "-19 kPa", "410 m3/h", "sump at normal level",
         FileFormat::uff58b},
        {"baseline_2", "baseline", Kind::healthy, "2026-08-03T09:45:00", "-19 kPa", "410 m3/h", "sump at normal level",
         FileFormat::uff58b},
        {"2026-11-02", "test", Kind::developed, "2026-11-02T09:15:00", "-70 kPa", "420 m3/h",
         "sump drawn down 4 m, suction strainer fouled", FileFormat::mat},
        {"2026-11-09", "test", Kind::healthy, "2026-11-09T10:25:00", "-17 kPa", "410 m3/h",
         "after the repair of 2026-11-04: strainer cleaned, sump level control reset", FileFormat::csv},
    }};
    constexpr std::array<double, 3> kAxisGainDb{0.0, -3.0, -6.0};
    constexpr std::array<double, 3> kCollapseLossDb{0.0, 12.0, 15.0};
    Machine logger = machine_by_tag("OW-P101");
    logger.fs_hz = 12800.0;
    for (std::size_t j = 0; j < tri.size(); ++j) {
        const Triaxial& it = tri[j];
        PlannedRecording r;
        r.format = it.format;
        const char* ext = it.format == FileFormat::uff58b ? ".uff" : it.format == FileFormat::mat ? ".mat" : ".csv";
        r.file = std::string("OW-P101_NDE-T_") + it.suffix + ext;
        r.role = it.role;
        r.point = "NDE-T";
        r.datetime = it.datetime;
        const std::uint64_t axis0_seed = derive_seed(seed, items.size() + j);
        std::optional<FaultParams> x_params;
        if (it.kind == Kind::developed) x_params = draw_params(Kind::developed, 1.0, axis0_seed);
        for (std::size_t a = 0; a < 3; ++a) {
            CaseSpec c;
            c.machine = logger;
            c.kind = it.kind;
            c.duration_s = 4.0;
            c.seed = a == 0 ? axis0_seed : derive_seed(axis0_seed, a);
            c.severity = it.kind == Kind::developed ? 1.0 : 0.5;
            c.gain_db = kAxisGainDb[a];
            if (x_params) {
                FaultParams p = *x_params;
                const double x_ratio = std::pow(10.0, x_params->cavitation.hf_rise_db / 10.0) - 1.0;
                p.cavitation.hf_rise_db = 10.0 * std::log10(1.0 + x_ratio * std::pow(10.0, -kCollapseLossDb[a] / 10.0));
                c.params = p;
            }
            if (a == 0) r.spec = c;
            else r.more_axes.push_back(c);
        }
        switch (it.format) {
            case FileFormat::uff58b: r.unit = "V"; r.sensitivity_v_per_g = 0.1; break;
            case FileFormat::mat: r.unit = "V"; r.sensitivity_v_per_g = 0.1; r.variable = "acc"; break;
            default: r.unit = "m/s^2"; break;
        }
        std::ostringstream op;
        op << "# operating point of " << r.file << " (invented demo duty)\n"
           << "suction_pressure = \"" << it.suction << "\"\n"
           << "pressure_ref = \"gauge\"\n"
           << "temperature = \"14 C\"\n"
           << "elevation = \"62 m\"\n"
           << "gauge_height = \"0.4 m\"\n"
           << "flow = \"" << it.flow << "\"\n"
           << "bore = \"300 mm\"\n"
           << "npsh3_curve = \"OW-P101.npsh3.csv\"\n"
           << "speed = \"1485 rpm\"\n"
           << "note = \"" << it.note << "\"\n";
        r.sidecar_toml = op.str();
        plan.push_back(std::move(r));
    }
    return plan;
}

std::vector<SetEvent> demo_events() {
    // The work the sidecar of the visit of 11-09 tells of, done on 11-04 for the whole pump.
    return {{"OW-P101", "", "2026-11-04", "strainer cleaned, sump level control reset"}};
}

std::vector<SetFile> demo_files() {
    // Invented maker's test curves (3 % head drop), rising with flow as NPSH3 does.
    return {
        {"OW-P101.npsh3.csv",
         "# OW-P101 raw-water lift, 1485 rpm, 7 vanes: NPSH3 (3 % head drop), invented demo curve\n"
         "flow [m3/h], npsh3 [m]\n200, 2.1\n300, 2.5\n400, 3.1\n500, 4.0\n600, 5.3\n"},
        {"OW-P102.npsh3.csv",
         "# OW-P102 treated-water booster, 2960 rpm, 5 vanes: NPSH3 (3 % head drop), invented demo curve\n"
         "flow [m3/h], npsh3 [m]\n40, 1.6\n80, 1.8\n120, 2.1\n160, 2.5\n200, 3.2\n"},
    };
}

std::vector<PlannedRecording> eval_plan(int per_kind, std::uint64_t seed) {
    if (per_kind < 1 || per_kind > 1000) throw std::invalid_argument("per-kind must be within 1..1000");
    constexpr int kBaselines = 3;
    // Mostly the default 16-bit PCM, with every other encoding in each machine's share.
    constexpr std::array<Encoding, 6> kCycle{Encoding::pcm16, Encoding::pcm24,   Encoding::pcm16,
                                             Encoding::float32, Encoding::pcm16, Encoding::flac16};
    const auto& machines = scenario_machines();
    const std::size_t tests = kAllKinds.size() * static_cast<std::size_t>(per_kind);
    const int width = tests >= 1000 ? 4 : 3;
    std::vector<PlannedRecording> plan;
    for (std::size_t mi = 0; mi < machines.size(); ++mi) {
        struct Test {
            Kind kind;
            double severity;
        };
        std::vector<Test> list;
        for (std::size_t ki = 0; ki < kAllKinds.size(); ++ki) {
            // Stratified: one severity in each 1/N slice of 0..1, on a 0.001 grid so
            // that truth.csv prints it exactly and `one --severity` reproduces the file.
            Rng strat(derive_seed(seed, 1000000 + mi * 16 + ki));
            for (int i = 0; i < per_kind; ++i) {
                const double s = std::round(1000.0 * (i + strat.uniform()) / per_kind) / 1000.0;
                list.push_back({kAllKinds[ki], std::clamp(s, 0.0, 1.0)});
            }
        }
        // Fisher-Yates with our uniform (std::shuffle's draws are not portable),
        // so the blind file names do not reveal the kind by position.
        Rng shuffle(derive_seed(seed, 2000000 + mi));
        for (std::size_t i = list.size(); i-- > 1;) {
            const auto j = std::min(i, static_cast<std::size_t>(shuffle.uniform() * static_cast<double>(i + 1)));
            std::swap(list[i], list[j]);
        }
        const Machine& machine = machines[mi];
        const std::size_t total = kBaselines + list.size();
        for (std::size_t j = 0; j < total; ++j) {
            PlannedRecording r;
            r.encoding = kCycle[j % kCycle.size()];
            r.spec.machine = machine;
            r.spec.duration_s = 10.0;
            r.spec.seed = derive_seed(seed, mi * 100000 + j);
            if (j < kBaselines) {
                r.role = "baseline";
                r.spec.kind = Kind::healthy;
                r.spec.severity = 0.0;
                r.file = machine.tag + "_baseline_" + std::to_string(j + 1);
            } else {
                const Test& t = list[j - kBaselines];
                r.role = "test";
                r.spec.kind = t.kind;
                r.spec.severity = t.severity;
                char num[32];
                std::snprintf(num, sizeof num, "%0*zu", width, j - kBaselines + 1);
                r.file = machine.tag + "_test_" + num;
            }
            r.file += extension_of(r.encoding);
            // One minute apart from 2026-01-01 (a distinct time for every recording of a machine).
            char when[48];
            std::snprintf(when, sizeof when, "2026-01-%02zuT%02zu:%02zu:00", 1 + j / 1440, (j / 60) % 24, j % 60);
            r.datetime = when;
            plan.push_back(std::move(r));
        }
    }
    return plan;
}

// ---------------------------------------------------------------------------
// The field set (see synth.hpp for its groups).
namespace {

/// ISO 8601 date and time, `days` after 2026-01-01 and `minutes` after midnight.
std::string field_datetime(int days, int minutes) {
    auto leap = [](int y) { return (y % 4 == 0 && y % 100 != 0) || y % 400 == 0; };
    int year = 2026;
    while (days >= (leap(year) ? 366 : 365)) {
        days -= leap(year) ? 366 : 365;
        ++year;
    }
    static constexpr std::array<int, 12> kMonthDays{31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31};
    std::size_t month = 0;
    for (;; ++month) {
        const int length = kMonthDays[month] + (month == 1 && leap(year) ? 1 : 0);
        if (days < length) break;
        days -= length;
    }
    char buf[48];
    std::snprintf(buf, sizeof buf, "%04d-%02zu-%02dT%02d:%02d:00", year, month + 1, days + 1, minutes / 60, minutes % 60);
    return buf;
}

double round_to(double v, double step) { return std::round(v / step) * step; }

/// The Orrin Weir duty of a fixed-speed pump as the field sidecars state it
/// (invented, near the demo's): liquid temperature, flow range, suction bore,
/// NPSH3 at that flow (the demo's curves of OW-P101 and OW-P102 near 400 and
/// 160 m3/h, OW-P103's stated 2.8 m), and the NPSHa of sound suction conditions.
struct FieldDuty {
    double temperature_c;
    double flow_low_m3h, flow_high_m3h;
    double bore_mm;
    double npsh3_m;
    double npsha_low_m, npsha_high_m;
};

FieldDuty field_duty(std::string_view tag) {
    if (tag == "OW-P101") return {14.0, 395.0, 420.0, 300.0, 3.1, 7.0, 10.0};  // raw water from the weir sump
    if (tag == "OW-P102") return {12.0, 150.0, 165.0, 150.0, 2.5, 20.0, 26.0};  // from a flooded clear-water tank
    return {12.0, 590.0, 610.0, 350.0, 2.8, 10.0, 14.0};                        // OW-P103 backwash
}

constexpr double kFieldElevationM = 62.0;
// Below the impeller-eye datum (our choice for the field sidecars): with the
// gauge above it, a low NPSHa would need a static pressure under the vapour
// pressure at the gauge, i.e. a flashing liquid.
constexpr double kFieldGaugeHeightM = -0.6;

struct Sidecar {
    std::string toml;
    double npsha_m = 0;
};

/// A sidecar stating suction conditions that give `npsha_m` (within 0.01 m: the
/// gauge reading is written to 0.1 kPa). The reading is solved with the
/// project's own hydraulics (models/operating_point: IAPWS-IF97 water, ISO 2533
/// atmosphere), so the NPSHa stated is the one cavitas computes from the file.
Sidecar field_sidecar(const std::string& file, std::string_view tag, double temperature_c, double flow_m3h,
                      double npsha_m, const std::string& note) {
    const FieldDuty duty = field_duty(tag);
    models::OperatingPoint op;
    op.pressure_reference = models::PressureReference::gauge;
    op.elevation_m = kFieldElevationM;
    op.temperature_k = temperature_c + 273.15;
    op.gauge_height_m = kFieldGaugeHeightM;
    op.flow_m3_s = flow_m3h / 3600.0;
    op.bore_m = duty.bore_mm / 1000.0;
    auto evaluate = [&](double gauge_kpa) {
        op.suction_pressure_pa = gauge_kpa * 1000.0;
        return models::evaluate_operating_point(op);
    };
    // NPSHa is linear in the pressure but for the density's slight dependence on
    // it: Newton steps from 0 kPa converge at once.
    double gauge_kpa = 0.0;
    for (int i = 0; i < 3; ++i) {
        const auto h = evaluate(gauge_kpa);
        gauge_kpa += (npsha_m - h.npsh->npsha_m) * h.liquid->density_kg_m3 * models::kStandardGravityM_s2 / 1000.0;
    }
    gauge_kpa = round_to(gauge_kpa, 0.1);
    Sidecar sc;
    sc.npsha_m = evaluate(gauge_kpa).npsh->npsha_m;
    std::ostringstream t;
    t << "# operating point of " << file << " (invented field duty)\n"
      << "suction_pressure = \"" << fmt_number(gauge_kpa, 1) << " kPa\"\n"
      << "pressure_ref = \"gauge\"\n"
      << "temperature = \"" << fmt_number(temperature_c, 1) << " C\"\n"
      << "elevation = \"" << fmt_number(kFieldElevationM, 0) << " m\"\n"
      << "gauge_height = \"" << fmt_number(kFieldGaugeHeightM, 2) << " m\"\n"
      << "flow = \"" << fmt_number(flow_m3h, 0) << " m3/h\"\n"
      << "bore = \"" << fmt_number(duty.bore_mm, 0) << " mm\"\n"
      << "npsh3 = \"" << fmt_number(duty.npsh3_m, 1) << " m\"\n";
    if (!note.empty()) t << "note = \"" << note << "\"\n";
    sc.toml = t.str();
    return sc;
}

enum class Suction { none, sound, low };

/// One recording of a field group, before it gets its name, seed and time.
struct FieldRow {
    Kind kind = Kind::healthy;
    double severity = 0.0;
    double speed_frac = 0.0;  ///< true speed / the machine's nominal; 0 = nominal (fixed speed)
    double duration_s = 10.0;
    bool rpm_given = true;
    bool indeterminate = false;  ///< the verdict due is indeterminate, whatever the label
    std::string hazard = "none";
    double gain_db = 0.0, tilt_db_per_decade = 0.0;
    double step_at_s = 0.0, step_db = 0.0;
    Suction suction = Suction::none;
    int day = 0;  ///< baselines: days after the group's first
};

FieldRow row(Kind kind, double severity) {
    FieldRow r;
    r.kind = kind;
    r.severity = severity;
    return r;
}

class FieldPlanner {
public:
    explicit FieldPlanner(std::uint64_t seed) : seed_(seed) {}

    /// The random draws of the next group (its speeds, severities, mounts, sidecars).
    Rng next_group_rng() const { return Rng(derive_seed(seed_, 4000000 + groups_)); }

    /// Severity i of n, one in each 1/n slice of 0..1 (on a 0.001 grid, so that
    /// truth.csv prints it exactly).
    static double stratified(int i, int n, Rng& rng) {
        return std::clamp(round_to((i + rng.uniform()) / n, 0.001), 0.0, 1.0);
    }

    void add_group(const std::string& name, const Machine& machine, const std::vector<FieldRow>& baselines,
                   std::vector<FieldRow> tests, Rng& rng) {
        const std::uint64_t gi = groups_++;
        // Each group of a machine gets its own half year from 2026-01-05, so the
        // recordings of one machine never share a time and each group's run in order.
        const int first_day = 4 + 183 * machine_groups_[machine.tag]++;
        Rng shuffle(derive_seed(seed_, 3000000 + gi));
        std::vector<std::uint64_t> test_ids(tests.size());
        for (std::size_t i = 0; i < tests.size(); ++i) test_ids[i] = 100 + i;
        for (std::size_t i = tests.size(); i-- > 1;) {
            const auto j = std::min(i, static_cast<std::size_t>(shuffle.uniform() * static_cast<double>(i + 1)));
            std::swap(tests[i], tests[j]);
            std::swap(test_ids[i], test_ids[j]);
        }
        int last_day = 0, minutes = 9 * 60;
        for (std::size_t j = 0; j < baselines.size(); ++j) {
            const FieldRow& b = baselines[j];
            minutes = j > 0 && b.day == last_day ? minutes + 15 : 9 * 60;
            last_day = b.day;
            add(name, machine, b, "baseline", name + "_baseline_" + std::to_string(j + 1),
                field_datetime(first_day + b.day, minutes), derive_seed(seed_, gi * 1000 + j), rng);
        }
        for (std::size_t i = 0; i < tests.size(); ++i) {
            char num[32];
            std::snprintf(num, sizeof num, "%02zu", i + 1);
            add(name, machine, tests[i], "test", name + "_test_" + num,
                field_datetime(first_day + last_day + 1 + static_cast<int>(i), 10 * 60),
                derive_seed(seed_, gi * 1000 + test_ids[i]), rng);
        }
    }

    std::vector<PlannedRecording> take() { return std::move(plan_); }

private:
    void add(const std::string& group, const Machine& machine, const FieldRow& f, const char* role,
             const std::string& stem, const std::string& datetime, std::uint64_t seed, Rng& rng) {
        // The evaluation set's cycle: mostly 16-bit PCM, every other encoding in each share.
        constexpr std::array<Encoding, 6> kCycle{Encoding::pcm16, Encoding::pcm24,   Encoding::pcm16,
                                                 Encoding::float32, Encoding::pcm16, Encoding::flac16};
        PlannedRecording r;
        r.encoding = kCycle[plan_.size() % kCycle.size()];
        r.file = stem + extension_of(r.encoding);
        r.role = role;
        r.datetime = datetime;
        r.group = group;
        r.rpm_given = f.rpm_given;
        r.hazard = r.role == "baseline" ? f.hazard : "none";
        r.expect = f.indeterminate ? "indeterminate" : label_of(f.kind);
        r.spec.machine = machine;
        r.spec.kind = f.kind;
        r.spec.severity = f.severity;
        r.spec.duration_s = f.duration_s;
        r.spec.seed = seed;
        if (f.speed_frac > 0.0) {
            // The speed look-alike is 2..4 % off the speed the drive was set to.
            const double off = f.kind == Kind::speed ? draw_params(f.kind, f.severity, seed).speed.offset_frac : 0.0;
            r.spec.rpm_override = machine.rpm * f.speed_frac * (1.0 + off);
        }
        if (machine.tag == drive_machine().tag) {
            r.spec.level_speed_exponent_hf = 2.5;  // our choice (see CaseSpec)
            r.spec.level_speed_exponent_lf = 2.0;
        }
        r.spec.gain_db = f.gain_db;
        r.spec.tilt_db_per_decade = f.tilt_db_per_decade;
        r.spec.step_at_s = f.step_at_s;
        r.spec.step_db = f.step_db;
        if (f.suction != Suction::none) {
            const FieldDuty duty = field_duty(machine.tag);
            const bool low = f.suction == Suction::low;
            // Low NPSHa: the water may be warmer than usual too (a summer day).
            const double temperature_c =
                low ? duty.temperature_c + round_to(rng.uniform(0.0, 16.0), 0.5) : duty.temperature_c;
            const double flow_m3h = std::round(rng.uniform(duty.flow_low_m3h, duty.flow_high_m3h));
            const double npsha_m =
                low ? rng.uniform(0.1, 0.8) : rng.uniform(duty.npsha_low_m, duty.npsha_high_m);
            const Sidecar sc = field_sidecar(r.file, machine.tag, temperature_c, flow_m3h, npsha_m,
                                             low ? "suction level low" : "");
            r.sidecar_toml = sc.toml;
            r.sidecar_npsha_m = sc.npsha_m;
        }
        plan_.push_back(std::move(r));
    }

    std::uint64_t seed_;
    std::uint64_t groups_ = 0;
    std::map<std::string, int> machine_groups_;
    std::vector<PlannedRecording> plan_;
};

}  // namespace

std::vector<PlannedRecording> field_plan(std::uint64_t seed) {
    FieldPlanner planner(seed);
    const Machine& drive = drive_machine();
    const auto& fixed = scenario_machines();
    auto short_tag = [](const Machine& m) { return m.tag.substr(3); };  // "OW-P101" -> "P101"

    {  // a. The variable-speed pump against a baseline at three speeds.
        Rng rng = planner.next_group_rng();
        std::vector<FieldRow> baselines, tests;
        for (const double frac : {0.70, 0.85, 1.00})
            for (int k = 0; k < 2; ++k) {
                FieldRow b = row(Kind::healthy, 0.0);
                b.speed_frac = frac;
                baselines.push_back(b);
            }
        for (const Kind kind : kEveryKind)
            for (int i = 0; i < 2; ++i) {
                FieldRow t = row(kind, FieldPlanner::stratified(i, 2, rng));
                t.speed_frac = round_to(rng.uniform(0.75, 0.95), 0.001);
                tests.push_back(t);
            }
        // Outside the covered 0.70..1.00: nothing learned says what is normal there.
        for (const double frac : {0.50, 1.25})
            for (const Kind kind : {Kind::healthy, Kind::developed}) {
                FieldRow t = row(kind, kind == Kind::developed ? round_to(rng.uniform(0.3, 1.0), 0.001) : 0.0);
                t.speed_frac = frac;
                t.indeterminate = true;
                tests.push_back(t);
            }
        planner.add_group("P104-vsd", drive, baselines, tests, rng);
    }

    {  // b. Four visits of OW-P101, the magnet re-mounted at each.
        Rng rng = planner.next_group_rng();
        std::vector<FieldRow> baselines, tests;
        for (int visit = 0; visit < 4; ++visit) {
            const double gain_db = round_to(rng.uniform(-2.5, 2.5), 0.01);
            const double tilt = round_to(rng.uniform(-1.0, 1.0), 0.01);
            for (int k = 0; k < 2; ++k) {
                FieldRow b = row(Kind::healthy, 0.0);
                b.gain_db = gain_db;
                b.tilt_db_per_decade = tilt;
                b.day = 28 * visit;
                baselines.push_back(b);
            }
        }
        auto remounted = [&](FieldRow t) {
            t.gain_db = round_to(rng.uniform(-3.0, 3.0), 0.01);
            t.tilt_db_per_decade = round_to(rng.uniform(-1.0, 1.0), 0.01);
            return t;
        };
        for (int i = 0; i < 6; ++i) tests.push_back(remounted(row(Kind::healthy, 0.0)));
        // Incipient from a quarter of its range up: at the bottom, +3.5 dB against a
        // +-3 dB mount would ask for more than the HF level can say.
        for (int i = 0; i < 3; ++i)
            tests.push_back(remounted(row(Kind::incipient, round_to(0.25 + 0.75 * FieldPlanner::stratified(i, 3, rng), 0.001))));
        for (int i = 0; i < 3; ++i) tests.push_back(remounted(row(Kind::developed, FieldPlanner::stratified(i, 3, rng))));
        planner.add_group("P101-visits", fixed[0], baselines, tests, rng);
    }

    // c. Spoiled baselines, four groups of each hazard, and clean controls.
    const std::array<std::string, 5> hazards{"step", "cavitating", "low_npsh", "short", "none"};
    for (std::size_t h = 0; h < hazards.size(); ++h) {
        const std::string& hazard = hazards[h];
        for (std::size_t g = 0; g < 4; ++g) {
            const Machine& m = fixed[g < 3 ? g : h % 3];
            const std::string name = short_tag(m) + "-" + (hazard == "none" ? std::string("clean") : hazard) +
                                     (g < 3 ? "" : "-2");
            Rng rng = planner.next_group_rng();
            // Two recordings in groups 0 and 2 (a short baseline is one by definition,
            // a control always two), one in groups 1 and 3.
            const std::size_t count = hazard == "short" ? 1 : hazard == "none" || g % 2 == 0 ? 2 : 1;
            std::vector<FieldRow> baselines;
            for (std::size_t k = 0; k < count; ++k) {
                FieldRow b = row(Kind::healthy, 0.0);
                b.suction = Suction::sound;
                // Which of two is spoiled: in group 0 both for cavitation and suction
                // (a condition of that whole day) and the second for a step; in
                // group 2 one (the first for a step, else the second).
                bool spoiled = false;
                if (hazard == "none") spoiled = false;
                else if (count == 1) spoiled = true;
                else if (g == 0) spoiled = hazard != "step" || k == 1;
                else spoiled = hazard == "step" ? k == 0 : k == 1;
                if (spoiled) {
                    b.hazard = hazard;
                    if (hazard == "step") {
                        b.step_db = round_to(rng.uniform(8.0, 20.0), 0.1);
                        b.step_at_s = round_to(b.duration_s * rng.uniform(0.4, 0.7), 0.01);
                    } else if (hazard == "cavitating") {
                        const bool developed = g >= 2;
                        b.kind = developed ? Kind::developed : Kind::incipient;
                        b.severity = round_to(developed ? rng.uniform(0.0, 1.0) : rng.uniform(0.3, 1.0), 0.001);
                    } else if (hazard == "low_npsh") {
                        b.suction = Suction::low;
                    } else if (hazard == "short") {
                        b.duration_s = 2.0;
                    }
                }
                baselines.push_back(b);
            }
            std::vector<FieldRow> tests{row(Kind::healthy, 0.0)};
            if (g % 2 == 1) tests.push_back(row(Kind::healthy, 0.0));
            tests.push_back(row(Kind::developed, round_to(rng.uniform(0.0, 1.0), 0.001)));
            planner.add_group(name, m, baselines, tests, rng);
        }
    }

    // d, e, f. Sound baselines of each fixed-speed pump, against which: inner-race
    // faults, speeds to be found, short captures.
    const std::array<Kind, 3> rotating_lookalike{Kind::bearing, Kind::inner_race, Kind::mains};
    for (std::size_t mi = 0; mi < fixed.size(); ++mi) {
        Rng rng = planner.next_group_rng();
        const std::vector<FieldRow> baselines(3, row(Kind::healthy, 0.0));
        std::vector<FieldRow> tests;
        for (int i = 0; i < 3; ++i) tests.push_back(row(Kind::inner_race, FieldPlanner::stratified(i, 3, rng)));
        for (const Kind kind : {Kind::healthy, Kind::incipient, Kind::developed, Kind::speed, rotating_lookalike[mi]}) {
            FieldRow t = row(kind, kind == Kind::healthy ? 0.0 : round_to(rng.uniform(0.0, 1.0), 0.001));
            t.rpm_given = false;
            tests.push_back(t);
        }
        // Captures c = 0..15: kind c / 2 of kEveryKind, on machine c % 3, so each
        // kind is captured on two machines.
        for (std::size_t c = mi; c < 2 * kEveryKind.size(); c += 3) {
            FieldRow t = row(kEveryKind[c / 2], FieldPlanner::stratified(static_cast<int>(c % 2), 2, rng));
            t.duration_s = round_to(rng.uniform(1.0, 2.0), 0.1);
            tests.push_back(t);
        }
        planner.add_group(short_tag(fixed[mi]) + "-ref", fixed[mi], baselines, tests, rng);
    }

    {  // e. The drive held at one speed, then jumps the tool must notice.
        Rng rng = planner.next_group_rng();
        constexpr double kHeldFrac = 0.90;
        std::vector<FieldRow> baselines(2, row(Kind::healthy, 0.0));
        for (auto& b : baselines) b.speed_frac = kHeldFrac;
        std::vector<FieldRow> tests;
        for (const Kind kind : {Kind::healthy, Kind::developed}) {
            FieldRow t = row(kind, kind == Kind::developed ? round_to(rng.uniform(0.3, 1.0), 0.001) : 0.0);
            t.speed_frac = kHeldFrac;
            t.rpm_given = false;
            tests.push_back(t);
            for (const double sign : {-1.0, 1.0}) {
                FieldRow j = row(kind, kind == Kind::developed ? round_to(rng.uniform(0.3, 1.0), 0.001) : 0.0);
                j.speed_frac = round_to(kHeldFrac * (1.0 + sign * rng.uniform(0.15, 0.25)), 0.001);
                j.rpm_given = false;
                j.indeterminate = true;
                tests.push_back(j);
            }
        }
        planner.add_group("P104-fixed", drive, baselines, tests, rng);
    }
    return planner.take();
}

SetSummary write_set(const std::filesystem::path& folder, const std::vector<PlannedRecording>& plan,
                     const std::function<void(std::size_t, std::size_t)>& progress, std::ostream& warn,
                     const std::vector<SetFile>& files, SetColumns columns, const std::vector<SetEvent>& events) {
    const bool field = columns == SetColumns::field;
    const bool demo = columns == SetColumns::demo;
    if (!events.empty() && !demo) throw std::invalid_argument("event rows need the demo columns (their event column)");
    std::error_code ec;
    std::filesystem::create_directories(folder, ec);
    if (ec || !std::filesystem::is_directory(folder))
        throw std::runtime_error("cannot create output folder '" + folder.string() + "': " +
                                 (ec ? ec.message() : std::string("not a folder")));
    // Route-manifest form (see README: file, machine, point, channel, datetime, rpm,
    // vanes, then optional columns); manifest.csv holds every recording,
    // baselines.csv and route.csv the known-good ones and the ones to judge.
    const std::string header = std::string("file,machine,point,channel,datetime,rpm,vanes,full_scale,role,label,kind,"
                                           "fs_hz,duration_s,seed") +
                               (field  ? ",group,rpm_given,expect,hazard\n"
                                : demo ? ",sensitivity,unit,variable,sample_rate_hz,event\n"
                                       : "\n");
    std::ostringstream manifest, baselines, route, truth;
    manifest << header;
    baselines << header;
    route << header;
    truth << "file,kind,severity,collapse_rate_per_s,bpf_depth,shaft_depth,hf_rise_db,lf_rise_db,"
             "bearing_order,bearing_slip,turbulence_lf_rise_db,mains_hz,mains_g,speed_offset_pct,pulse_amplitude_g"
          << (field ? ",inner_race_order,inner_race_slip,load_depth,load_depth_2x,level_speed_exponent_hf,"
                      "level_speed_exponent_lf,gain_db,tilt_db_per_decade,step_at_s,step_db,sidecar_npsha_m\n"
                    : "\n");
    SetSummary summary;
    for (std::size_t i = 0; i < plan.size(); ++i) {
        const PlannedRecording& r = plan[i];
        const Recording rec = synthesize_recording(r.spec);
        const std::filesystem::path path = folder / r.file;
        std::size_t clipped = 0;
        std::vector<Recording> axes{rec};
        if (r.format == FileFormat::sound) {
            if (!r.more_axes.empty()) throw std::invalid_argument(r.file + ": a sound file holds one channel here");
            clipped = write_wav(path.string(), rec.g, rec.fs_hz, kFullScaleG, sf_format_of(r.encoding));
        } else {
            if (r.more_axes.size() > 2) throw std::invalid_argument(r.file + ": at most three axes");
            for (const auto& spec : r.more_axes) {
                axes.push_back(synthesize_recording(spec));
                if (axes.back().fs_hz != rec.fs_hz || axes.back().g.size() != rec.g.size())
                    throw std::invalid_argument(r.file + ": every axis needs the same rate and duration");
            }
            const double scale = r.sensitivity_v_per_g > 0.0 ? r.sensitivity_v_per_g
                                 : r.unit == "m/s^2"         ? 9.80665
                                                             : 1.0;
            std::vector<std::vector<float>> values;
            for (const auto& a : axes) {
                values.emplace_back(a.g.size());
                for (std::size_t k = 0; k < a.g.size(); ++k)
                    values.back()[k] = static_cast<float>(static_cast<double>(a.g[k]) * scale);
            }
            const std::vector<std::string> names{"ax", "ay", "az"};  // the axes, at most three (checked above)
            if (r.format == FileFormat::uff58b)
                write_uff58b(path.string(), values, rec.fs_hz, r.unit, r.spec.machine.tag,
                             r.spec.machine.tag + " " + r.point, uff_date(r.datetime));
            else if (r.format == FileFormat::csv)
                write_csv_waveform(path.string(), values, {names.begin(), names.begin() + static_cast<long>(values.size())},
                                   rec.fs_hz, r.unit);
            else
                write_mat(path.string(), values, rec.fs_hz, r.variable);
        }
        if (clipped > 0) {
            ++summary.clipped_files;
            warn << "warning: " << path.string() << ": " << clipped << " samples exceeded the +-" << kFullScaleG
                 << " g full scale and were clipped\n";
        }
        ++summary.files;
        const auto size = std::filesystem::file_size(path, ec);
        if (!ec) summary.bytes += size;
        const Kind kind0 = r.spec.kind;
        std::ostringstream row;
        std::string channels = "0";
        for (std::size_t a = 1; a < axes.size(); ++a) channels += "," + std::to_string(a);
        const bool sound = r.format == FileFormat::sound;
        row << r.file << ',' << r.spec.machine.tag << ',' << r.point << ','
            << (axes.size() > 1 ? '"' + channels + '"' : channels) << ',' << r.datetime << ',' << fmt_number(rec.rpm, 3) << ',' << r.spec.machine.vanes << ','
            << (sound ? fmt_number(kFullScaleG, 3) + "g" : std::string()) << ','
            << r.role << ',' << label_of(kind0) << ',' << name_of(kind0) << ',' << fmt_number(rec.fs_hz, 3) << ','
            << fmt_number(r.spec.duration_s, 6) << ',' << r.spec.seed;
        if (field) row << ',' << r.group << ',' << (r.rpm_given ? 1 : 0) << ',' << r.expect << ',' << r.hazard;
        if (demo) {
            // Only what a file does not state: a sensitivity for volts, a MAT-file's unit and variable.
            const bool mat = r.format == FileFormat::mat;
            row << ',' << (r.sensitivity_v_per_g > 0.0 ? fmt_number(r.sensitivity_v_per_g * 1000.0, 3) + "mV/g" : "")
                << ',' << (mat ? (r.unit == "m/s^2" ? std::string("m/s2") : r.unit) : std::string()) << ','
                << (mat ? r.variable : std::string()) << ",,";
        }
        row << '\n';
        manifest << row.str();
        (r.role == "baseline" ? baselines : route) << row.str();
        // One truth row a channel; a file of several axes names each as FILE#CHANNEL.
        for (std::size_t ai = 0; ai < axes.size(); ++ai) {
            const Recording& axis = axes[ai];
            const CaseSpec& spec = ai == 0 ? r.spec : r.more_axes[ai - 1];
            const Kind k = spec.kind;
            const FaultParams& p = axis.params;
            const bool cav = k == Kind::incipient || k == Kind::developed;
            auto col = [](bool on, double v, int dec) { return on ? fmt_number(v, dec) : std::string(); };
            truth << (axes.size() > 1 ? r.file + "#" + std::to_string(ai) : r.file) << ',' << name_of(k) << ','
                  << col(k != Kind::healthy, spec.severity, 3) << ','
                  << col(cav, p.cavitation.collapse_rate_per_s, 2) << ',' << col(cav, p.cavitation.bpf_depth, 4) << ','
                  << col(cav, p.cavitation.shaft_depth, 4) << ','
                  << (cav                     ? fmt_number(p.cavitation.hf_rise_db, 3)
                      : k == Kind::bearing    ? fmt_number(p.bearing.hf_rise_db, 3)
                      : k == Kind::inner_race ? fmt_number(p.inner_race.hf_rise_db, 3)
                                              : "")
                  << ',' << col(k == Kind::developed, p.cavitation.lf_rise_db, 3) << ','
                  << col(k == Kind::bearing, p.bearing.order, 4) << ',' << col(k == Kind::bearing, p.bearing.slip_frac, 4) << ','
                  << col(k == Kind::turbulence, p.turbulence.lf_rise_db, 3) << ',' << col(k == Kind::mains, p.mains.mains_hz, 3)
                  << ',' << col(k == Kind::mains, p.mains.amplitude_g, 4) << ','
                  << col(k == Kind::speed, 100.0 * p.speed.offset_frac, 3) << ','
                  << col(cav || k == Kind::bearing || k == Kind::inner_race, axis.pulse_amplitude_g, 6);
            if (field) {
                const bool inner = k == Kind::inner_race;
                const CaseSpec& c = spec;
                truth << ',' << col(inner, p.inner_race.order, 4) << ',' << col(inner, p.inner_race.slip_frac, 4) << ','
                      << col(inner, p.inner_race.load_depth, 4) << ',' << col(inner, p.inner_race.load_depth_2x, 4) << ','
                      << fmt_number(c.level_speed_exponent_hf, 3) << ',' << fmt_number(c.level_speed_exponent_lf, 3) << ','
                      << fmt_number(c.gain_db, 3) << ',' << fmt_number(c.tilt_db_per_decade, 3) << ','
                      << col(c.step_db > 0.0, c.step_at_s, 3) << ',' << col(c.step_db > 0.0, c.step_db, 3) << ','
                      << col(r.sidecar_npsha_m > 0.0, r.sidecar_npsha_m, 3);
            }
            truth << '\n';
        }
        if (!r.sidecar_toml.empty())
            write_text_atomically(folder / (path.stem().string() + ".op.toml"), r.sidecar_toml);
        if (progress) progress(i + 1, plan.size());
    }
    // Event rows: no file, the machine (and point), the time and what was done (quoted: it may hold commas).
    for (const auto& e : events) {
        std::string what = "\"";
        for (char c : e.what) what += c == '"' ? std::string("\"\"") : std::string(1, c);
        route << ',' << e.machine << ',' << e.point << ",," << e.datetime << ",,,,event,,,,,,,,,," << what << "\"\n";
    }
    for (const auto& f : files) write_text_atomically(folder / f.name, f.text);
    write_text_atomically(folder / "manifest.csv", manifest.str());
    write_text_atomically(folder / "baselines.csv", baselines.str());
    write_text_atomically(folder / "route.csv", route.str());
    write_text_atomically(folder / "truth.csv", truth.str());
    return summary;
}

}  // namespace cavitas::synth
