// Tests of the synthetic-recording generator (tools/synth). Everything is
// measured here with independent, deliberately simple methods:
//  * tone amplitude: Hann-windowed single-bin DFT at the exact generated frequency;
//  * HF band (0.2..0.45 fs): 4th-order Butterworth high-pass at 0.2 fs and
//    4th-order low-pass at 0.45 fs (bilinear biquads written here), then rms and
//    kurtosis of the result. The edges are not brick-wall, so the rises are
//    checked against the documented ranges with a little slack.
#include <catch2/catch.hpp>

#include <sndfile.h>
#include <unistd.h>

#include <bit>
#include <algorithm>
#include <cmath>
#include <cstdint>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <map>
#include <numbers>
#include <set>
#include <stdexcept>
#include <string>
#include <vector>

#include "models/operating_point.hpp"
#include "src/io/manifest.hpp"
#include "src/io/operating_point_io.hpp"
#include "src/io/sources.hpp"
#include "tools/synth/synth.hpp"

namespace synth = cavitas::synth;

namespace {

constexpr double kPi = std::numbers::pi;

struct Section {
    double b0, b1, b2, a1, a2;
};

Section butter_section(bool high, double f_hz, double fs_hz, double q) {
    const double w = 2 * kPi * f_hz / fs_hz, c = std::cos(w), alpha = std::sin(w) / (2 * q), a0 = 1 + alpha;
    if (high) return {(1 + c) / 2 / a0, -(1 + c) / a0, (1 + c) / 2 / a0, -2 * c / a0, (1 - alpha) / a0};
    return {(1 - c) / 2 / a0, (1 - c) / a0, (1 - c) / 2 / a0, -2 * c / a0, (1 - alpha) / a0};
}

/// x through 4th-order Butterworth high-pass at lo and low-pass at hi.
std::vector<double> band_pass(const std::vector<float>& x, double fs_hz, double lo_hz, double hi_hz) {
    std::vector<double> y(x.begin(), x.end());
    const double q1 = 0.5411961, q2 = 1.3065630;  // 4th-order Butterworth pole pairs
    for (const Section& s : {butter_section(true, lo_hz, fs_hz, q1), butter_section(true, lo_hz, fs_hz, q2),
                             butter_section(false, hi_hz, fs_hz, q1), butter_section(false, hi_hz, fs_hz, q2)}) {
        double z1 = 0, z2 = 0;
        for (double& v : y) {
            const double in = v, out = s.b0 * in + z1;
            z1 = s.b1 * in - s.a1 * out + z2;
            z2 = s.b2 * in - s.a2 * out;
            v = out;
        }
    }
    // Drop the first 50 ms, where the filters settle.
    y.erase(y.begin(), y.begin() + static_cast<std::ptrdiff_t>(0.05 * fs_hz));
    return y;
}

struct BandStats {
    double rms;
    double kurtosis;
};

BandStats hf_stats(const std::vector<float>& x, double fs_hz) {
    const auto y = band_pass(x, fs_hz, 0.2 * fs_hz, 0.45 * fs_hz);
    double m2 = 0, m4 = 0;
    for (double v : y) {
        m2 += v * v;
        m4 += v * v * v * v;
    }
    m2 /= static_cast<double>(y.size());
    m4 /= static_cast<double>(y.size());
    return {std::sqrt(m2), m4 / (m2 * m2)};
}

double lf_rms(const std::vector<float>& x, double fs_hz) {
    const auto y = band_pass(x, fs_hz, 5.0, 1000.0);
    double m2 = 0;
    for (double v : y) m2 += v * v;
    return std::sqrt(m2 / static_cast<double>(y.size()));
}

/// Amplitude of the sinusoid at exactly f_hz (Hann window, coherent gain undone).
double tone_amplitude(const std::vector<float>& x, double fs_hz, double f_hz) {
    double re = 0, im = 0, wsum = 0;
    const auto n = x.size();
    for (std::size_t i = 0; i < n; ++i) {
        const double w = 0.5 - 0.5 * std::cos(2 * kPi * static_cast<double>(i) / static_cast<double>(n - 1));
        const double ph = 2 * kPi * f_hz * static_cast<double>(i) / fs_hz;
        re += w * x[i] * std::cos(ph);
        im += w * x[i] * std::sin(ph);
        wsum += w;
    }
    return 2.0 * std::hypot(re, im) / wsum;
}

double db(double ratio) { return 20.0 * std::log10(ratio); }

synth::CaseSpec p101(synth::Kind kind, std::uint64_t seed, double seconds = 3.0) {
    synth::CaseSpec s;
    s.machine = synth::machine_by_tag("OW-P101");
    s.kind = kind;
    s.duration_s = seconds;
    s.seed = seed;
    s.severity = 0.5;
    return s;
}

std::filesystem::path scratch_dir() {
    const auto dir = std::filesystem::temp_directory_path() / ("cavitas-synth-test-" + std::to_string(::getpid()));
    std::filesystem::create_directories(dir);
    return dir;
}

std::vector<float> read_back(const std::string& path, SF_INFO& info) {
    info = SF_INFO{};
    SNDFILE* f = sf_open(path.c_str(), SFM_READ, &info);
    REQUIRE(f != nullptr);
    std::vector<float> v(static_cast<std::size_t>(info.frames));
    REQUIRE(sf_readf_float(f, v.data(), info.frames) == info.frames);
    sf_close(f);
    return v;
}

}  // namespace

TEST_CASE("synth: the same seed gives identical samples and another seed gives different ones", "[tools]") {
    const auto a = synth::synthesize(p101(synth::Kind::developed, 5, 2.0));
    const auto b = synth::synthesize(p101(synth::Kind::developed, 5, 2.0));
    const auto c = synth::synthesize(p101(synth::Kind::developed, 6, 2.0));
    REQUIRE(a.size() == 51200);
    CHECK(a == b);
    CHECK(a != c);
}

TEST_CASE("synth: a healthy recording carries the shaft and blade-pass tones at their generated amplitudes", "[tools]") {
    const auto spec = p101(synth::Kind::healthy, 21);
    const auto rec = synth::synthesize_recording(spec);
    const double fs = spec.machine.fs_hz;
    const double f1 = spec.machine.rpm / 60.0;  // 24.75 Hz
    const double bpf = spec.machine.vanes * f1;  // 173.25 Hz
    CHECK(rec.rpm == spec.machine.rpm);
    // Nominal 0.05 g (1x) and 0.08 g (BPF), +-10 % per recording, plus a little noise.
    CHECK(tone_amplitude(rec.g, fs, f1) == Approx(0.05).margin(0.0065));
    CHECK(tone_amplitude(rec.g, fs, bpf) == Approx(0.08).margin(0.0095));
    CHECK(tone_amplitude(rec.g, fs, 2 * bpf) == Approx(0.03).margin(0.0045));
    // Between the tones there is only background.
    CHECK(tone_amplitude(rec.g, fs, 1.5 * bpf) < 0.004);
    // Overall background plus tones stays around 0.1 g rms.
    double m2 = 0;
    for (float v : rec.g) m2 += static_cast<double>(v) * v;
    CHECK(std::sqrt(m2 / static_cast<double>(rec.g.size())) == Approx(0.095).margin(0.02));
}

