#include "models/analyzer.hpp"

#include <algorithm>
#include <chrono>
#include <cmath>
#include <stdexcept>
#include <string>

#include "models/machine.hpp"
#include "signal/bandpass.hpp"
#include "signal/envelope.hpp"
#include "signal/decimate.hpp"
#include "signal/impulses.hpp"
#include "signal/lanes.hpp"
#include "signal/spectral_kurtosis.hpp"
#include "signal/spectrum.hpp"
#include "signal/window.hpp"
#include "signal/stats.hpp"

namespace cavitas::models {

std::size_t AnalysisSetup::segment_size() const {
    return static_cast<std::size_t>(std::lround(fs_hz * segment_s));
}

AnalysisSetup choose_setup(double fs_hz, double sensor_max_hz, double segment_s) {
    if (!(fs_hz > 0.0) || !std::isfinite(fs_hz))
        throw std::invalid_argument("sample rate " + std::to_string(fs_hz) + " Hz is not a positive number");
    if (!(segment_s >= 0.25 && segment_s <= 10.0))
        throw std::invalid_argument("segment length " + std::to_string(segment_s) + " s is outside 0.25 .. 10 s");
    AnalysisSetup s;
    s.fs_hz = fs_hz;
    s.segment_s = segment_s;
    s.sensor_max_hz = sensor_max_hz > 0.0 ? sensor_max_hz : 0.0;
    double top = kUsableFractionOfFs * fs_hz;
    if (s.sensor_max_hz > 0.0) top = std::min(top, s.sensor_max_hz);
    if (top < 1.5 * kHfFloorHz) {
        throw std::invalid_argument(
            "usable bandwidth tops out at " + std::to_string(static_cast<int>(top)) +
            " Hz (0.4 x sample rate" + std::string(s.sensor_max_hz > 0.0 ? " or the sensor limit" : "") +
            "); cavitation needs an HF band above 1 kHz: record at 6.4 kHz or more with a mount good to 1.5 kHz or more");
    }
    s.hf.high_hz = top;
    s.hf.low_hz = std::max(kHfFloorHz, std::min(kHfStartCapHz, top / 4.0));
    s.lf.low_hz = 10.0;
    // Flow turbulence and recirculation live below about 1 kHz (common practice, no source).
    s.lf.high_hz = std::min(kLfTopHz, s.hf.low_hz);
    return s;
}

namespace {
double shortest_segment_s(double rpm) {
    return std::max(kMinSegmentS, rpm > 0.0 ? kMinRevolutionsPerSegment * 60.0 / rpm : 0.0);
}
}  // namespace

double segment_for_record(double duration_s, double segment_s, double rpm) {
    if (duration_s >= static_cast<double>(kShortCaptureSegments) * segment_s) return segment_s;
    const double wanted = duration_s / static_cast<double>(kShortCaptureSegments);
    return std::min(segment_s, std::max(wanted, shortest_segment_s(rpm)));
}

std::size_t excerpt_samples(double fs_hz, double rpm, std::size_t segment_samples) {
    const double s = std::max(kExcerptS, rpm > 0.0 ? kExcerptRevolutions * 60.0 / rpm : 0.0);
    const auto want = static_cast<std::size_t>(std::lround(s * fs_hz));
    return std::min({want, kExcerptMaxSamples, segment_samples});
}

double min_record_s(std::size_t segments, double rpm) {
    return static_cast<double>(segments) * shortest_segment_s(rpm);
}

std::optional<double> mount_limit_hz(const std::string& mount) {
    if (mount == "handheld") return 2000.0;
    if (mount == "magnet") return 5000.0;
    if (mount == "adhesive") return 6000.0;
    if (mount == "stud") return 7000.0;
    return std::nullopt;
}

double median(std::vector<double> v) {
    if (v.empty()) return 0.0;
    auto mid = v.begin() + static_cast<std::ptrdiff_t>(v.size() / 2);
    std::nth_element(v.begin(), mid, v.end());
    double m = *mid;
    if (v.size() % 2 == 0) m = 0.5 * (m + *std::max_element(v.begin(), mid));
    return m;
}

double quantile(std::vector<double> v, double q) {
    if (v.empty()) return 0.0;
    std::sort(v.begin(), v.end());
    const double pos = std::clamp(q, 0.0, 1.0) * static_cast<double>(v.size() - 1);
    const auto lo = static_cast<std::size_t>(std::floor(pos));
    const std::size_t hi = std::min(lo + 1, v.size() - 1);
    return v[lo] + (v[hi] - v[lo]) * (pos - static_cast<double>(lo));
}

namespace {

std::size_t pow2_floor(std::size_t n) {
    std::size_t p = 1;
    while (p * 2 <= n) p *= 2;
    return p;
}

std::size_t pow2_round(double x) {
    const double l = std::round(std::log2(std::max(x, 1.0)));
    return static_cast<std::size_t>(std::exp2(l));
}

// Blocks are fed to the decimator in pieces of at most this many samples.
constexpr std::size_t kPushChunk = 32768;

// Segments the kurtogram is run on at most (see Impl::kurtogram_stride); our choice.
constexpr std::size_t kKurtogramSegments = 4;

int kurtogram_levels_for(std::size_t n) {
    const int max_levels = static_cast<int>(std::floor(std::log2(static_cast<double>(n)))) - 7;
    return std::clamp(max_levels, 1, 7);
}

}  // namespace

namespace {

enum class Stage { setup, quality, fine_spectrum, moments, envelope, impulses, spectral_kurtosis, kurtogram, finish, count };
constexpr const char* kStageNames[] = {"set-up",     "quality gate",      "fine spectrum", "moments", "envelope",
                                       "impulses",   "spectral kurtosis", "kurtogram",     "finish"};
static_assert(std::size(kStageNames) == static_cast<std::size_t>(Stage::count));

// Accumulates wall time per stage: `lap(s)` charges the time since the last
// lap to stage s.
class StageClock {
public:
    using clock = std::chrono::steady_clock;
    StageClock() : last_(clock::now()) {}
    void restart() { last_ = clock::now(); }
    void lap(Stage s) {
        const auto now = clock::now();
        ns_[static_cast<std::size_t>(s)] += std::chrono::duration_cast<std::chrono::nanoseconds>(now - last_).count();
        last_ = now;
    }
    double seconds(std::size_t i) const { return 1e-9 * static_cast<double>(ns_[i]); }

private:
    clock::time_point last_;
    std::array<long long, static_cast<std::size_t>(Stage::count)> ns_{};
};

}  // namespace

struct RecordingAnalyzer::Impl {
    StageClock clock;  // first: started before the members below are built
    AnalysisSetup setup;
    MachineContext machine;
    std::size_t n;
    std::vector<float> segment;
    std::size_t fill = 0;
    dsp::QualityMeter quality;
    // The segment's PSD comes from the envelope analyzer's transform of the same
    // segment (one Hann-windowed frame of the whole segment, 1/segment_s resolution).
    std::vector<double> seg_psd_out;
    std::vector<double> psd_sum;  // the segment PSDs summed, for the recording's mean PSD
    // The fine PSD (speed search, mains lines, ski slope) only needs the low
    // part of the spectrum: it runs on the signal decimated to about 8 kHz.
    dsp::Decimator fine_decimator;
    std::vector<float> fine_block;
    dsp::WelchPsd fine_psd;
    dsp::EnvelopeAnalyzer envelope;
    dsp::ImpulseCounter impulses;
    dsp::SpectralKurtosis sk;
    std::vector<double> sk_out;
    dsp::FastKurtogram kurtogram;
    std::vector<double> ses_power_sum;
    double mean_sq_env_sum = 0.0;
    SegmentSeries series;
    std::size_t samples = 0;
    double full_scale;
    // Spectrum profile: band of each PSD bin (-1 = none) and the band centres.
    std::vector<int> bin_band;
    std::vector<double> band_center_hz;
    std::vector<std::size_t> band_first;  // first bin of each band; its bins are adjacent
    std::vector<int> band_count;
    std::vector<float> profile_db;
    // The kurtogram runs on at most kKurtogramSegments segments spread evenly over
    // the record (every kurtogram_stride-th): its mean map is what is used, and a
    // handful of 1 s segments pins it down while the filter bank is the costliest
    // block by far (about half of all the work when run on every segment).
    std::size_t kurtogram_stride = 1;
    std::size_t segment_index = 0;
    // The waveform excerpt (WaveformExcerpt): the best segment's stretch so far,
    // with up to excerpt_pad samples on each side for the band-pass to settle
    // in; band-passed once, in finish(). Buffers sized here: nothing grows.
    std::size_t excerpt_len = 0;
    std::size_t excerpt_pad = 0;
    std::optional<dsp::ZeroPhaseBandPass> excerpt_filter;
    std::vector<float> excerpt_buf;  // raw samples, pads included
    std::size_t excerpt_pad_before = 0;
    double excerpt_kurtosis = 0.0;
    double excerpt_start_s = 0.0;
    std::size_t excerpt_segment = 0;
    bool excerpt_taken = false;

