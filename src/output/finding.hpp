// Presenting a finding: a short summary for a person, JSON for other tools.
#pragma once

#include <cstddef>
#include <iosfwd>
#include <optional>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "src/analysis/analysis.hpp"

namespace cavitas::app {

inline constexpr const char* kFindingSchema = "cavitas.finding/1";

inline constexpr const char* kNpshSchema = "cavitas.npsh/1";

void write_summary(std::ostream& out, const AnalyzeResult& r, const std::string& baseline_path);
/// The finding's "provenance": who ran the analysis and with what: analyst,
/// analyst_source, host, cavitas_version, baseline_path, baseline_sha256 (of
/// its bytes as read) and baseline_created_utc. When: the finding's created_utc.
nlohmann::json provenance_to_json(const AnalyzeResult& r, const std::string& baseline_path);
nlohmann::json finding_to_json(const AnalyzeResult& r, const std::string& baseline_path);
/// The "speed" of a finding or screening: rpm, how it was known (given,
/// estimated, unknown), its confirmation, the search range, shaft and blade-pass Hz.
nlohmann::json speed_to_json(const models::RecordingAnalysis& a);
/// The "bands" of a finding or screening: HF and LF edges (Hz), segment (s),
/// the levels' reference (dB re 1 unit squared).
nlohmann::json bands_to_json(const AnalyzedRecording& rec);
/// The "input" of a finding or screening: path, rate, duration, channel(s),
/// format, calibrated unit, full scale, SHA-256 of the file's bytes.
nlohmann::json input_to_json(const AnalyzedRecording& rec);
/// The data a report draws: the spectrum profile against the baseline's, the
/// averaged squared-envelope spectrum, the kurtogram's mean map (the finding's "plots").
nlohmann::json plots_to_json(const AnalyzeResult& r);

/// The most impulsive segment's short waveform (the finding's plots.waveform):
/// start_s, sample_rate_hz, unit, segment, segment_kurtosis, hf_low_hz,
/// hf_high_hz, raw and hf, the samples in the calibrated unit rounded to
/// kWaveformDigits significant digits of the excerpt's largest |value|. Null
/// when the analysis kept none.
nlohmann::json waveform_to_json(const AnalyzeResult& r);
inline constexpr int kWaveformDigits = 6;
/// x as doubles rounded to `digits` significant digits of its largest |value|
/// (smaller values keep the same decimals, so they print shorter).
std::vector<double> rounded_to_peak(const std::vector<float>& x, int digits);

/// The derived hydraulics with units in the keys (npsha_m, vapour_pressure_pa,
/// density_kg_m3, velocity_head_m, absolute_suction_pa, margin_m, margin_ratio,
/// ...) and the stated inputs; shared by `npsh --json` and the finding's
/// "operating_point".
nlohmann::json hydraulics_to_json(const ResolvedOperatingPoint& duty);
/// `npsh --json`: the schema, version and time, then hydraulics_to_json's keys.
nlohmann::json npsh_to_json(const ResolvedOperatingPoint& duty);
/// `npsh`'s account for a person: every term of the sum with its unit.
void write_npsh_account(std::ostream& out, const ResolvedOperatingPoint& duty);
/// What `baseline` prints of the operating point it was learned at.
void write_operating_point_summary(std::ostream& out, const models::OperatingPointSummary& s, std::size_t stated,
                                   std::size_t recordings);

/// A level's absolute reference by ISO 1683:2015 (methods notes A7) for a
/// signal unit: acceleration dB re 1 um/s2, pressure (hydrophone) dB re 1 uPa.
struct AbsoluteLevelReference {
    std::string key_suffix;  ///< "re_1um_s2" or "re_1upa"
    std::string text;        ///< "dB re 1 µm/s²" or "dB re 1 µPa"
    double offset_db = 0.0;  ///< add to a level in dB re 1 (unit) squared
};
/// nullopt for FS, V and raw: no absolute reference applies.
std::optional<AbsoluteLevelReference> absolute_level_reference(const std::string& unit);
/// The finding's "velocity": overall RMS velocity, band, low cut and zone, or
/// why there is none.
nlohmann::json velocity_to_json(const VelocityFinding& v);
/// The summary's lines on levels (with their references) and velocity.
void write_levels_summary(std::ostream& out, const AnalyzeResult& r);
/// The plots' "amplitude_spectrum": the averaged spectrum as RMS amplitude per
/// line in the calibrated unit, and velocity per line (mm/s RMS) when in acceleration.
nlohmann::json amplitude_spectrum_to_json(const AnalyzeResult& r);
/// Acceleration lines written at most (thinned by their larger neighbour above
/// this); velocity lines are written at the analysis's resolution up to the
/// velocity band's top (1000 lines a 1 s segment), thinned above this too.
inline constexpr std::size_t kAmplitudePointsWritten = 4096;

/// The envelope spectrum as a finding keeps it for reports: at most this many
/// lines (long segments and a high blade-pass frequency give more; a report
/// reads at most 65 536 values an array).
inline constexpr std::size_t kEnvelopePointsWritten = 16384;
/// Halves the bins, each pair merged by its larger amplitude (so a line is never
/// lost) and bin_hz doubled, until at most max_points remain.
void thin_by_largest(std::vector<double>& amplitude, double& bin_hz, std::size_t max_points);

}  // namespace cavitas::app
