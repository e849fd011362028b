#include "models/severity.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>

namespace cavitas::models {

double level_db_re(double rms_si, double reference_si) {
    const double r = rms_si / reference_si;
    return r > 1e-15 ? 20.0 * std::log10(r) : -300.0;
}

double reference_offset_db(double si_per_unit, double reference_si) { return 20.0 * std::log10(si_per_unit / reference_si); }

std::vector<double> line_rms(std::span<const double> psd, double enbw_hz) {
    std::vector<double> out(psd.size());
    for (std::size_t k = 0; k < psd.size(); ++k) out[k] = std::sqrt(std::max(0.0, psd[k]) * enbw_hz);
    return out;
}

std::vector<double> velocity_psd(std::span<const double> accel_psd_si, double bin_hz, double low_cut_hz) {
    std::vector<double> out(accel_psd_si.size(), 0.0);
    for (std::size_t k = 1; k < accel_psd_si.size(); ++k) {
        const double f = static_cast<double>(k) * bin_hz;
        if (f < low_cut_hz) continue;
        const double w = 2.0 * std::numbers::pi * f;
        out[k] = accel_psd_si[k] / (w * w);
    }
    return out;
}

double overall_velocity_rms_m_s(std::span<const double> accel_psd_si, double bin_hz, double low_hz, double high_hz,
                                double low_cut_hz) {
    if (!(bin_hz > 0.0)) return 0.0;
    const double lo = std::max({low_hz, low_cut_hz, bin_hz * 0.5});
    double sum = 0.0;
    for (std::size_t k = 1; k < accel_psd_si.size(); ++k) {
        const double f = static_cast<double>(k) * bin_hz;
        if (f < lo) continue;
        if (f > high_hz) break;
        const double w = 2.0 * std::numbers::pi * f;
        sum += accel_psd_si[k] / (w * w);
    }
    return std::sqrt(sum * bin_hz);
}

SeverityZone zone_of(double v, const SeverityZones& z) {
    if (v >= z.c_d_mm_s) return SeverityZone::D;
    if (v >= z.b_c_mm_s) return SeverityZone::C;
    if (v >= z.a_b_mm_s) return SeverityZone::B;
    return SeverityZone::A;
}

const char* zone_letter(SeverityZone z) {
    switch (z) {
        case SeverityZone::A: return "A";
        case SeverityZone::B: return "B";
        case SeverityZone::C: return "C";
        case SeverityZone::D: return "D";
    }
    return "?";
}

const char* zone_meaning(SeverityZone z) {
    switch (z) {
        case SeverityZone::A: return "typical of machines newly put into service";
        case SeverityZone::B: return "acceptable for unrestricted long-term running";
        case SeverityZone::C: return "not acceptable for long-term continuous running; a limited period until action";
        case SeverityZone::D: return "severe enough to damage the machine";
    }
    return "";
}

}  // namespace cavitas::models