    Impl(const AnalysisSetup& s, const MachineContext& m, double fs_value, std::size_t expected, Fidelity fid)
        : setup(s),
          machine(m),
          n(s.segment_size()),
          segment(n),
          quality(dsp::QualityConfig{fs_value, 0.999, 3,
                                     std::max<std::size_t>(16, static_cast<std::size_t>(std::lround(kDropoutRunS * s.fs_hz)))}),
          seg_psd_out(n / 2 + 1),
          psd_sum(n / 2 + 1, 0.0),
          fine_decimator(dsp::DecimatorConfig{fine_factor(s.fs_hz, fid)}),
          fine_block(kPushChunk / fine_factor(s.fs_hz, fid) + 2),
          fine_psd(dsp::WelchConfig{fine_size(s.fs_hz / static_cast<double>(fine_factor(s.fs_hz, fid)),
                                              expected / fine_factor(s.fs_hz, fid)),
                                    fid == Fidelity::fast},
                   s.fs_hz / static_cast<double>(fine_factor(s.fs_hz, fid))),
          envelope(dsp::EnvelopeConfig{s.hf.low_hz, s.hf.high_hz, fid == Fidelity::fast, fid == Fidelity::fast}, s.fs_hz, n),
          impulses(dsp::ImpulseConfig{}, envelope.envelope_rate_hz(), envelope.envelope_samples()),
          // 50 % overlap: frames half as many as at the default 75 %, nearly independent.
          sk(dsp::SpectralKurtosisConfig{std::clamp<std::size_t>(pow2_round(s.fs_hz / 128.0), 64, 4096),
                                         std::clamp<std::size_t>(pow2_round(s.fs_hz / 128.0), 64, 4096) /
                                             (fid == Fidelity::fast ? 2 : 4),
                                         fid == Fidelity::fast},
             s.fs_hz),
          sk_out(sk.bins()),
          kurtogram(dsp::KurtogramConfig{kurtogram_levels_for(n), s.hf.low_hz}, s.fs_hz, n),
          ses_power_sum(envelope.envelope_bins(), 0.0),
          full_scale(fs_value) {
        for (auto& v : series.values) v.reserve(1024);
        make_profile_bands();
        init_excerpt();
        const std::size_t expected_segments = expected / n;
        if (fid == Fidelity::fast && expected_segments > kKurtogramSegments)
            kurtogram_stride = (expected_segments + kKurtogramSegments - 1) / kKurtogramSegments;
        clock.lap(Stage::setup);
    }

