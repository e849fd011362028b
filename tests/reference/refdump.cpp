// cavitas_refdump: runs the cavitas DSP blocks on deterministic test signals and
// writes inputs and outputs to one JSON file, so that an independent
// implementation (tests/reference/scipy_check.py, numpy + scipy) can recompute
// every quantity from the very same samples and compare.
//
// Usage: cavitas_refdump OUT.json
//
// The signals come from a fixed-seed std::mt19937_64 and a local Box-Muller
// transform (std::normal_distribution is implementation-defined, so it is not
// used). The samples handed to cavitas are float32; the JSON holds exactly those
// float32 values (widened to double, printed round-trip exact), so the reference
// side works on identical numbers. The JSON also carries the block sizes used to
// stream data into the streaming blocks.
#include <algorithm>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <exception>
#include <fstream>
#include <iterator>
#include <numbers>
#include <random>
#include <span>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "models/calibration.hpp"
#include "models/severity.hpp"
#include "signal/window.hpp"
#include "models/rank_tests.hpp"
#include "signal/decimate.hpp"
#include "signal/envelope.hpp"
#include "signal/spectrum.hpp"
#include "signal/stats.hpp"

namespace {

using nlohmann::json;
namespace dsp = cavitas::dsp;

constexpr double kFs = 25600.0;
constexpr std::uint64_t kSeed = 0x6361766974617321ULL;  // "cavitas!"
constexpr double kTwoPi = 2.0 * std::numbers::pi;

// Standard normal deviates: Box-Muller on 53-bit uniforms from mt19937_64.
class Gaussian {
public:
    explicit Gaussian(std::uint64_t seed) : engine_(seed) {}

    double operator()() {
        if (have_spare_) {
            have_spare_ = false;
            return spare_;
        }
        const double u1 = open_uniform();
        const double u2 = open_uniform();
        const double r = std::sqrt(-2.0 * std::log(u1));
        spare_ = r * std::sin(kTwoPi * u2);
        have_spare_ = true;
        return r * std::cos(kTwoPi * u2);
    }