TEST_CASE("synth: cavitation raises the HF band over the healthy twin by the documented ranges", "[tools]") {
    // Same seed: identical background and tones, so the difference is the cavitation.
    const auto spec_h = p101(synth::Kind::healthy, 33);
    const double fs = spec_h.machine.fs_hz;
    const BandStats healthy = hf_stats(synth::synthesize(spec_h), fs);
    const auto inc = synth::synthesize_recording(p101(synth::Kind::incipient, 33));
    const auto dev = synth::synthesize_recording(p101(synth::Kind::developed, 33));
    const BandStats si = hf_stats(inc.g, fs), sd = hf_stats(dev.g, fs);
    const double rise_i = db(si.rms / healthy.rms), rise_d = db(sd.rms / healthy.rms);

    // Documented: incipient 3.5..7.5 dB, developed 11..24 dB; severity 0.5 aims at 5.5 and 17.5.
    CHECK(rise_i > 3.0);
    CHECK(rise_i < 8.0);
    CHECK(rise_i == Approx(inc.params.cavitation.hf_rise_db).margin(1.5));
    CHECK(rise_d > 10.0);
    CHECK(rise_d < 25.0);
    CHECK(rise_d == Approx(dev.params.cavitation.hf_rise_db).margin(1.5));

    // Healthy HF is Gaussian; sparse collapses are impulsive; dense ones nearly Gaussian again.
    CHECK(healthy.kurtosis == Approx(3.0).margin(0.3));
    CHECK(si.kurtosis > 10.0);
    CHECK(sd.kurtosis < si.kurtosis / 3.0);
    CHECK(sd.kurtosis < 6.5);

    // Developed cavitation also lifts the flow-noise band by about 2..4 dB.
    const double lf_rise = db(lf_rms(dev.g, fs) / lf_rms(synth::synthesize(spec_h), fs));
    CHECK(lf_rise > 1.5);
    CHECK(lf_rise < 4.5);
}

TEST_CASE("synth: every severity parameter can be set directly", "[tools]") {
    auto spec = p101(synth::Kind::incipient, 44, 2.0);
    synth::FaultParams p = synth::draw_params(synth::Kind::incipient, 0.5, 44);
    p.cavitation.collapse_rate_per_s = 40.0;
    p.cavitation.hf_rise_db = 6.0;
    spec.params = p;
    const auto rec = synth::synthesize_recording(spec);
    CHECK(rec.params.cavitation.collapse_rate_per_s == 40.0);
    const double rise = db(hf_stats(rec.g, spec.machine.fs_hz).rms /
                           hf_stats(synth::synthesize(p101(synth::Kind::healthy, 44, 2.0)), spec.machine.fs_hz).rms);
    CHECK(rise == Approx(6.0).margin(1.5));
}

TEST_CASE("synth: bearing defect orders are at least 0.15 away from any integer", "[tools]") {
    for (std::uint64_t seed = 1; seed <= 300; ++seed) {
        const double order = synth::draw_params(synth::Kind::bearing, 0.5, seed).bearing.order;
        INFO("seed " << seed << " order " << order);
        CHECK(order >= 3.0);
        CHECK(order <= 5.6);
        CHECK(std::abs(order - std::round(order)) >= 0.15);
    }
    // The impacts lift the HF band (6..15 dB documented) and make it impulsive.
    const auto spec_h = p101(synth::Kind::healthy, 55);
    const auto bear = synth::synthesize(p101(synth::Kind::bearing, 55));
    const BandStats h = hf_stats(synth::synthesize(spec_h), spec_h.machine.fs_hz);
    const BandStats b = hf_stats(bear, spec_h.machine.fs_hz);
    CHECK(db(b.rms / h.rms) > 6.0);
    CHECK(db(b.rms / h.rms) < 15.0);
    CHECK(b.kurtosis > 4.5);
}

TEST_CASE("synth: the look-alikes change only what they are meant to change", "[tools]") {
    const auto spec_h = p101(synth::Kind::healthy, 66, 2.0);
    const double fs = spec_h.machine.fs_hz;
    const auto healthy = synth::synthesize(spec_h);
    const double hf_h = hf_stats(healthy, fs).rms, lf_h = lf_rms(healthy, fs);

    const auto turb = synth::synthesize(p101(synth::Kind::turbulence, 66, 2.0));
    CHECK(db(lf_rms(turb, fs) / lf_h) > 5.0);
    CHECK(db(lf_rms(turb, fs) / lf_h) < 13.0);
    CHECK(std::abs(db(hf_stats(turb, fs).rms / hf_h)) < 0.3);

    const auto mains = synth::synthesize_recording(p101(synth::Kind::mains, 66, 2.0));
    CHECK(tone_amplitude(mains.g, fs, mains.params.mains.mains_hz) ==
          Approx(mains.params.mains.amplitude_g).margin(0.02));
    CHECK(std::abs(db(hf_stats(mains.g, fs).rms / hf_h)) < 0.3);

    const auto speed = synth::synthesize_recording(p101(synth::Kind::speed, 66, 2.0));
    const double off = std::abs(speed.rpm / spec_h.machine.rpm - 1.0);
    CHECK(off >= 0.02);
    CHECK(off <= 0.04);
    const double bpf = spec_h.machine.vanes * speed.rpm / 60.0;
    CHECK(tone_amplitude(speed.g, fs, bpf) == Approx(0.08).margin(0.0095));

    for (auto k : {synth::Kind::bearing, synth::Kind::turbulence, synth::Kind::mains, synth::Kind::speed})
        CHECK(synth::label_of(k) == "normal");
}

TEST_CASE("synth: write_wav then reading back reproduces the values within the quantisation step", "[tools]") {
    const auto dir = scratch_dir();
    const auto rec = synth::synthesize_recording(p101(synth::Kind::developed, 77, 0.5));
    struct Case {
        synth::Encoding enc;
        double tolerance_g;
    };
    const double step16 = synth::kFullScaleG / 32768.0;
    for (const Case& c : {Case{synth::Encoding::pcm16, step16}, Case{synth::Encoding::flac16, step16},
                          Case{synth::Encoding::pcm24, synth::kFullScaleG / 8388608.0 * 2},
                          Case{synth::Encoding::float32, 1e-6}}) {
        std::string name = "x";
        name += synth::extension_of(c.enc);  // (operator+ on a literal trips a GCC 12 -Wrestrict false positive)
        const std::string path = (dir / name).string();
        INFO(synth::name_of(c.enc));
        CHECK(synth::write_wav(path, rec.g, rec.fs_hz, synth::kFullScaleG, synth::sf_format_of(c.enc)) == 0);
        CHECK_FALSE(std::filesystem::exists(path + ".tmp"));
        SF_INFO info;
        const auto back = read_back(path, info);
        CHECK(info.samplerate == 25600);
        CHECK(info.channels == 1);
        REQUIRE(back.size() == rec.g.size());
        double worst = 0;
        for (std::size_t i = 0; i < back.size(); ++i)
            worst = std::max(worst, std::abs(static_cast<double>(back[i]) * synth::kFullScaleG - rec.g[i]));
        CHECK(worst <= c.tolerance_g);
    }
    std::filesystem::remove_all(dir);
}

