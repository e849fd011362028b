// A synthetic acoustic NPSH test of one Orrin Weir pump: recordings at falling
// NPSHa with a sweep manifest (SWEEP.csv, the columns of a route manifest plus
// the suction reading, temperature and head of each row) for `cavitas inception`.
//
// Truth, at the machine's nominal speed: below npshi_m the pump cavitates, the
// HF band rising rise_db_per_m for each metre of NPSHa under it (incipient
// collapses, developed ones from 10 dB on); above it the recordings are
// healthy. The rise is set in the HF band cavitas analyses at the machine's
// rate (models::choose_setup, no sensor limit). With speed_drop > 0 the speed falls step by step (as a throttled
// rig's drifts) and the truth holds at NPSHa x (n_nominal / n)^2; the levels
// follow the speed with exponent 2 (CaseSpec::level_speed_exponent_*). The
// head is head_m x (n / n_nominal)^2, falling below npsh3_m x 2 as the drop
// 3 % x 2^((npsh3_m - NPSHa_nominal) / 0.5 m) (our shape: 3 % at NPSH3).
#pragma once

#include <cstdint>
#include <filesystem>
#include <iosfwd>
#include <optional>
#include <string>
#include <vector>

namespace cavitas::synth {

struct SweepSpec {
    std::string tag = "OW-P101";
    std::vector<double> npsha_m{12, 11, 10, 9, 8, 7, 6, 5, 4, 3};  ///< the steps, as the gauge gives them
    std::optional<double> npshi_m = 6.0;                          ///< empty: no cavitation at any step
    double rise_db_per_m = 3.0;
    int recordings_per_step = 2;
    double duration_s = 5.0;
    double speed_drop = 0.0;        ///< share the speed falls by from the first step to the last
    double temperature_c = 20.0;
    double head_m = 50.0;           ///< cavitation-free head at nominal speed
    double npsh3_m = 3.5;           ///< where the head has fallen 3 %
    std::uint64_t seed = 20260601;
};

struct SweepWritten {
    std::size_t recordings = 0;
    std::filesystem::path manifest;
};

/// Writes the recordings (16-bit PCM WAV, full scale 50 g) and SWEEP.csv into
/// folder (created if missing). Throws std::invalid_argument for a spec out of
/// range, std::runtime_error when a file cannot be written.
SweepWritten write_sweep(const std::filesystem::path& folder, const SweepSpec& spec);

}  // namespace cavitas::synth
