#include "tools/synth/sweep.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <fstream>
#include <sstream>
#include <stdexcept>

#include "models/analyzer.hpp"
#include "models/hydraulics.hpp"
#include "models/operating_point.hpp"
#include "tools/synth/synth.hpp"

namespace cavitas::synth {

namespace {

/// The Orrin Weir station's elevation (the field set's), for the gauge readings.
constexpr double kElevationM = 62.0;

std::string number(double v, int decimals) {
    char b[64];
    std::snprintf(b, sizeof b, "%.*f", decimals, v);
    return b;
}

/// The gauge reading (kPa, to 0.01 kPa) that gives npsha_m in water at temperature_c at
/// the station's elevation, the gauge at the impeller-eye datum, no velocity head; solved
/// with the project's hydraulics (IAPWS-IF97 water, ISO 2533 atmosphere) by Newton steps.
double gauge_kpa_for(double npsha_m, double temperature_c) {
    models::OperatingPoint op;
    op.pressure_reference = models::PressureReference::gauge;
    op.elevation_m = kElevationM;
    op.temperature_k = temperature_c + 273.15;
    double kpa = 0.0;
    for (int i = 0; i < 4; ++i) {
        op.suction_pressure_pa = kpa * 1000.0;
        const models::Hydraulics h = models::evaluate_operating_point(op);
        kpa += (npsha_m - h.npsh->npsha_m) * h.liquid->density_kg_m3 * models::kStandardGravityM_s2 / 1000.0;
    }
    return std::round(kpa * 100.0) / 100.0;
}

void check(const SweepSpec& s) {
    if (s.npsha_m.size() < 3) throw std::invalid_argument("a sweep needs at least 3 steps");
    for (std::size_t i = 0; i < s.npsha_m.size(); ++i)
        if (!(s.npsha_m[i] > 0.0) || (i > 0 && !(s.npsha_m[i] < s.npsha_m[i - 1])))
            throw std::invalid_argument("sweep steps must be positive NPSHa values, falling");
    if (s.npshi_m && !(*s.npshi_m > 0.0)) throw std::invalid_argument("--npshi must be above 0 m");
    if (!(s.rise_db_per_m > 0.0 && s.rise_db_per_m <= 20.0)) throw std::invalid_argument("--rise must be within 0..20 dB/m");
    if (s.recordings_per_step < 1 || s.recordings_per_step > 20) throw std::invalid_argument("1..20 recordings a step");
    if (!(s.duration_s >= 1.0 && s.duration_s <= 600.0)) throw std::invalid_argument("recordings of 1..600 s");
    if (!(s.speed_drop >= 0.0 && s.speed_drop <= 0.5)) throw std::invalid_argument("--speed-drop within 0..0.5");
}

// The fault of a step: healthy above NPSHi, cavitation whose HF rise grows below it.
CaseSpec step_case(const SweepSpec& s, const Machine& m, double npsha_nominal_m, double rpm, std::uint64_t seed) {
    CaseSpec c;
    c.machine = m;
    c.duration_s = s.duration_s;
    c.seed = seed;
    c.rpm_override = rpm;
    c.level_speed_exponent_hf = s.speed_drop > 0.0 ? 2.0 : 0.0;
    c.level_speed_exponent_lf = s.speed_drop > 0.0 ? 2.0 : 0.0;
    const models::AnalysisSetup analysed = models::choose_setup(m.fs_hz, 0.0);  // the bands cavitas reads
    c.rise_band = {analysed.hf.low_hz, analysed.hf.high_hz};
    const double rise_db = s.npshi_m ? s.rise_db_per_m * (*s.npshi_m - npsha_nominal_m) : 0.0;
    if (rise_db <= 0.0) return c;
    c.kind = rise_db >= 10.0 ? Kind::developed : Kind::incipient;
    c.severity = c.kind == Kind::developed ? std::clamp((rise_db - 11.0) / 13.0, 0.0, 1.0) : std::clamp(rise_db / 8.0, 0.0, 1.0);
    FaultParams p = draw_params(c.kind, c.severity, seed);
    p.cavitation.hf_rise_db = rise_db;
    c.params = p;
    return c;
}

double head_at(const SweepSpec& s, double npsha_nominal_m, double speed_ratio) {
    const double drop = 0.03 * std::pow(2.0, (s.npsh3_m - npsha_nominal_m) / 0.5);
    return s.head_m * speed_ratio * speed_ratio * (1.0 - std::min(drop, 0.9));
}

std::string when(std::size_t k) {
    const std::size_t minutes = 9 * 60 + 10 * k;
    char b[40];
    std::snprintf(b, sizeof b, "2026-06-%02zuT%02zu:%02zu:00", 15 + minutes / (24 * 60), (minutes / 60) % 24, minutes % 60);
    return b;
}

}  // namespace

SweepWritten write_sweep(const std::filesystem::path& folder, const SweepSpec& s) {
    check(s);
    const Machine& m = machine_by_tag(s.tag);
    std::filesystem::create_directories(folder);
    std::ostringstream csv;
    csv << "file,machine,point,channel,datetime,rpm,vanes,full_scale,suction_pressure,temperature,elevation,head\n";
    SweepWritten w;
    const std::size_t n = s.npsha_m.size();
    for (std::size_t i = 0; i < n; ++i) {
        const double ratio = 1.0 - s.speed_drop * static_cast<double>(i) / static_cast<double>(n - 1);
        const double rpm = m.rpm * ratio;
        const double nominal = s.npsha_m[i] / (ratio * ratio);  // NPSHa at nominal speed (NPSHR ~ N^2)
        const std::string gauge = number(gauge_kpa_for(s.npsha_m[i], s.temperature_c), 2) + " kPa";
        for (int r = 0; r < s.recordings_per_step; ++r) {
            const std::uint64_t seed = derive_seed(s.seed, i * 100 + static_cast<std::uint64_t>(r));
            const Recording rec = synthesize_recording(step_case(s, m, nominal, rpm, seed));
            char name[96];
            std::snprintf(name, sizeof name, "%s_sweep_%02zu_r%d.wav", m.tag.c_str(), i + 1, r + 1);
            write_wav((folder / name).string(), rec.g, rec.fs_hz, kFullScaleG, sf_format_of(Encoding::pcm16));
            csv << name << "," << m.tag << ",DE-H,0," << when(w.recordings) << "," << number(rpm, 1) << "," << m.vanes
                << ",50g," << gauge << "," << number(s.temperature_c, 1) << " C," << number(kElevationM, 0) << " m,"
                << number(head_at(s, nominal, ratio), 2) << "m\n";
            ++w.recordings;
        }
    }
    w.manifest = folder / "SWEEP.csv";
    const std::string tmp = w.manifest.string() + ".tmp";
    {
        std::ofstream out(tmp, std::ios::binary | std::ios::trunc);
        out << csv.str();
        if (!out) throw std::runtime_error("cannot write '" + w.manifest.string() + "'");
    }
    std::filesystem::rename(tmp, w.manifest);
    return w;
}

}  // namespace cavitas::synth