TEST_CASE("synth: write_wav names the file when its folder cannot be written", "[tools]") {
    const std::vector<float> g(100, 0.0f);
    const std::string path = (std::filesystem::temp_directory_path() / "cavitas-no-such-folder" / "sub" / "a.wav").string();
    try {
        synth::write_wav(path, g, 25600, synth::kFullScaleG, synth::sf_format_of(synth::Encoding::pcm16));
        FAIL("write_wav did not throw");
    } catch (const std::runtime_error& e) {
        CHECK(std::string(e.what()).find(path) != std::string::npos);
    }
}

TEST_CASE("synth: the demo and evaluation plans have the promised content", "[tools]") {
    const auto demo = synth::demo_plan();
    std::set<std::string> names;
    std::uintmax_t bytes = 0;
    for (const auto& r : demo) {
        names.insert(r.file);
        const auto frames = static_cast<std::uintmax_t>(std::llround(r.spec.duration_s * r.spec.machine.fs_hz));
        const std::uintmax_t axes = 1 + r.more_axes.size();
        switch (r.format) {
            case synth::FileFormat::sound: bytes += 44 + 2 * frames; break;  // 16-bit PCM
            case synth::FileFormat::csv: bytes += 11 * axes * frames; break;   // up to 11 characters a value
            default: bytes += 4 * axes * frames + 1000; break;               // float32 and headers
        }
    }
    CHECK(names.count("OW-P101_baseline_1.wav") == 1);
    CHECK(names.count("OW-P101_2026-10-05.wav") == 1);
    CHECK(names.count("OW-P102_2026-09-07.wav") == 1);
    // Under the 10 MB the contributor guide allows for samples/.
    CHECK(bytes <= 10000000);
    // Three dated visits of OW-P101 and one after its repair, each with its operating point.
    int p101_visits = 0;
    for (const auto& r : demo) {
        CHECK_FALSE(r.sidecar_toml.empty());
        if (r.spec.machine.tag == "OW-P101" && r.point == "DE-H" && r.role == "test") ++p101_visits;
    }
    CHECK(p101_visits == 4);

    const auto eval = synth::eval_plan(2, 9);
    CHECK(eval.size() == 3 * (3 + 7 * 2));
    std::set<std::uint64_t> seeds;
    int baselines = 0, developed = 0;
    for (const auto& r : eval) {
        seeds.insert(r.spec.seed);
        baselines += r.role == "baseline";
        developed += r.spec.kind == synth::Kind::developed;
        CHECK(r.spec.severity >= 0.0);
        CHECK(r.spec.severity <= 1.0);
    }
    CHECK(seeds.size() == eval.size());
    CHECK(baselines == 9);
    CHECK(developed == 6);
}

namespace {

/// FNV-1a, 64 bit (Fowler/Noll/Vo, public domain): a plain, order-sensitive digest.
struct Fnv1a {
    std::uint64_t h = 0xcbf29ce484222325ULL;
    void bytes(const void* p, std::size_t n) {
        const auto* b = static_cast<const unsigned char*>(p);
        for (std::size_t i = 0; i < n; ++i) {
            h ^= b[i];
            h *= 0x100000001b3ULL;
        }
    }
    void text(const std::string& s) { bytes(s.data(), s.size() + 1); }  // with the terminator: "ab","c" != "a","bc"
    void number(double v) {
        const auto u = std::bit_cast<std::uint64_t>(v);
        bytes(&u, sizeof u);
    }
    void samples(const std::vector<float>& g) {
        for (float v : g) {
            const auto u = std::bit_cast<std::uint32_t>(v);
            bytes(&u, sizeof u);
        }
    }
};

void digest_plan_row(Fnv1a& d, const synth::PlannedRecording& r) {
    d.text(r.file);
    d.text(r.role);
    d.text(r.point);
    d.text(r.datetime);
    d.text(r.spec.machine.tag);
    d.text(synth::name_of(r.spec.kind));
    d.text(synth::name_of(r.encoding));
    d.text(r.sidecar_toml);
    d.number(r.spec.duration_s);
    d.number(r.spec.severity);
    d.number(r.spec.rpm_override);
    d.number(static_cast<double>(r.spec.seed));
}

}  // namespace

TEST_CASE("synth: the evaluation and demo sets are unchanged by later additions to the generator", "[tools]") {
    // The reference digests were computed with the generator as it stood before
    // the field set and its CaseSpec fields were added (commit 0ebafe4), from
    // eval_plan(6, 1) - the set `cavitas-synth eval` writes for ctest - and
    // demo_plan(), whose recordings are committed in samples/. They cover every
    // row of both plans and the samples of a few recordings of each set (the
    // first of every kind of OW-P101's eval tests, a baseline of each machine,
    // two demo recordings), bit for bit.
    Fnv1a plans;
    const auto eval = synth::eval_plan(6, 1);
    for (const auto& r : eval) digest_plan_row(plans, r);
    const auto demo = synth::demo_plan();
    // The DE-H rows (the first 13); the triaxial NDE-T rows came later.
    for (std::size_t i = 0; i < 13; ++i) digest_plan_row(plans, demo[i]);

    Fnv1a samples;
    std::set<std::string> kinds_done, machines_done;
    for (const auto& r : eval) {
        const bool first_baseline = r.role == "baseline" && machines_done.insert(r.spec.machine.tag).second;
        const bool first_of_kind = r.role == "test" && r.spec.machine.tag == "OW-P101" &&
                                   kinds_done.insert(synth::name_of(r.spec.kind)).second;
        if (first_baseline || first_of_kind) samples.samples(synth::synthesize(r.spec));
    }
    CHECK(kinds_done.size() == synth::kAllKinds.size());
    CHECK(machines_done.size() == 3);
    samples.samples(synth::synthesize(demo[4].spec));  // OW-P101 developed
    samples.samples(synth::synthesize(demo[12].spec));  // OW-P103 bearing
    // Floating point as built here (x86-64, SSE2 without FMA, Debian 12's libm):
    // another libm may round sin/exp/log differently and move the sample digest.
    CHECK(plans.h == 0xfb0bc9e574693224ULL);
    CHECK(samples.h == 0x5681ca1de3379658ULL);
}

namespace {

double rms_db(const std::vector<float>& x, std::size_t from, std::size_t to) {
    double m2 = 0;
    for (std::size_t i = from; i < to; ++i) m2 += static_cast<double>(x[i]) * x[i];
    return 10.0 * std::log10(m2 / static_cast<double>(to - from));
}

double rms_db(const std::vector<double>& x, std::size_t from, std::size_t to) {
    double m2 = 0;
    for (std::size_t i = from; i < to; ++i) m2 += x[i] * x[i];
    return 10.0 * std::log10(m2 / static_cast<double>(to - from));
}

double hf_db(const std::vector<float>& x, double fs_hz) {
    const auto y = band_pass(x, fs_hz, 0.2 * fs_hz, 0.45 * fs_hz);
    return rms_db(y, 0, y.size());
}

}  // namespace