    // About 12 bands per octave from 10 Hz (or the second PSD bin) to the
    // Nyquist frequency, log-spaced; a band that holds no PSD bin is dropped, so
    // the low end, where bins are wide, has one band per bin.
    void make_profile_bands() {
        const double bin = setup.fs_hz / static_cast<double>(n);
        const std::size_t bins = n / 2 + 1;
        const double lo = std::max(10.0, 1.5 * bin), hi = 0.5 * setup.fs_hz;
        const int per_octave = 12;
        const int edges = static_cast<int>(std::ceil(std::log2(hi / lo) * per_octave)) + 1;
        bin_band.assign(bins, -1);
        // Each bin's log band, in one pass over bins and edges together; bands that
        // hold no bin get no number.
        auto edge_hz = [&](int e) { return lo * std::pow(2.0, static_cast<double>(e) / per_octave); };
        int e = 0;
        double f1 = edge_hz(1);
        int current = -1;  // band number of edge interval e, once it has a bin
        for (std::size_t k = 1; k < bins; ++k) {
            const double f = static_cast<double>(k) * bin;
            if (f < lo) continue;
            if (f > hi) break;
            while (e + 2 < edges && f >= f1) {
                ++e;
                f1 = edge_hz(e + 1);
                current = -1;
            }
            if (current < 0) {
                current = static_cast<int>(band_center_hz.size());
                band_center_hz.push_back(std::sqrt(edge_hz(e) * std::min(hi, f1)));
            }
            bin_band[k] = current;
        }
        band_first.assign(band_center_hz.size(), 0);
        band_count.assign(band_center_hz.size(), 0);
        for (std::size_t k = 0; k < bin_band.size(); ++k) {
            const int b = bin_band[k];
            if (b < 0) continue;
            if (band_count[static_cast<std::size_t>(b)]++ == 0) band_first[static_cast<std::size_t>(b)] = k;
        }
    }