    /// Uniform on (0, 1), never 0 (log-safe) and never 1.
    double open_uniform() {
        const std::uint64_t bits = engine_() >> 11;  // 53 random bits
        return (static_cast<double>(bits) + 0.5) * 0x1p-53;
    }

private:
    std::mt19937_64 engine_;
    bool have_spare_ = false;
    double spare_ = 0.0;
};

std::vector<float> to_float(const std::vector<double>& x) {
    std::vector<float> out(x.size());
    for (std::size_t i = 0; i < x.size(); ++i) out[i] = static_cast<float>(x[i]);
    return out;
}

template <typename T>
std::vector<double> widen(std::span<const T> x) {
    std::vector<double> out(x.size());
    for (std::size_t i = 0; i < x.size(); ++i) out[i] = static_cast<double>(x[i]);
    return out;
}

std::vector<double> to_vector(std::span<const double> x) { return {x.begin(), x.end()}; }

double time_of(std::size_t i) { return static_cast<double>(i) / kFs; }

// ---- test signals -------------------------------------------------------------

std::vector<double> white_noise(Gaussian& g, std::size_t n, double sigma) {
    std::vector<double> x(n);
    for (auto& v : x) v = sigma * g();
    return x;
}

std::vector<double> sine_plus_noise(Gaussian& g, std::size_t n, double amp, double f_hz, double phase, double sigma,
                                    double dc) {
    std::vector<double> x(n);
    for (std::size_t i = 0; i < n; ++i) x[i] = dc + amp * std::sin(kTwoPi * f_hz * time_of(i) + phase) + sigma * g();
    return x;
}

std::vector<double> am_tone(Gaussian& g, std::size_t n, double fc, double fm, double m, double sigma) {
    std::vector<double> x(n);
    for (std::size_t i = 0; i < n; ++i) {
        const double t = time_of(i);
        x[i] = (1.0 + m * std::cos(kTwoPi * fm * t)) * std::cos(kTwoPi * fc * t) + sigma * g();
    }
    return x;
}

// Impulses at a non-integer period, each ringing a damped resonance, plus noise
// (the shape of a cavitation or bearing-defect burst train).
std::vector<double> impulse_ringing(Gaussian& g, std::size_t n, double rate_hz, double f_res, double decay_per_s,
                                    double sigma) {
    std::vector<double> x(n, 0.0);
    const double period = kFs / rate_hz;  // samples, not an integer
    const auto ring = static_cast<std::size_t>(std::ceil(8.0 * kFs / decay_per_s));
    for (double start = 10.3; start < static_cast<double>(n); start += period) {
        const auto first = static_cast<std::size_t>(std::ceil(start));
        const double amp = 0.8 + 0.4 * g.open_uniform();
        for (std::size_t i = first; i < n && i < first + ring; ++i) {
            const double t = (static_cast<double>(i) - start) / kFs;
            x[i] += amp * std::exp(-decay_per_s * t) * std::sin(kTwoPi * f_res * t);
        }
    }
    for (auto& v : x) v += sigma * g();
    return x;
}

struct Tone {
    std::size_t bin;
    double amp;
    double phase;
};

// Sum of cosines at exact bins of an n-point transform (exactly band-limited
// before float32 rounding).
std::vector<double> bin_tones(std::size_t n, const std::vector<Tone>& tones) {
    std::vector<double> x(n, 0.0);
    for (const Tone& t : tones)
        for (std::size_t i = 0; i < n; ++i) {
            const double arg = kTwoPi * static_cast<double>((t.bin * i) % n) / static_cast<double>(n);
            x[i] += t.amp * std::cos(arg + t.phase);
        }
    return x;
}

// x[i + n/2] = -x[i]: only odd bins are non-zero, so DC and Nyquist are exactly
// absent, even after float32 rounding (negation is exact). With n/2 even the
// whole signal lies inside the analytic band 1 .. n/2-1.
std::vector<float> half_wave_antisymmetric(Gaussian& g, std::size_t n) {
    std::vector<float> x(n);
    const std::size_t h = n / 2;
    for (std::size_t i = 0; i < h; ++i) {
        const double v = 0.5 * g() + 0.8 * std::sin(kTwoPi * 1000.0 * time_of(i)) +
                         (i % 97 == 0 ? 2.0 : 0.0);  // a few spikes
        x[i] = static_cast<float>(v);
        x[i + h] = -x[i];
    }
    return x;
}

// ---- block runners ------------------------------------------------------------

// Uneven block lengths (prime-ish, below, at and above the frame length) so that
// the streaming paths see partial frames, exact frames and multi-frame blocks.
std::vector<std::size_t> block_plan(std::size_t total, std::size_t segment) {
    const std::size_t pattern[] = {1, 17, segment - 1, segment, segment + 1, 333, 3 * segment + 5, 2, segment / 2 - 1};
    std::vector<std::size_t> blocks;
    std::size_t used = 0;
    for (std::size_t k = 0; used < total; ++k) {
        const std::size_t b = std::min(pattern[k % std::size(pattern)], total - used);
        blocks.push_back(b);
        used += b;
    }
    return blocks;
}

json moments_json(const dsp::Moments& m) {
    return {{"count", m.count}, {"mean", m.mean},   {"rms", m.rms},
            {"peak", m.peak},   {"crest", m.crest}, {"kurtosis", m.kurtosis}};
}

template <typename T>
json run_moments(const std::string& signal, std::span<const T> x) {
    json out;
    out["signal"] = signal;
    out["input_type"] = sizeof(T) == sizeof(float) ? "float32" : "float64";
    out["batch"] = moments_json(dsp::moments(x));
    const auto blocks = block_plan(x.size(), 1000);
    dsp::MomentAccumulator acc;
    std::size_t pos = 0;
    for (std::size_t b : blocks) {
        acc.add(x.subspan(pos, b));
        pos += b;
    }
    out["stream"] = moments_json(acc.result());
    out["stream_blocks"] = blocks;
    return out;
}

struct Band {
    double lo, hi;
};

template <typename T>
json run_welch(const std::string& signal, std::span<const T> x, std::size_t segment, const std::vector<Band>& bands) {
    dsp::WelchPsd welch(dsp::WelchConfig{segment}, kFs);
    const auto blocks = block_plan(x.size(), segment);
    std::size_t pos = 0;
    for (std::size_t b : blocks) {
        welch.push(x.subspan(pos, b));
        pos += b;
    }
    const std::vector<double> psd = welch.psd();
    json out;
    out["signal"] = signal;
    out["input_type"] = sizeof(T) == sizeof(float) ? "float32" : "float64";
    out["fs"] = kFs;
    out["segment_size"] = segment;
    out["blocks"] = blocks;
    out["frames"] = welch.frames();
    out["bin_hz"] = welch.bin_hz();
    out["psd"] = psd;
    json bp = json::array();
    for (const Band& b : bands)
        bp.push_back({{"lo_hz", b.lo}, {"hi_hz", b.hi}, {"power", dsp::band_power(psd, welch.bin_hz(), b.lo, b.hi)}});
    out["band_power"] = bp;
    return out;
}

json run_envelope(const std::string& signal, std::span<const float> x, std::size_t offset, std::size_t n, double lo,
                  double hi, const std::string& note) {
    dsp::EnvelopeAnalyzer env(dsp::EnvelopeConfig{lo, hi}, kFs, n);
    env.process(x.subspan(offset, n));
    json out;
    out["signal"] = signal;
    out["note"] = note;
    out["fs"] = kFs;
    out["offset"] = offset;
    out["segment_size"] = n;
    out["band_low_hz"] = lo;
    out["band_high_hz"] = hi;
    out["bin_hz"] = env.bin_hz();
    out["band_signal"] = to_vector(env.band_signal());
    out["squared_envelope"] = to_vector(env.squared_envelope());
    out["envelope_spectrum"] = to_vector(env.envelope_spectrum());
    out["mean_squared_envelope"] = env.mean_squared_envelope();
    return out;
}

json signal_json(std::span<const float> x, const std::string& description) {
    return {{"fs", kFs}, {"dtype", "float32"}, {"description", description}, {"x", widen(x)}};
}

json signal_json(std::span<const double> x, const std::string& description) {
    return {{"fs", kFs}, {"dtype", "float64"}, {"description", description}, {"x", to_vector(x)}};
}

// Two samples for the rank tests: Gaussian with a shift, rounded to `decimals`
// (coarse rounding makes ties, as dB values printed to 0.1 dB would).
std::vector<double> sample(Gaussian& g, std::size_t n, double mean, double sigma, int decimals) {
    std::vector<double> v(n);
    const double scale = std::pow(10.0, decimals);
    for (auto& x : v) x = std::round((mean + sigma * g()) * scale) / scale;
    return v;
}

json run_rank_sum(const std::string& name, const std::vector<double>& a, const std::vector<double>& b) {
    namespace m = cavitas::models;
    const auto u = m::mann_whitney_u(a, b);
    const auto hl = m::hodges_lehmann(a, b);
    return {{"name", name},
            {"a", a},
            {"b", b},
            {"u", u.u},
            {"p_two_sided", u.p_two_sided},
            {"exact", u.exact},
            {"hl_shift", hl.shift},
            {"cliffs_delta", m::cliffs_delta(a, b)}};
}

json run_trend(const std::string& name, const std::vector<double>& t, const std::vector<double>& y) {
    namespace m = cavitas::models;
    const auto mk = m::mann_kendall(t, y);
    return {{"name", name},       {"t", t},         {"y", y},
            {"slope", m::theil_sen_slope(t, y)}, {"s", mk.s}, {"tau", mk.tau},
            {"p_two_sided", mk.p_two_sided},     {"exact", mk.exact}};
}

json run_reliability(const std::string& name, const std::vector<double>& conf, const std::vector<int>& correct,
                     std::size_t bins) {
    const auto r = cavitas::models::reliability(conf, correct, bins);
    json b = json::array();
    for (const auto& bin : r.bins)  // an empty bin's NaN means are written as null
        b.push_back({{"low", bin.low}, {"high", bin.high}, {"count", bin.count},
                     {"mean_confidence", bin.mean_confidence}, {"accuracy", bin.accuracy}});
    return {{"name", name}, {"confidence", conf}, {"correct", correct}, {"nbins", bins}, {"bins", b},
            {"ece", r.ece},  {"mce", r.mce},       {"brier", r.brier}};
}

json run_platt(const std::string& name, const std::vector<double>& score, const std::vector<int>& positive) {
    const auto m = cavitas::models::fit_platt(score, positive);
    return {{"name", name}, {"score", score}, {"positive", positive}, {"a", m.a}, {"b", m.b}};
}

json run_pav(const std::string& name, const std::vector<double>& y, const std::vector<double>& w) {
    return {{"name", name}, {"y", y}, {"weight", w}, {"fit", cavitas::models::pav(y, w)}};
}

// RMS amplitude per line and overall velocity (models/severity) from a Welch PSD
// of tones: a bin-centred sine and a multi-tone acceleration signal in m/s2.
json run_line_rms(const std::string& name, const std::vector<std::pair<double, double>>& tones, std::size_t segment) {
    const std::size_t n = static_cast<std::size_t>(kFs) * 4;
    std::vector<double> x(n);
    for (std::size_t i = 0; i < n; ++i)
        for (const auto& [amplitude, hz] : tones)
            x[i] += amplitude * std::sin(2.0 * std::numbers::pi * hz * static_cast<double>(i) / kFs + 0.7);
    dsp::WelchPsd welch(dsp::WelchConfig{segment}, kFs);
    welch.push(std::span<const double>(x));
    const std::vector<double> psd = welch.psd();
    const double enbw_hz = dsp::enbw_bins(dsp::hann_periodic(segment)) * welch.bin_hz();
    json t = json::array();
    for (const auto& [amplitude, hz] : tones) t.push_back({{"amplitude", amplitude}, {"hz", hz}});
    return {{"name", name},
            {"segment", segment},
            {"fs_hz", kFs},
            {"phase", 0.7},
            {"samples", n},
            {"tones", t},
            {"enbw_hz", enbw_hz},
            {"line_rms", cavitas::models::line_rms(psd, enbw_hz)},
            {"overall_velocity_m_s", cavitas::models::overall_velocity_rms_m_s(psd, welch.bin_hz(), 10.0, 1000.0, 10.0)}};
}

json build() {
    Gaussian g(kSeed);

    const auto noise = to_float(white_noise(g, 65536, 0.7));
    const auto sine = to_float(sine_plus_noise(g, 9000, 1.0, 1234.5, 0.3, 0.05, 0.0));
    const auto am = to_float(am_tone(g, 8192, 5000.0, 37.0, 0.4, 0.05));
    const auto burst = to_float(impulse_ringing(g, 12000, 87.3, 4200.0, 600.0, 0.02));
    const std::vector<Tone> tones = {{1000, 1.0, 0.1}, {1100, 0.5, 1.3}, {1234, 0.25, -2.0}, {1500, 0.7, 0.7},
                                     {1790, 0.3, 2.9}};
    const auto band_tones = to_float(bin_tones(8192, tones));
    const auto odd = half_wave_antisymmetric(g, 4096);
    const auto dc_sine = sine_plus_noise(g, 8192, 0.5, 310.0, 1.0, 0.1, 3.0);  // stays double

    json j;
    j["generator"] = "cavitas_refdump";
    j["seed"] = kSeed;
    j["signals"]["white_noise"] = signal_json(noise, "Gaussian noise, sigma 0.7");
    j["signals"]["sine_noise"] = signal_json(sine, "sine 1234.5 Hz amplitude 1 + noise sigma 0.05");
    j["signals"]["am_tone"] = signal_json(am, "AM tone fc 5 kHz, fm 37 Hz, m 0.4 + noise sigma 0.05");
    j["signals"]["impulse_ringing"] =
        signal_json(burst, "impulses at 87.3 Hz ringing a 4.2 kHz resonance (decay 600/s) + noise sigma 0.02");
    j["signals"]["band_tones"] = signal_json(band_tones, "5 cosines at exact bins 1000..1790 of 8192 (3.1-5.6 kHz)");
    j["signals"]["odd_bins"] = signal_json(odd, "half-wave antisymmetric (odd bins only): noise + sine + spikes");
    j["signals"]["dc_sine_double"] = signal_json(dc_sine, "DC 3 + sine 310 Hz amplitude 0.5 + noise sigma 0.1, double");

    json tones_json = json::array();
    for (const Tone& t : tones) tones_json.push_back({{"bin", t.bin}, {"amp", t.amp}, {"phase", t.phase}});
    j["signals"]["band_tones"]["tones"] = tones_json;

    const auto fs = [](const std::vector<float>& v) { return std::span<const float>(v); };
    j["moments"] = json::array({
        run_moments("white_noise", fs(noise)),
        run_moments("sine_noise", fs(sine)),
        run_moments("impulse_ringing", fs(burst)),
        run_moments("dc_sine_double", std::span<const double>(dc_sine)),
    });

    j["welch"] = json::array({
        run_welch("white_noise", fs(noise), 4096, {{0.0, 12800.0}, {1000.0, 3000.0}, {1234.5, 4321.1}}),
        run_welch("sine_noise", fs(sine), 2048, {{1100.0, 1400.0}, {0.0, 1000.0}, {5000.0, 12800.0}}),
        run_welch("impulse_ringing", fs(burst), 1024, {{3500.0, 5000.0}}),
        run_welch("dc_sine_double", std::span<const double>(dc_sine), 2048, {{250.0, 370.0}}),
    });

    j["envelope"] = json::array({
        run_envelope("am_tone", fs(am), 0, 8192, 3000.0, 7000.0, "numpy"),
        run_envelope("impulse_ringing", fs(burst), 2000, 8192, 3000.0, 5500.0, "numpy"),
        run_envelope("band_tones", fs(band_tones), 0, 8192, 3000.0, 7000.0, "numpy+hilbert_band_limited"),
        run_envelope("odd_bins", fs(odd), 0, 4096, 0.0, 12800.0, "numpy+hilbert_exact"),
    });
    // Decimator (signal/decimate): the taps and the decimated output of the noise.
    {
        json dec = json::array();
        for (std::size_t factor : {3u, 12u}) {
            cavitas::dsp::Decimator d(cavitas::dsp::DecimatorConfig{factor});
            std::vector<float> out(noise.size() / factor + 2);
            out.resize(d.process(noise, out));
            const std::vector<double>& taps = d.taps();
            dec.push_back({{"signal", "white_noise"}, {"factor", factor}, {"numtaps", taps.size()},
                           {"cutoff", 0.8 / static_cast<double>(factor)}, {"taps", taps}, {"output", widen(std::span<const float>(out))}});
        }
        j["decimate"] = dec;
    }
    // Rank tests (models/rank_tests): small and large, with and without ties.
    Gaussian r(kSeed + 1);
    j["rank_sum"] = json::array({
        run_rank_sum("small_no_ties", sample(r, 7, 0.0, 1.0, 9), sample(r, 6, 0.8, 1.0, 9)),
        run_rank_sum("segments_no_ties", sample(r, 16, -40.0, 0.6, 9), sample(r, 16, -38.5, 0.6, 9)),
        run_rank_sum("segments_equal", sample(r, 24, -40.0, 0.6, 9), sample(r, 24, -40.0, 0.6, 9)),
        run_rank_sum("ties_0.1_db", sample(r, 20, -40.0, 0.3, 1), sample(r, 30, -39.8, 0.3, 1)),
        run_rank_sum("large_no_ties", sample(r, 80, 3.0, 1.0, 9), sample(r, 70, 3.2, 1.0, 9)),
    });
    std::vector<double> days, rising, flat, tied;
    for (int i = 0; i < 9; ++i) {
        days.push_back(28.0 * i + (i % 3));
        rising.push_back(0.25 * i + 0.3 * r());
        flat.push_back(0.3 * r());
        tied.push_back(std::round(0.2 * i + 0.5 * r()));
    }
    j["trend"] = json::array({
        run_trend("rising_9", days, rising),
        run_trend("flat_9", days, flat),
        run_trend("tied_9", days, tied),
    });
    // Calibration (models/calibration): reliability bins with values on every bin edge,
    // Platt fits (overlapping and separable classes), PAV with and without weights.
    {
        Gaussian c(kSeed + 2);
        std::vector<double> conf;
        std::vector<int> correct;
        for (int i = 0; i < 400; ++i) {
            const double p = c.open_uniform();
            conf.push_back(p);
            correct.push_back(c.open_uniform() < p * p ? 1 : 0);  // overconfident on purpose
        }
        for (int k = 0; k <= 10; ++k) {  // the edges of 5 and 10 bins, as the doubles k/10
            conf.push_back(static_cast<double>(k) / 10.0);
            correct.push_back(k % 2);
        }
        for (int k = 0; k <= 7; ++k) {  // the edges of 7 bins
            conf.push_back(static_cast<double>(k) / 7.0);
            correct.push_back((k + 1) % 2);
        }
        j["reliability"] = json::array({run_reliability("uniform_bins5", conf, correct, 5),
                                        run_reliability("uniform_bins7", conf, correct, 7),
                                        run_reliability("uniform_bins10", conf, correct, 10)});
        std::vector<double> score, sep_score;
        std::vector<int> positive, sep_positive;
        for (int i = 0; i < 300; ++i) {
            score.push_back(-1.0 + c());
            positive.push_back(0);
        }
        for (int i = 0; i < 200; ++i) {
            score.push_back(0.8 + 1.2 * c());
            positive.push_back(1);
        }
        for (int i = 0; i < 20; ++i) {
            sep_score.push_back(-3.0 + 2.0 * c.open_uniform());
            sep_positive.push_back(0);
            sep_score.push_back(1.0 + 2.0 * c.open_uniform());
            sep_positive.push_back(1);
        }
        j["platt"] = json::array({run_platt("overlapping_500", score, positive),
                                  run_platt("separable_40", sep_score, sep_positive)});
        std::vector<double> y, w;
        for (int i = 0; i < 60; ++i) {
            y.push_back(0.05 * i + c());
            w.push_back(0.5 + 1.5 * c.open_uniform());
        }
        j["line_rms"] = json::array({run_line_rms("sine_400hz", {{2.5, 400.0}}, 2560),
                                     run_line_rms("tones_50_300_2000hz", {{1.0, 50.0}, {2.0, 300.0}, {5.0, 2000.0}}, 25600)});
        j["pav"] = json::array({run_pav("review_example", {1, 0, 1, 0, 0, 1}, {}),
                                run_pav("trend_60", y, {}),
                                run_pav("trend_60_weighted", y, w)});
    }
    return j;
}

}  // namespace

int main(int argc, char** argv) {
    if (argc != 2) {
        std::fprintf(stderr, "usage: %s OUT.json\n", argc > 0 ? argv[0] : "cavitas_refdump");
        return 2;
    }
    try {
        const json j = build();
        std::ofstream f(argv[1], std::ios::binary);
        if (!f) {
            std::fprintf(stderr, "cavitas_refdump: cannot open %s for writing\n", argv[1]);
            return 1;
        }
        f << j.dump() << '\n';
        f.close();
        if (!f) {
            std::fprintf(stderr, "cavitas_refdump: write to %s failed\n", argv[1]);
            return 1;
        }
    } catch (const std::exception& e) {
        std::fprintf(stderr, "cavitas_refdump: %s\n", e.what());
        return 1;
    }
    return 0;
}