TEST_CASE("synth: a re-mount's gain scales the whole recording and its tilt turns the spectrum about 1 kHz", "[tools]") {
    const auto plain_spec = p101(synth::Kind::developed, 91, 3.0);
    const double fs = plain_spec.machine.fs_hz;
    const auto plain = synth::synthesize_recording(plain_spec);

    // Gain: +3 dB and -2.5 dB on the rms of the whole recording (exact up to float rounding).
    for (const double gain_db : {3.0, -2.5}) {
        auto spec = plain_spec;
        spec.gain_db = gain_db;
        const auto g = synth::synthesize(spec);
        REQUIRE(g.size() == plain.g.size());
        CHECK(rms_db(g, 0, g.size()) - rms_db(plain.g, 0, plain.g.size()) == Approx(gain_db).margin(0.1));
    }

    // Tilt of +-1 dB/decade about 1 kHz: each machine tone moves by
    // tilt * log10(f / 1 kHz) dB (computed: 1x 24.75 Hz -1.607, BPF 173.25 Hz
    // -0.761, 2xBPF 346.5 Hz -0.460 at +1 dB/decade); the generator's line
    // holds within 4 % of the tilt (its design note), the tone estimate within
    // a few hundredths of a dB on the same background.
    const double f1 = plain_spec.machine.rpm / 60.0, bpf = plain_spec.machine.vanes * f1;
    for (const double tilt : {1.0, -1.0}) {
        auto spec = plain_spec;
        spec.tilt_db_per_decade = tilt;
        const auto g = synth::synthesize(spec);
        for (const double f : {f1, bpf, 2 * bpf}) {
            INFO("tilt " << tilt << " dB/decade, tone at " << f << " Hz");
            const double moved_db = db(tone_amplitude(g, fs, f) / tone_amplitude(plain.g, fs, f));
            CHECK(moved_db == Approx(tilt * std::log10(f / 1000.0)).margin(0.1));
        }
        // The HF band 5.1..11.5 kHz moves between tilt*log10(5.12) = 0.71 and
        // tilt*log10(11.52) = 1.06 dB (its power sits mostly near the resonances).
        const double hf_moved_db = hf_db(g, fs) - hf_db(plain.g, fs);
        INFO("tilt " << tilt << ": HF band moved " << hf_moved_db << " dB");
        CHECK(tilt * hf_moved_db > 0.65);
        CHECK(tilt * hf_moved_db < 1.1);
    }
}

TEST_CASE("synth: a level step raises the HF band by step_db from step_at_s on and nothing before", "[tools]") {
    auto spec = p101(synth::Kind::healthy, 92, 4.0);
    const double fs = spec.machine.fs_hz;
    const auto plain = synth::synthesize(spec);
    spec.step_at_s = 2.0;
    spec.step_db = 12.0;
    const auto stepped = synth::synthesize(spec);
    const auto at = static_cast<std::size_t>(2.0 * fs);
    // Before the step the samples are those of the same spec without it, bit for bit.
    CHECK(std::equal(plain.begin(), plain.begin() + static_cast<std::ptrdiff_t>(at), stepped.begin()));
    CHECK_FALSE(std::equal(plain.begin(), plain.end(), stepped.begin()));

    // HF band power after the step (its first 50 ms of ring-up left out) against
    // before it: 12 dB as set (expected value; 2 s of noise in a 6 kHz band
    // estimate it within a few hundredths of a dB).
    const auto hf = band_pass(stepped, fs, 0.2 * fs, 0.45 * fs);  // starts 50 ms in
    const auto skip = static_cast<std::size_t>(0.05 * fs);
    const double before_db = rms_db(hf, 0, at - skip);
    const double after_db = rms_db(hf, at, hf.size());
    CHECK(after_db - before_db == Approx(12.0).margin(1.0));
    // Below 1 kHz (where flow noise and the tones live) it stays put: after the
    // step, against the same spec without it (the same background, so the
    // difference is the step's alone; up to 700 Hz, as this test's gentle
    // 4th-order low-pass would let in the step's onset just above 1 kHz).
    const auto lf = band_pass(stepped, fs, 5.0, 700.0), lf_plain = band_pass(plain, fs, 5.0, 700.0);
    CHECK(std::abs(rms_db(lf, at, lf.size()) - rms_db(lf_plain, at, lf_plain.size())) < 0.1);
}

TEST_CASE("synth: speed exponents scale the background and the tones as (rpm / nominal)^m", "[tools]") {
    auto base = p101(synth::Kind::healthy, 93, 3.0);
    const double fs = base.machine.fs_hz;
    base.rpm_override = 0.5 * base.machine.rpm;
    const auto unscaled = synth::synthesize(base);

    // HF exponent 2 at half speed: 20 * 2 * log10(0.5) = -12.04 dB (computed) on the HF band.
    auto hf_spec = base;
    hf_spec.level_speed_exponent_hf = 2.0;
    const auto hf_scaled = synth::synthesize(hf_spec);
    CHECK(hf_db(hf_scaled, fs) - hf_db(unscaled, fs) == Approx(40.0 * std::log10(0.5)).margin(1.0));

    // LF exponent 2 at half speed: the blade-pass tone (now at 86.6 Hz) 12.04 dB lower.
    auto lf_spec = base;
    lf_spec.level_speed_exponent_lf = 2.0;
    const auto lf_scaled = synth::synthesize(lf_spec);
    const double bpf = base.machine.vanes * base.rpm_override / 60.0;
    CHECK(db(tone_amplitude(lf_scaled, fs, bpf) / tone_amplitude(unscaled, fs, bpf)) ==
          Approx(40.0 * std::log10(0.5)).margin(0.2));
    // ... and leaves the HF band alone (the pink part's share there is negligible).
    CHECK(std::abs(hf_db(lf_scaled, fs) - hf_db(unscaled, fs)) < 0.1);

    // A fault keeps its rise over the scaled background (here 0.7x with the
    // field set's exponents 2.5 and 2): developed against its healthy twin.
    auto healthy = p101(synth::Kind::healthy, 94, 3.0);
    healthy.rpm_override = 0.7 * healthy.machine.rpm;
    healthy.level_speed_exponent_hf = 2.5;
    healthy.level_speed_exponent_lf = 2.0;
    auto developed = healthy;
    developed.kind = synth::Kind::developed;
    const auto dev = synth::synthesize_recording(developed);
    CHECK(hf_db(dev.g, fs) - hf_db(synth::synthesize(healthy), fs) ==
          Approx(dev.params.cavitation.hf_rise_db).margin(1.5));
    // The scaled level itself: 2.5 * 20 * log10(0.7) = -7.75 dB against nominal speed.
    auto nominal = p101(synth::Kind::healthy, 94, 3.0);
    CHECK(hf_db(synth::synthesize(healthy), fs) - hf_db(synth::synthesize(nominal), fs) ==
          Approx(50.0 * std::log10(0.7)).margin(1.0));
}