    // Decimate to about 8 kHz: harmonics to 8x shaft speed and the blade pass of
    // up to 12 vanes at 6000 rpm (1.2 kHz) stay well inside the 3.2 kHz passband.
    // The reference path keeps the full rate.
    static std::size_t fine_factor(double fs_hz, Fidelity fid) {
        if (fid == Fidelity::reference) return 1;
        return std::max<std::size_t>(1, static_cast<std::size_t>(std::floor(fs_hz / 8000.0)));
    }

    static std::size_t fine_size(double fs_hz, std::size_t expected) {
        // ~0.4 Hz resolution (2.5 s frames) for the speed search, but at least
        // two frames in the record when its length is known.
        std::size_t want = pow2_floor(static_cast<std::size_t>(fs_hz * 4.0));
        if (expected > 0) want = std::min(want, pow2_floor(std::max<std::size_t>(expected / 2, 64)));
        return std::max<std::size_t>(want, 64);
    }

    void init_excerpt() {
        // The speed given, else the speed searched near (the baseline's): only the
        // excerpt's length depends on it.
        const double rpm = machine.rpm && *machine.rpm > 0.0 ? *machine.rpm : machine.rpm_hint;
        excerpt_len = excerpt_samples(setup.fs_hz, rpm, n);
        try {
            excerpt_filter.emplace(dsp::BandPassConfig{setup.hf.low_hz, setup.hf.high_hz}, setup.fs_hz);
            excerpt_pad = excerpt_filter->settle_samples();
        } catch (const std::invalid_argument&) {
            excerpt_filter.reset();  // a band the band-pass cannot make: no excerpt
        }
        excerpt_buf.reserve(excerpt_len + 2 * excerpt_pad);
    }

    // Keep this segment's stretch around its largest HF-band envelope value when
    // its HF-band kurtosis is the highest so far (the first on a tie).
    void consider_excerpt(double hf_kurtosis) {
        if (excerpt_taken && !(hf_kurtosis > excerpt_kurtosis)) return;
        const auto env = envelope.squared_envelope();
        if (env.empty() || excerpt_len == 0) return;
        const auto peak = static_cast<std::size_t>(std::max_element(env.begin(), env.end()) - env.begin());
        const double peak_s = static_cast<double>(peak) / envelope.envelope_rate_hz();
        const auto centre = std::min(n - 1, static_cast<std::size_t>(std::lround(peak_s * setup.fs_hz)));
        const std::size_t start = std::min(centre - std::min(centre, excerpt_len / 2), n - excerpt_len);
        const std::size_t before = std::min(excerpt_pad, start);
        const std::size_t after = std::min(excerpt_pad, n - start - excerpt_len);
        excerpt_buf.assign(segment.begin() + static_cast<std::ptrdiff_t>(start - before),
                           segment.begin() + static_cast<std::ptrdiff_t>(start + excerpt_len + after));
        excerpt_pad_before = before;
        excerpt_kurtosis = hf_kurtosis;
        excerpt_segment = segment_index;
        excerpt_start_s = (static_cast<double>(segment_index) * static_cast<double>(n) + static_cast<double>(start)) / setup.fs_hz;
        excerpt_taken = true;
    }

    WaveformExcerpt finish_excerpt() {
        WaveformExcerpt e;
        if (!excerpt_taken || !excerpt_filter) return e;
        e.start_s = excerpt_start_s;
        e.fs_hz = setup.fs_hz;
        e.segment = excerpt_segment;
        e.segment_kurtosis = excerpt_kurtosis;
        e.band = setup.hf;
        const auto first = excerpt_buf.begin() + static_cast<std::ptrdiff_t>(excerpt_pad_before);
        e.raw.assign(first, first + static_cast<std::ptrdiff_t>(excerpt_len));
        std::vector<float> filtered(excerpt_buf.size());
        excerpt_filter->process(excerpt_buf, filtered);
        const auto f0 = filtered.begin() + static_cast<std::ptrdiff_t>(excerpt_pad_before);
        e.hf.assign(f0, f0 + static_cast<std::ptrdiff_t>(excerpt_len));
        return e;
    }

