// The trade's units: line amplitudes as RMS, velocity from acceleration,
// overall velocity in the severity band, levels in dB re the ISO 1683
// references, and the analyst's severity zones.
//
// All pure functions over a one-sided density PSD (units^2/Hz, as
// signal/spectrum.hpp scales it: |X|^2 / (fs sum w^2), bins 1 .. n/2-1
// doubled). Two bandwidths matter:
//   * a line's RMS amplitude is sqrt(PSD x ENBW in Hz): a bin-centred sine of
//     amplitude A puts (A^2/2) / ENBW_hz into its line (Hann: ENBW 1.5 bins);
//   * a band's power is sum(PSD) x bin width: the window spreads a tone over
//     ENBW bins' worth of lines, so summing line powers (PSD x ENBW) would
//     count each tone ENBW times over. The overall velocity uses the sum.
//
// Severity zones are context for the analyst: they never enter the
// cavitation verdict (models/classifier.cpp does not read them).
#pragma once

#include <optional>
#include <span>
#include <string>
#include <vector>

namespace cavitas::models {

/// ISO 1683:2015 reference values (methods notes A7): vibratory acceleration
/// 1 um/s2, sound pressure in water 1 uPa.
inline constexpr double kIso1683AccelerationRefM_s2 = 1e-6;
inline constexpr double kIso1683WaterPressureRefPa = 1e-6;

/// 20 log10(rms_si / reference_si); -300 dB for silence.
double level_db_re(double rms_si, double reference_si);
/// The offset to add to a level in dB re 1 (signal unit) to get it in dB re
/// reference_si: 20 log10(si_per_unit / reference_si).
double reference_offset_db(double si_per_unit, double reference_si);

/// Velocity from acceleration: the lines below this are left out (the
/// integration 1/(2 pi f) blows up low-frequency noise). Default; stated in
/// every output that shows a velocity.
inline constexpr double kVelocityLowCutHz = 10.0;
/// The band of overall velocity in ISO 10816 / 20816 (methods notes 2.5).
inline constexpr double kSeverityBandLowHz = 10.0;
inline constexpr double kSeverityBandHighHz = 1000.0;

/// RMS amplitude per line: sqrt(psd[k] x enbw_hz), in the PSD's unit.
std::vector<double> line_rms(std::span<const double> psd, double enbw_hz);

/// Velocity PSD from an acceleration PSD in (m/s2)^2/Hz: psd / (2 pi f)^2 in
/// (m/s)^2/Hz, zero at and below 0 Hz and below low_cut_hz.
std::vector<double> velocity_psd(std::span<const double> accel_psd_si, double bin_hz, double low_cut_hz);

/// Overall velocity, m/s RMS, in [low_hz, high_hz] (lines whose centre lies
/// in the band, edges in) and not below low_cut_hz:
/// sqrt(sum of accel_psd / (2 pi f)^2 x bin_hz).
double overall_velocity_rms_m_s(std::span<const double> accel_psd_si, double bin_hz, double low_hz, double high_hz,
                                double low_cut_hz);

/// The analyst's zone boundaries (mm/s RMS) and where they come from.
struct SeverityZones {
    std::string source;  ///< standard, part, edition, class
    double band_low_hz = kSeverityBandLowHz;
    double band_high_hz = kSeverityBandHighHz;
    double a_b_mm_s = 0.0;
    double b_c_mm_s = 0.0;
    double c_d_mm_s = 0.0;
};

enum class SeverityZone { A, B, C, D };

/// The zone of an overall velocity. A value exactly on a boundary belongs to
/// the upper zone (a boundary reached counts as crossed: the cautious reading;
/// our choice, documented in README.md).
SeverityZone zone_of(double overall_mm_s, const SeverityZones& z);
const char* zone_letter(SeverityZone z);
/// What the letter means, in neutral words (the zone descriptions of ISO
/// 10816 / 20816 paraphrased, methods notes 2.5).
const char* zone_meaning(SeverityZone z);

}  // namespace cavitas::models