TEST_CASE("synth: the field conditions are refused outside their ranges", "[tools]") {
    auto spec = p101(synth::Kind::healthy, 95, 1.0);
    auto refused = [&](auto set) {
        auto s = spec;
        set(s);
        CHECK_THROWS_AS(synth::synthesize(s), std::invalid_argument);
    };
    refused([](synth::CaseSpec& s) { s.level_speed_exponent_hf = -1; });
    refused([](synth::CaseSpec& s) { s.level_speed_exponent_lf = 5; });
    refused([](synth::CaseSpec& s) { s.gain_db = 41; });
    refused([](synth::CaseSpec& s) { s.tilt_db_per_decade = -7; });
    refused([](synth::CaseSpec& s) { s.step_db = -3; });
    refused([](synth::CaseSpec& s) {
        s.step_db = 6;
        s.step_at_s = 2.0;  // beyond the 1 s record
    });
}

namespace {

/// Squared-envelope spectrum of the HF band (0.2..0.45 fs), power-averaged over
/// 1 s Hann frames with half overlap, at every whole Hz from 0 to `top_hz`:
/// the band-passed signal squared, averaged over blocks of 16 samples (a plain
/// decimation: the lines sought lie far below the new Nyquist), and a plain
/// DFT of each frame at those frequencies.
std::vector<double> squared_envelope_spectrum(const std::vector<float>& x, double fs_hz, int top_hz) {
    const auto y = band_pass(x, fs_hz, 0.2 * fs_hz, 0.45 * fs_hz);
    constexpr std::size_t kBlock = 16;
    const double rate_hz = fs_hz / kBlock;
    std::vector<double> e(y.size() / kBlock);
    for (std::size_t i = 0; i < e.size(); ++i) {
        double s = 0;
        for (std::size_t k = 0; k < kBlock; ++k) s += y[i * kBlock + k] * y[i * kBlock + k];
        e[i] = s / kBlock;
    }
    const auto frame = static_cast<std::size_t>(rate_hz);  // 1 s: whole-Hz bins
    std::vector<double> power(static_cast<std::size_t>(top_hz) + 1, 0.0);
    int frames = 0;
    for (std::size_t start = 0; start + frame <= e.size(); start += frame / 2, ++frames) {
        double mean = 0;
        for (std::size_t i = 0; i < frame; ++i) mean += e[start + i] / static_cast<double>(frame);
        for (int f = 0; f <= top_hz; ++f) {
            double re = 0, im = 0;
            for (std::size_t i = 0; i < frame; ++i) {
                const double w = 0.5 - 0.5 * std::cos(2 * kPi * static_cast<double>(i) / static_cast<double>(frame));
                const double ph = 2 * kPi * f * static_cast<double>(i) / rate_hz;
                re += w * (e[start + i] - mean) * std::cos(ph);
                im += w * (e[start + i] - mean) * std::sin(ph);
            }
            power[static_cast<std::size_t>(f)] += re * re + im * im;
        }
    }
    for (double& p : power) p /= frames;
    return power;
}

/// The strongest bin within +-1 Hz of f_hz over the median bin of 5..top Hz, in dB.
double line_over_floor_db(const std::vector<double>& power, double f_hz) {
    std::vector<double> floor(power.begin() + 5, power.end());
    std::nth_element(floor.begin(), floor.begin() + static_cast<std::ptrdiff_t>(floor.size() / 2), floor.end());
    const double median = floor[floor.size() / 2];
    const auto centre = static_cast<std::size_t>(std::lround(f_hz));
    double peak = 0;
    for (std::size_t f = centre - 1; f <= centre + 1; ++f) peak = std::max(peak, power[f]);
    return 10.0 * std::log10(peak / median);
}

}  // namespace

TEST_CASE("synth: inner-race impacts sit at a non-integer order, ring the HF band and are swept by the load zone", "[tools]") {
    for (std::uint64_t seed = 1; seed <= 300; ++seed) {
        const auto p = synth::draw_params(synth::Kind::inner_race, 0.5, seed).inner_race;
        INFO("seed " << seed << " order " << p.order);
        CHECK(p.order >= 4.6);
        CHECK(p.order <= 6.4);
        CHECK(std::abs(p.order - std::round(p.order)) >= 0.15);
        CHECK(p.slip_frac >= 0.01);
        CHECK(p.slip_frac <= 0.02);
        CHECK(p.load_depth >= 0.5);
        CHECK(p.load_depth <= 0.9);
        CHECK(p.load_depth_2x >= 0.2 * p.load_depth);
        CHECK(p.load_depth_2x <= 0.4 * p.load_depth);
    }
    CHECK(synth::label_of(synth::Kind::inner_race) == "normal");
    CHECK(synth::kind_from_name("inner_race") == synth::Kind::inner_race);
    // Not in the evaluation set's kinds (that set stays as it was).
    CHECK(std::find(synth::kAllKinds.begin(), synth::kAllKinds.end(), synth::Kind::inner_race) == synth::kAllKinds.end());

    const auto spec_h = p101(synth::Kind::healthy, 96, 6.0);
    const double fs = spec_h.machine.fs_hz;
    const auto healthy = synth::synthesize(spec_h);
    const auto inner = synth::synthesize_recording(p101(synth::Kind::inner_race, 96, 6.0));
    const auto outer = synth::synthesize_recording(p101(synth::Kind::bearing, 96, 6.0));

    // HF rise as set (6..15 dB documented; 10.5 dB at severity 0.5), from the filter responses.
    const double rise_db = db(hf_stats(inner.g, fs).rms / hf_stats(healthy, fs).rms);
    CHECK(inner.params.inner_race.hf_rise_db == Approx(10.5));
    CHECK(rise_db == Approx(inner.params.inner_race.hf_rise_db).margin(1.5));
    CHECK(hf_stats(inner.g, fs).kurtosis > 4.5);

    // Squared-envelope spectrum: a line at the shaft rate f_r = 24.75 Hz (the
    // load zone) and at BPFI = order * f_r, with BPFI + f_r beside it (the
    // tutorial's signature of an inner-race fault). The outer-race look-alike
    // of the same seed has its BPFO line but none at f_r: it is not modulated by
    // the shaft; nor has the healthy twin a line at BPFI.
    const double f_r = spec_h.machine.rpm / 60.0;
    const double bpfi = inner.params.inner_race.order * f_r;
    const auto s_inner = squared_envelope_spectrum(inner.g, fs, 300);
    const auto s_outer = squared_envelope_spectrum(outer.g, fs, 300);
    const auto s_healthy = squared_envelope_spectrum(healthy, fs, 300);
    INFO("BPFI " << bpfi << " Hz; inner: f_r " << line_over_floor_db(s_inner, f_r) << " dB, BPFI "
                 << line_over_floor_db(s_inner, bpfi) << " dB, BPFI+f_r " << line_over_floor_db(s_inner, bpfi + f_r)
                 << " dB; outer: f_r " << line_over_floor_db(s_outer, f_r) << " dB, BPFO "
                 << line_over_floor_db(s_outer, outer.params.bearing.order * f_r) << " dB; healthy: BPFI "
                 << line_over_floor_db(s_healthy, bpfi) << " dB");
    CHECK(line_over_floor_db(s_inner, f_r) > 10.0);
    CHECK(line_over_floor_db(s_inner, bpfi) > 10.0);
    CHECK(line_over_floor_db(s_inner, bpfi + f_r) > 6.0);
    CHECK(line_over_floor_db(s_outer, outer.params.bearing.order * f_r) > 10.0);
    CHECK(line_over_floor_db(s_outer, f_r) < 6.0);
    CHECK(line_over_floor_db(s_healthy, bpfi) < 6.0);
}