    void analyse_segment() {
        using SI = SegmentIndicator;
        const std::span<const float> x(segment.data(), n);
        clock.restart();
        const dsp::Moments raw = dsp::moments(x);
        series[SI::overall_rms].push_back(raw.rms);
        series[SI::overall_peak].push_back(raw.peak);
        series[SI::overall_crest].push_back(raw.crest);
        series[SI::overall_kurtosis].push_back(raw.kurtosis);
        clock.lap(Stage::moments);

        envelope.process(x);
        envelope.segment_psd(seg_psd_out);
        for (std::size_t k = 0; k < psd_sum.size(); ++k) psd_sum[k] += seg_psd_out[k];
        const double bin = setup.fs_hz / static_cast<double>(n);
        series[SI::hf_band_level].push_back(
            dsp::power_db(dsp::band_power(seg_psd_out, bin, setup.hf.low_hz, setup.hf.high_hz)));
        series[SI::lf_band_level].push_back(
            dsp::power_db(dsp::band_power(seg_psd_out, bin, setup.lf.low_hz, setup.lf.high_hz)));
        // Each profile band is a run of adjacent bins (band_first .. + band_count).
        for (std::size_t b = 0; b < band_first.size(); ++b) {
            const double sum = dsp::lanes::sum_of(seg_psd_out.data() + band_first[b], static_cast<std::size_t>(band_count[b]));
            profile_db.push_back(static_cast<float>(dsp::power_db(sum / band_count[b])));
        }

        series[SI::hf_kurtosis].push_back(envelope.band_kurtosis());
        consider_excerpt(envelope.band_kurtosis());
        series[SI::hf_crest].push_back(envelope.band_crest());
        envelope.add_envelope_power(ses_power_sum);
        mean_sq_env_sum += envelope.mean_squared_envelope();
        clock.lap(Stage::envelope);
        const std::size_t events = impulses.count(envelope.squared_envelope());
        series[SI::impulse_rate].push_back(static_cast<double>(events) / setup.segment_s);
        clock.lap(Stage::impulses);

        sk.compute(x, sk_out);
        double sk_sum = 0.0;
        std::size_t sk_count = 0;
        for (std::size_t k = 0; k < sk_out.size(); ++k) {
            const double f = static_cast<double>(k) * sk.bin_hz();
            if (f >= setup.hf.low_hz && f <= setup.hf.high_hz) {
                sk_sum += sk_out[k];
                ++sk_count;
            }
        }
        series[SI::hf_spectral_kurtosis].push_back(sk_count ? sk_sum / static_cast<double>(sk_count) : 0.0);
        clock.lap(Stage::spectral_kurtosis);

        if (segment_index % kurtogram_stride == 0) kurtogram.process(x);
        ++segment_index;
        clock.lap(Stage::kurtogram);
    }
};

RecordingAnalyzer::RecordingAnalyzer(const AnalysisSetup& setup, const MachineContext& machine, double full_scale,
                                     std::size_t expected_samples, Fidelity fidelity)
    : impl_(std::make_unique<Impl>(setup, machine, full_scale, expected_samples, fidelity)) {
    if (setup.segment_size() < 256)
        throw std::invalid_argument("analysis segment of " + std::to_string(setup.segment_size()) +
                                    " samples is too short (need 256 or more)");
}

RecordingAnalyzer::~RecordingAnalyzer() = default;

void RecordingAnalyzer::push(std::span<float> block) {
    Impl& m = *impl_;
    m.clock.restart();
    m.quality.process(block);
    m.clock.lap(Stage::quality);
    for (std::size_t at = 0; at < block.size(); at += kPushChunk) {
        const std::size_t len = std::min(kPushChunk, block.size() - at);
        const std::size_t got = m.fine_decimator.process(std::span<const float>(block.data() + at, len), m.fine_block);
        m.fine_psd.push(std::span<const float>(m.fine_block.data(), got));
    }
    m.clock.lap(Stage::fine_spectrum);
    m.samples += block.size();
    std::size_t i = 0;
    while (i < block.size()) {
        const std::size_t take = std::min(m.n - m.fill, block.size() - i);
        std::copy_n(block.begin() + static_cast<std::ptrdiff_t>(i), take,
                    m.segment.begin() + static_cast<std::ptrdiff_t>(m.fill));
        m.fill += take;
        i += take;
        if (m.fill == m.n) {
            m.analyse_segment();
            m.fill = 0;
        }
    }
}

std::size_t RecordingAnalyzer::segments() const { return impl_->series.segments(); }

std::vector<StageTime> RecordingAnalyzer::stage_times() const {
    std::vector<StageTime> t;
    for (std::size_t i = 0; i < static_cast<std::size_t>(Stage::count); ++i) t.push_back({kStageNames[i], impl_->clock.seconds(i)});
    return t;
}

namespace {

// Local-median prominence (dB, amplitude spectrum) of bin k.
double amplitude_prominence_db(std::span<const double> spec, long k, long half, std::vector<double>& tmp) {
    const long last = static_cast<long>(spec.size()) - 1;
    tmp.clear();
    for (long j = std::max(1L, k - half); j <= std::min(last, k + half); ++j)
        if (std::abs(j - k) > 2) tmp.push_back(spec[static_cast<std::size_t>(j)]);
    if (tmp.empty()) return 0.0;
    auto mid = tmp.begin() + static_cast<std::ptrdiff_t>(tmp.size() / 2);
    std::nth_element(tmp.begin(), mid, tmp.end());
    const double a = spec[static_cast<std::size_t>(k)];
    if (!(*mid > 0.0) || !(a > 0.0)) return 0.0;
    return 20.0 * std::log10(a / *mid);
}

}  // namespace

double envelope_line_floor_hz(double bin_hz, double hz) { return std::max(10.0 * bin_hz, 0.1 * hz); }

dsp::LineMeasure envelope_line(std::span<const double> ses, double bin_hz, double hz, bool speed_estimated) {
    const double rel = speed_estimated ? 0.01 : 0.005;
    return dsp::measure_line(ses, bin_hz, hz, std::max(bin_hz, rel * hz), envelope_line_floor_hz(bin_hz, hz));
}

RecordingAnalysis RecordingAnalyzer::finish() {
    Impl& m = *impl_;
    m.clock.restart();
    RecordingAnalysis r;
    r.setup = m.setup;
    r.quality = m.quality.counts();
    r.full_scale = m.full_scale;
    r.samples = m.samples;
    r.duration_s = static_cast<double>(m.samples) / m.setup.fs_hz;
    r.vanes = m.machine.vanes;
    const std::size_t segs = m.series.segments();
    if (segs == 0)
        throw std::runtime_error("record of " + std::to_string(r.duration_s).substr(0, 5) + " s is shorter than one " +
                                 std::to_string(m.setup.segment_s).substr(0, 4) + " s analysis segment");
    r.series = m.series;

    // Speed: given, or searched in the fine PSD near the hint.
    const std::vector<double> fine = m.fine_psd.psd();
    if (m.machine.rpm && *m.machine.rpm > 0.0) {
        r.rpm = *m.machine.rpm;
        r.speed_confirmed = true;
    } else {
        double lo = 300.0, hi = 6000.0;
        if (m.machine.rpm_hint > 0.0) {
            lo = m.machine.rpm_hint / kSpeedSearchMargin;
            hi = std::max(m.machine.rpm_hint, m.machine.rpm_hint_high) * kSpeedSearchMargin;
        }
        r.speed_search_low_rpm = lo;
        r.speed_search_high_rpm = hi;
        r.speed_how = "no line family stood out in the spectrum";
        if (m.fine_psd.frames() > 0) {
            if (auto est = estimate_speed(fine, m.fine_psd.bin_hz(), lo, hi, m.machine.vanes)) {
                r.rpm = est->rpm;
                r.rpm_estimated = true;
                r.rpm_resolution = est->resolution_rpm;
                r.speed_score_db = est->score;
                r.speed_confirmed = est->confirmed;
                r.speed_how = est->how;
            }
        }
    }

    // Averaged squared-envelope spectrum (power average of the segments' SES).
    std::vector<double> ses(m.ses_power_sum.size());
    for (std::size_t k = 0; k < ses.size(); ++k) ses[k] = std::sqrt(m.ses_power_sum[k] / static_cast<double>(segs));
    const double mean_sq = m.mean_sq_env_sum / static_cast<double>(segs);
    const double ses_bin = m.envelope.bin_hz();
    r.spectrum.center_hz = m.band_center_hz;
    {
        r.mean_psd.resize(m.psd_sum.size());
        for (std::size_t k = 0; k < r.mean_psd.size(); ++k) r.mean_psd[k] = m.psd_sum[k] / static_cast<double>(segs);
        r.psd_bin_hz = m.setup.fs_hz / static_cast<double>(m.n);
        r.psd_enbw_hz = dsp::enbw_bins(dsp::hann_periodic(m.n)) * r.psd_bin_hz;
    }
    r.spectrum.segment_db = m.profile_db;
    {
        // For reports: up to past the third blade-pass harmonic and 12x (the bearing-like
        // search), or 1 kHz when the speed is unknown.
        double top = 1000.0;
        if (r.rpm > 0.0) {
            top = 12.5 * shaft_hz(r.rpm);
            if (m.machine.vanes > 0) top = std::max(top, 3.5 * blade_pass_hz(r.rpm, m.machine.vanes));
        }
        const std::size_t keep = std::min(ses.size(), static_cast<std::size_t>(std::ceil(top / ses_bin)) + 1);
        r.envelope_spectrum.assign(ses.begin(), ses.begin() + static_cast<std::ptrdiff_t>(keep));
        r.envelope_bin_hz = ses_bin;
        r.mean_squared_envelope = mean_sq;
    }
    for (std::size_t row = 0; row < m.kurtogram.rows(); ++row) {
        KurtogramRow kr;
        kr.level = m.kurtogram.row_level(row);
        kr.bandwidth_hz = m.kurtogram.row_bandwidth_hz(row);
        for (std::size_t b = 0; b < m.kurtogram.row_bands(row); ++b) kr.mean.push_back(m.kurtogram.mean(row, b));
        r.kurtogram_map.push_back(std::move(kr));
    }

    using RI = RecordingIndicator;
    auto set = [&](RI i, double v) { r.recording[static_cast<std::size_t>(i)] = v; };
    if (r.rpm > 0.0) {
        const double fr = shaft_hz(r.rpm);
        auto line = [&](double f) { return envelope_line(ses, ses_bin, f, r.rpm_estimated); };
        const auto l1 = line(fr);
        set(RI::envelope_1x_prominence, l1.prominence_db);
        set(RI::modulation_1x, mean_sq > 0.0 ? l1.amplitude / mean_sq : 0.0);
        if (m.machine.vanes > 0) {
            const double bpf = blade_pass_hz(r.rpm, m.machine.vanes);
            const auto lb = line(bpf);
            const auto l2 = line(2.0 * bpf);
            set(RI::envelope_bpf_prominence, lb.prominence_db);
            set(RI::envelope_2bpf_prominence, l2.prominence_db);
            set(RI::modulation_bpf, mean_sq > 0.0 ? lb.amplitude / mean_sq : 0.0);
        }
        // Strongest SES peaks between 0.3x and 12x (bearing-like search).
        const long k_lo = std::max(3L, static_cast<long>(std::floor(0.3 * fr / ses_bin)));
        const long k_hi = std::min(static_cast<long>(ses.size()) - 3, static_cast<long>(std::ceil(12.0 * fr / ses_bin)));
        std::vector<double> tmp;
        for (long k = k_lo; k <= k_hi; ++k) {
            const double a = ses[static_cast<std::size_t>(k)];
            bool is_max = true;
            for (long j = k - 2; j <= k + 2 && is_max; ++j)
                if (j != k && ses[static_cast<std::size_t>(j)] > a) is_max = false;
            if (!is_max) continue;
            const long half = std::max(10L, static_cast<long>(std::lround(0.05 * static_cast<double>(k))));
            const double p = amplitude_prominence_db(ses, k, half, tmp);
            if (p < 6.0) continue;
            // The line's frequency between bins: a parabola through the log
            // amplitudes of the peak bin and its neighbours (common practice, no
            // source); short captures have coarse bins, and telling a bearing
            // order from an integer one needs the line's place within the bin.
            const auto at = [&](long j) { return std::log(std::max(ses[static_cast<std::size_t>(j)], 1e-300)); };
            const double l = at(k - 1), c = at(k), rr = at(k + 1);
            const double den = l - 2.0 * c + rr;
            const double delta = den < 0.0 ? std::clamp(0.5 * (l - rr) / den, -0.5, 0.5) : 0.0;
            const double hz = (static_cast<double>(k) + delta) * ses_bin;
            r.envelope_peaks.push_back({hz, hz / fr, p});
        }
        std::sort(r.envelope_peaks.begin(), r.envelope_peaks.end(),
                  [](const EnvelopePeak& a, const EnvelopePeak& b) { return a.prominence_db > b.prominence_db; });
        if (r.envelope_peaks.size() > 16) r.envelope_peaks.resize(16);
    }

    // Mains hum: lines at 50/60 Hz and harmonics standing far over the floor,
    // not at a shaft harmonic.
    if (m.fine_psd.frames() > 0) {
        const double bin = m.fine_psd.bin_hz();
        const double fr = r.rpm > 0.0 ? shaft_hz(r.rpm) : 0.0;
        std::vector<double> tmp;
        for (double mains : {50.0, 60.0}) {
            int lines = 0;
            bool fundamental = false;
            for (int h = 1; h <= 4; ++h) {
                const double f = mains * h;
                if (fr > 0.0) {
                    const double order = f / fr;
                    if (std::abs(order - std::round(order)) * fr < std::max(2.0 * bin, 0.01 * f)) continue;
                }
                const long k = static_cast<long>(std::lround(f / bin));
                if (k + 20 >= static_cast<long>(fine.size())) break;
                long best = k;
                for (long j = k - 1; j <= k + 1; ++j)
                    if (fine[static_cast<std::size_t>(j)] > fine[static_cast<std::size_t>(best)]) best = j;
                // PSD is a power spectrum: the amplitude-based helper gives 2x the dB, so halve it.
                const double p = 0.5 * amplitude_prominence_db(fine, best, std::max(12L, k / 10), tmp);
                if (p >= 15.0) {
                    ++lines;
                    if (h == 1) fundamental = true;
                }
            }
            if (fundamental && lines >= 2 && lines > r.mains_lines) {
                r.mains_hz = mains;
                r.mains_lines = lines;
            }
        }
    }

    // Most impulsive band among those centred inside the usable HF band (the
    // kurtogram's own search runs to Nyquist, above the anti-alias margin).
    {
        dsp::KurtogramBand best;
        const auto& k = m.kurtogram;
        for (std::size_t row = 0; row < k.rows(); ++row)
            for (std::size_t band = 0; band < k.row_bands(row); ++band) {
                const double fc = k.center_hz(row, band);
                if (fc < m.setup.hf.low_hz || fc > m.setup.hf.high_hz) continue;
                if (k.mean(row, band) > best.kurtosis || best.bandwidth_hz == 0.0) {
                    best.kurtosis = k.mean(row, band);
                    best.level = k.row_level(row);
                    best.center_hz = fc;
                    best.bandwidth_hz = k.row_bandwidth_hz(row);
                }
            }
        r.kurtogram_band = best;
    }

    // Ski slope: a settling or faulty sensor or cable shows a steep rise at the
    // very lowest frequencies (eng-tips thread 95214 on integrating accelerometer
    // signals: overload and mounting problems also give a "ski slope"). Measured
    // as the mean PSD in 0.5-4 Hz (from the second bin up) over the median PSD in 10-100 Hz (the median
    // ignores shaft lines there). Needs bins finer than 1 Hz.
    if (m.fine_psd.frames() > 0 && m.fine_psd.bin_hz() <= 1.0) {
        const double bin = m.fine_psd.bin_hz();
        double low = 0.0;
        std::size_t nl = 0;
        std::vector<double> ref;
        for (std::size_t k = 1; k < fine.size(); ++k) {
            const double f = static_cast<double>(k) * bin;
            if (f >= std::max(0.5, 2.0 * bin) && f <= 4.0) {
                low += fine[k];
                ++nl;
            } else if (f >= 10.0 && f <= 100.0) {
                ref.push_back(fine[k]);
            } else if (f > 100.0) {
                break;
            }
        }
        const double ref_med = median(ref);
        if (nl > 0 && ref_med > 0.0 && low > 0.0)
            set(RI::ski_slope, 10.0 * std::log10(low / static_cast<double>(nl) / ref_med));
    }
    set(RI::kurtogram_max, r.kurtogram_band.kurtosis);
    r.excerpt = m.finish_excerpt();
    m.clock.lap(Stage::finish);
    return r;
}

std::vector<double> SpectrumProfile::mean_db() const {
    const std::size_t nb = bands(), ns = segments();
    std::vector<double> out(nb, 0.0);
    if (ns == 0) return out;
    for (std::size_t b = 0; b < nb; ++b) {
        double sum = 0.0;
        for (std::size_t s = 0; s < ns; ++s) sum += std::pow(10.0, 0.1 * segment_db[s * nb + b]);
        out[b] = dsp::power_db(sum / static_cast<double>(ns));
    }
    return out;
}

}  // namespace cavitas::models