namespace {

const std::set<std::string> kHazards{"none", "step", "cavitating", "low_npsh", "short"};

struct FieldGroup {
    std::vector<const synth::PlannedRecording*> baselines, tests;
};

std::map<std::string, FieldGroup> groups_of(const std::vector<synth::PlannedRecording>& plan) {
    std::map<std::string, FieldGroup> groups;
    for (const auto& r : plan) (r.role == "baseline" ? groups[r.group].baselines : groups[r.group].tests).push_back(&r);
    return groups;
}

}  // namespace

TEST_CASE("synth: the field plan covers every hazard, every kind, and speeds a baseline does not cover", "[tools]") {
    const auto plan = synth::field_plan();
    const auto groups = groups_of(plan);
    const double drive_rpm = synth::drive_machine().rpm;

    // Deterministic, and every file and seed its own.
    Fnv1a first, again, other;
    for (const auto& r : plan) digest_plan_row(first, r);
    for (const auto& r : synth::field_plan()) digest_plan_row(again, r);
    for (const auto& r : synth::field_plan(7)) digest_plan_row(other, r);
    CHECK(first.h == again.h);
    CHECK(first.h != other.h);
    std::set<std::string> files;
    std::set<std::uint64_t> seeds;
    std::set<std::string> encodings;
    double bytes = 0;
    for (const auto& r : plan) {
        files.insert(r.file);
        seeds.insert(r.spec.seed);
        encodings.insert(synth::name_of(r.encoding));
        const double bytes_per_sample = r.encoding == synth::Encoding::pcm24     ? 3
                                        : r.encoding == synth::Encoding::float32 ? 4
                                                                                 : 2;  // flac16 at most pcm16's
        bytes += bytes_per_sample * r.spec.duration_s * r.spec.machine.fs_hz;
    }
    CHECK(files.size() == plan.size());
    CHECK(seeds.size() == plan.size());
    CHECK(encodings.size() == 4);
    CHECK(plan.size() >= 150);
    CHECK(bytes < 150e6);  // the brief's budget for the set

    // Every group has a baseline of one machine; its tests are of that machine.
    std::map<std::string, std::set<std::string>> hazard_groups;  // hazard -> groups showing it
    std::map<std::string, std::set<std::string>> hazard_machines;
    for (const auto& [name, g] : groups) {
        INFO("group " << name);
        REQUIRE_FALSE(g.baselines.empty());
        CHECK_FALSE(g.tests.empty());
        const std::string tag = g.baselines.front()->spec.machine.tag;
        for (const auto* r : g.baselines) CHECK(r->spec.machine.tag == tag);
        for (const auto* r : g.tests) CHECK(r->spec.machine.tag == tag);
        for (const auto* r : g.baselines) {
            CHECK(kHazards.count(r->hazard) == 1);
            hazard_groups[r->hazard].insert(name);
            hazard_machines[r->hazard].insert(tag);
            if (r->hazard == "short") {
                CHECK(g.baselines.size() == 1);
                CHECK(r->spec.duration_s < 3.0);
            } else {
                CHECK(r->spec.duration_s == 10.0);
            }
            if (r->hazard == "step") {
                CHECK(r->spec.step_db >= 8.0);
                CHECK(r->spec.step_db <= 20.0);
                CHECK(r->spec.step_at_s >= 0.4 * r->spec.duration_s);
                CHECK(r->spec.step_at_s <= 0.7 * r->spec.duration_s);
            } else {
                CHECK(r->spec.step_db == 0.0);
            }
            CHECK((r->hazard == "cavitating") ==
                  (r->spec.kind == synth::Kind::incipient || r->spec.kind == synth::Kind::developed));
            CHECK((r->hazard == "low_npsh") == (r->sidecar_npsha_m > 0.0 && r->sidecar_npsha_m < 1.0));
        }
        for (const auto* r : g.tests) CHECK(r->hazard == "none");
    }
    // Each hazard several times, on each of the three fixed-speed pumps; clean groups too.
    for (const std::string h : {"step", "cavitating", "low_npsh", "short"}) {
        INFO("hazard " << h);
        CHECK(hazard_groups[h].size() >= 4);
        CHECK(hazard_machines[h] == std::set<std::string>{"OW-P101", "OW-P102", "OW-P103"});
    }
    int clean_groups = 0;
    for (const auto& [name, g] : groups) {
        bool clean = g.baselines.size() >= 2;
        for (const auto* r : g.baselines) clean = clean && r->hazard == "none" && !r->sidecar_toml.empty();
        clean_groups += clean;
    }
    CHECK(clean_groups >= 4);

    // Expectations: the label, or indeterminate; every kind is tested; the speed
    // is withheld from some; short captures of every kind.
    std::set<synth::Kind> kinds, short_kinds;
    std::set<std::string> inner_race_machines;
    int indeterminate = 0, speed_withheld = 0;
    for (const auto& r : plan) {
        INFO(r.file);
        CHECK((r.expect == synth::label_of(r.spec.kind) || r.expect == "indeterminate"));
        if (r.role != "test") continue;
        kinds.insert(r.spec.kind);
        indeterminate += r.expect == "indeterminate";
        speed_withheld += !r.rpm_given;
        if (r.spec.duration_s >= 1.0 && r.spec.duration_s <= 2.0) short_kinds.insert(r.spec.kind);
        if (r.spec.kind == synth::Kind::inner_race) {
            CHECK(r.expect == "normal");
            bool normal_baseline = true;
            for (const auto* b : groups.at(r.group).baselines)
                normal_baseline = normal_baseline && b->hazard == "none" && b->spec.kind == synth::Kind::healthy;
            if (normal_baseline) inner_race_machines.insert(r.spec.machine.tag);
        }
    }
    CHECK(kinds == std::set<synth::Kind>(synth::kEveryKind.begin(), synth::kEveryKind.end()));
    CHECK(short_kinds == kinds);
    CHECK(inner_race_machines == std::set<std::string>{"OW-P101", "OW-P102", "OW-P103", "OW-P104"});
    CHECK(indeterminate >= 1);
    CHECK(speed_withheld >= 10);

    // The variable-speed pump: levels scaled with speed; baselines at 0.70,
    // 0.85 and 1.00 x; tests between (a speed look-alike 2..4 % off its set
    // speed), or at 0.50 / 1.25 x and indeterminate.
    for (const auto& r : plan) {
        if (r.spec.machine.tag != "OW-P104") continue;
        INFO(r.file);
        CHECK(r.spec.level_speed_exponent_hf == 2.5);
        CHECK(r.spec.level_speed_exponent_lf == 2.0);
    }
    const auto& vsd = groups.at("P104-vsd");
    std::multiset<double> baseline_fracs;
    for (const auto* r : vsd.baselines) baseline_fracs.insert(std::round(100 * r->spec.rpm_override / drive_rpm) / 100);
    CHECK(baseline_fracs == std::multiset<double>{0.70, 0.70, 0.85, 0.85, 1.00, 1.00});
    std::set<synth::Kind> vsd_kinds;
    for (const auto* r : vsd.tests) {
        INFO(r->file);
        const double frac = r->spec.rpm_override / drive_rpm;
        if (r->expect == "indeterminate") {
            CHECK((std::abs(frac - 0.50) < 1e-9 || std::abs(frac - 1.25) < 1e-9));
        } else {
            vsd_kinds.insert(r->spec.kind);
            CHECK(frac >= 0.75 * (r->spec.kind == synth::Kind::speed ? 0.96 : 1.0));
            CHECK(frac <= 0.95 * (r->spec.kind == synth::Kind::speed ? 1.04 : 1.0));
        }
    }
    CHECK(vsd_kinds.size() == synth::kEveryKind.size());
    // The drive held at one speed, then jumps of 15..25 % the tool must notice.
    const auto& held = groups.at("P104-fixed");
    const double held_rpm = held.baselines.front()->spec.rpm_override;
    int jumps = 0;
    for (const auto* r : held.tests) {
        INFO(r->file);
        CHECK_FALSE(r->rpm_given);
        const double jump = std::abs(r->spec.rpm_override / held_rpm - 1.0);
        if (r->expect == "indeterminate") {
            ++jumps;
            CHECK(jump >= 0.15 - 1e-3);
            CHECK(jump <= 0.25 + 1e-3);
        } else {
            CHECK(jump < 1e-9);
        }
    }
    CHECK(jumps == 4);

    // Baselines over four visits, the magnet re-mounted at each (one mount a visit).
    const auto& visits = groups.at("P101-visits");
    std::map<std::string, std::set<std::pair<double, double>>> mounts;  // date -> (gain, tilt)
    for (const auto* r : visits.baselines) {
        CHECK(std::abs(r->spec.gain_db) <= 2.5);
        CHECK(std::abs(r->spec.tilt_db_per_decade) <= 1.0);
        mounts[r->datetime.substr(0, 10)].insert({r->spec.gain_db, r->spec.tilt_db_per_decade});
    }
    CHECK(mounts.size() == 4);
    std::set<std::pair<double, double>> distinct;
    for (const auto& [date, m] : mounts) {
        CHECK(m.size() == 1);
        distinct.insert(*m.begin());
    }
    CHECK(distinct.size() == 4);
    for (const auto* r : visits.tests) {
        CHECK(std::abs(r->spec.gain_db) <= 3.0);
        CHECK(std::abs(r->spec.tilt_db_per_decade) <= 1.0);
        CHECK(r->spec.gain_db != 0.0);
    }
}

TEST_CASE("synth: each field sidecar states the NPSHa cavitas computes from it, low ones 0.1..0.8 m", "[tools]") {
    int sidecars = 0, low = 0;
    for (const auto& r : synth::field_plan()) {
        if (r.sidecar_toml.empty()) continue;
        INFO(r.file << "\n" << r.sidecar_toml);
        ++sidecars;
        // Read as `cavitas analyze` reads NAME.op.toml, evaluated as it is.
        const auto op = cavitas::app::parse_operating_point_toml(r.sidecar_toml, r.file, ".");
        const auto h = cavitas::models::evaluate_operating_point(op);
        REQUIRE(h.npsh.has_value());
        CHECK(h.npsh->npsha_m == Approx(r.sidecar_npsha_m).margin(1e-6));
        CHECK_FALSE(op.rpm.has_value());  // a sidecar must not give away the speed
        CHECK(h.margin.has_value());
        // No liquid flashing at the gauge (the static pressure stays above the vapour pressure).
        CHECK(*h.absolute_suction_pa > h.liquid->vapour_pressure_pa);
        if (r.hazard == "low_npsh") {
            ++low;
            CHECK(h.npsh->npsha_m >= 0.1 - 0.01);
            CHECK(h.npsh->npsha_m <= 0.8 + 0.01);
        } else {
            CHECK(h.npsh->npsha_m >= 7.0 - 0.01);
        }
    }
    CHECK(sidecars >= 20);
    CHECK(low >= 4);
}

TEST_CASE("synth: a field set's manifests carry group, rpm_given, expect and hazard, other sets' columns stay", "[tools]") {
    const auto dir = scratch_dir() / "field";
    // A baseline with a low-NPSH sidecar and a test whose speed is withheld,
    // shortened to keep the test quick.
    std::vector<synth::PlannedRecording> plan;
    for (const auto& r : synth::field_plan()) {
        if ((r.hazard == "low_npsh" && plan.empty()) || (!plan.empty() && plan.size() < 2 && !r.rpm_given)) {
            plan.push_back(r);
            plan.back().spec.duration_s = 0.5;
        }
    }
    REQUIRE(plan.size() == 2);
    synth::write_set(dir, plan, nullptr, std::cerr, {}, synth::SetColumns::field);
    auto lines = [](const std::filesystem::path& p) {
        std::ifstream in(p);
        std::vector<std::string> v;
        for (std::string line; std::getline(in, line);) v.push_back(line);
        return v;
    };
    const auto manifest = lines(dir / "manifest.csv");
    REQUIRE(manifest.size() == 3);
    CHECK(manifest[0] ==
          "file,machine,point,channel,datetime,rpm,vanes,full_scale,role,label,kind,fs_hz,duration_s,seed,"
          "group,rpm_given,expect,hazard");
    const std::string g0 = plan[0].group, g1 = plan[1].group;
    CHECK(manifest[1].ends_with("," + g0 + ",1,normal,low_npsh"));
    CHECK(manifest[2].ends_with("," + g1 + ",0," + plan[1].expect + ",none"));
    CHECK(std::filesystem::exists(dir / (std::filesystem::path(plan[0].file).stem().string() + ".op.toml")));
    const auto truth = lines(dir / "truth.csv");
    REQUIRE(truth.size() == 3);
    CHECK(truth[0].ends_with(",step_at_s,step_db,sidecar_npsha_m"));

    // The standard columns, as the demo and evaluation sets have always had them.
    const auto std_dir = scratch_dir() / "standard";
    synth::write_set(std_dir, {plan[1]}, nullptr, std::cerr);
    const auto standard = lines(std_dir / "manifest.csv");
    REQUIRE(standard.size() == 2);
    CHECK(standard[0] == "file,machine,point,channel,datetime,rpm,vanes,full_scale,role,label,kind,fs_hz,duration_s,seed");
    CHECK(lines(std_dir / "truth.csv")[0].ends_with(",speed_offset_pct,pulse_amplitude_g"));
    std::filesystem::remove_all(scratch_dir());
}

namespace {

// Three short axes of known values, as the demo's triaxial writers take them.
std::vector<std::vector<float>> three_axes(std::size_t n) {
    std::vector<std::vector<float>> v(3, std::vector<float>(n));
    for (std::size_t c = 0; c < 3; ++c)
        for (std::size_t i = 0; i < n; ++i)
            v[c][i] = static_cast<float>((0.5 + 0.25 * static_cast<double>(c)) *
                                         std::sin(0.013 * static_cast<double>(i * (c + 1))) - 0.001 * static_cast<double>(c));
    return v;
}

// Every value of `channel` of `path` through cavitas's own reader, as the file holds them (no calibration).
std::vector<float> read_channel(const std::string& path, int channel, double& fs_hz, std::string& unit,
                                std::string& name) {
    cavitas::app::ReadRequest req;
    req.channel = channel;
    auto src = cavitas::app::open_recording(path, req, cavitas::app::Calibration{});
    fs_hz = src->info().fs_hz;
    unit = src->info().stated_unit;
    name = src->info().channel_name;
    std::vector<float> all, buf(4096);
    while (const std::size_t n = src->read(buf)) all.insert(all.end(), buf.begin(), buf.begin() + static_cast<std::ptrdiff_t>(n));
    return all;
}

}  // namespace

TEST_CASE("synth: a UFF 58b file of three axes reads back bit for bit with its unit, rate and directions", "[tools]") {
    const auto path = (scratch_dir() / "tri.uff").string();
    const auto v = three_axes(5000);
    synth::write_uff58b(path, v, 12800.0, "V", "OW-P101", "OW-P101 NDE-T", "03-Aug-26 09:35:00");
    const auto summary = cavitas::app::describe_recording(path);
    REQUIRE(summary.channels.size() == 3);
    for (int c = 0; c < 3; ++c) {
        double fs = 0;
        std::string unit, name;
        const auto back = read_channel(path, c, fs, unit, name);
        CHECK(fs == Approx(12800.0).epsilon(1e-5));
        CHECK(unit == "V");
        CHECK(name == std::string("OW-P101:1:+") + "XYZ"[c]);
        CHECK(back == v[static_cast<std::size_t>(c)]);
    }
    std::filesystem::remove(path);
}

TEST_CASE("synth: a CSV waveform of three axes reads back to its printed digits, in its header's unit", "[tools]") {
    const auto path = (scratch_dir() / "tri.csv").string();
    const auto v = three_axes(3000);
    synth::write_csv_waveform(path, v, {"ax", "ay", "az"}, 12800.0, "m/s^2");
    for (int c = 0; c < 3; ++c) {
        double fs = 0;
        std::string unit, name;
        const auto back = read_channel(path, c, fs, unit, name);
        CHECK(fs == 12800.0);
        CHECK(unit == "m/s^2");
        CHECK(name == std::string("a") + "xyz"[c]);
        REQUIRE(back.size() == v[0].size());
        double worst = 0;
        for (std::size_t i = 0; i < back.size(); ++i)
            worst = std::max(worst, std::abs(static_cast<double>(back[i]) - v[static_cast<std::size_t>(c)][i]) /
                                        std::max(1e-6, std::abs(static_cast<double>(v[static_cast<std::size_t>(c)][i]))));
        CHECK(worst < 1e-4);  // 5 significant digits
    }
    std::filesystem::remove(path);
}

TEST_CASE("synth: a MAT-file of an N x 3 matrix and fs reads back bit for bit, the same bytes on every write", "[tools]") {
    const auto path = (scratch_dir() / "tri.mat").string();
    const auto path2 = (scratch_dir() / "tri2.mat").string();
    const auto v = three_axes(4000);
    synth::write_mat(path, v, 12800.0, "acc");
    synth::write_mat(path2, v, 12800.0, "acc");
    auto bytes = [](const std::string& p) {
        std::ifstream in(p, std::ios::binary);
        return std::string(std::istreambuf_iterator<char>(in), {});
    };
    CHECK(bytes(path) == bytes(path2));
    for (int c = 0; c < 3; ++c) {
        double fs = 0;
        std::string unit, name;
        const auto back = read_channel(path, c, fs, unit, name);
        CHECK(fs == 12800.0);
        CHECK(unit.empty());  // a MAT-file states none
        CHECK(back == v[static_cast<std::size_t>(c)]);
    }
    std::filesystem::remove(path);
    std::filesystem::remove(path2);
}

TEST_CASE("synth: the demo's triaxial point - three axes a recording, developed strongest on X", "[tools]") {
    const auto plan = synth::demo_plan();
    std::vector<const synth::PlannedRecording*> tri;
    for (const auto& r : plan)
        if (r.point == "NDE-T") tri.push_back(&r);
    REQUIRE(tri.size() == 4);
    std::set<synth::FileFormat> formats;
    for (const auto* r : tri) {
        CHECK(r->more_axes.size() == 2);
        formats.insert(r->format);
        if (r->spec.kind == synth::Kind::developed) {
            const double x = r->spec.params->cavitation.hf_rise_db;
            CHECK(x == Approx(24.0));
            CHECK(r->more_axes[0].params->cavitation.hf_rise_db == Approx(12.25).margin(0.05));
            CHECK(r->more_axes[1].params->cavitation.hf_rise_db == Approx(9.5).margin(0.05));
            CHECK(r->more_axes[0].params->cavitation.collapse_rate_per_s == r->spec.params->cavitation.collapse_rate_per_s);
        }
        CHECK(r->more_axes[0].gain_db == -3.0);
        CHECK(r->more_axes[1].gain_db == -6.0);
    }
    CHECK(formats == std::set<synth::FileFormat>{synth::FileFormat::uff58b, synth::FileFormat::mat, synth::FileFormat::csv});
}

TEST_CASE("synth: the demo's repair closes route.csv as an event row that cavitas reads as one", "[tools]") {
    const auto dir = scratch_dir() / "demo-event";
    auto plan = synth::demo_plan();
    plan.resize(1);  // OW-P101_baseline_1 (a baseline: route.csv then holds only the event row), shortened
    plan[0].spec.duration_s = 0.5;
    synth::write_set(dir, plan, nullptr, std::cerr, {}, synth::SetColumns::demo, synth::demo_events());
    std::ifstream in(dir / "route.csv");
    std::vector<std::string> lines;
    for (std::string line; std::getline(in, line);) lines.push_back(line);
    REQUIRE(lines.size() == 2);
    CHECK(lines[0].ends_with(",sample_rate_hz,event"));
    // The repair the sidecar of 2026-11-09 tells of (demo_plan's notes), for every point of OW-P101.
    CHECK(lines[1] == ",OW-P101,,,2026-11-04,,,,event,,,,,,,,,,\"strainer cleaned, sump level control reset\"");
    const auto m = cavitas::app::read_manifest((dir / "route.csv").string());
    CHECK(m.rows.empty());  // nothing to analyse, nothing failed
    REQUIRE(m.events.size() == 1);
    CHECK(m.events[0].machine == "OW-P101");
    CHECK(m.events[0].point.empty());
    CHECK(m.events[0].what == "strainer cleaned, sump level control reset");
    // Only the demo columns have an event column to put it in.
    CHECK_THROWS_AS(synth::write_set(dir, plan, nullptr, std::cerr, {}, synth::SetColumns::standard, synth::demo_events()),
                    std::invalid_argument);
    std::filesystem::remove_all(dir);
}
