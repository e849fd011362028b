// Acoustic NPSH test: where, as suction pressure falls step by step, the
// high-frequency level of a pump starts to rise over its quiet plateau
// (cavitation inception, NPSHi), read beside the 3 % head-drop point (NPSH3).
//
// The HF band level of every ~1 s segment of every recording is fitted, against
// the step's NPSHa, by a two-segment ("hinge") line
//     y = a + b max(0, k - NPSHa)
// (a the plateau, dB; b the rise, dB/m; k the knee, m): the trade's picture of
// an NPSH test read acoustically (methods review A1 [I]; its check: a 60 dB
// plateau above 8 m rising 4 dB/m below, points 12 ... 5 m, gives k = 8.000,
// a = 60, b = 4). The knee is NPSHi when the fitted rise at the lowest fitted
// step reaches `rise_threshold_db` and the resampled sweeps agree (below).
// Pure numerics: no files, no text parsing, no printing.
#pragma once

#include <cstddef>
#include <cstdint>
#include <optional>
#include <span>
#include <string>
#include <utility>
#include <vector>

#include "models/baseline.hpp"

namespace cavitas::models {

/// One step of a sweep: the recordings made at one NPSHa.
struct SweepStep {
    double npsha_m = 0.0;  ///< NPSH available at the step, as computed from its operating point
    double rpm = 0.0;      ///< shaft speed of the step
    /// Per recording, the HF band level of each analysis segment, dB re 1 (signal unit)^2.
    std::vector<std::vector<double>> hf_level_db;
    std::optional<double> head_m;  ///< pump head at the step, when measured
};

/// How steps at different speeds are brought to one speed (methods review A2):
/// NPSH by the affinity law NPSHR ~ N^2 [S: affinity laws; a maker's note says
/// ~N^1.5 for speed reductions, no exponent proven], head H ~ N^2 [S: affinity],
/// band levels by dL = 20 m log10(n / n_ref) dB with m = 2 (assumed: no published
/// exponent for the 1-10 kHz acceleration of a pump was found).
struct SpeedScaling {
    bool applied = false;
    double reference_rpm = 0.0;
    double npsh_exponent = 2.0;
    double level_exponent = kAssumedSlopeDbPerDecade / 20.0;  ///< m: the baselines' assumed slope (models/baseline.hpp)
    double level_db_per_decade() const { return 20.0 * level_exponent; }
};

/// NPSHa at the reference speed: npsha_m (n_ref / n)^exponent.
double npsha_at_speed_m(double npsha_m, double rpm, double reference_rpm, double exponent = 2.0);
/// The shift that brings a level measured at rpm to the reference speed:
/// -20 m log10(n / n_ref) dB.
double level_shift_db(double rpm, double reference_rpm, double level_exponent = kAssumedSlopeDbPerDecade / 20.0);

struct InceptionConfig {
    /// The rise that counts as inception: the project's HF alert level
    /// (ClassifierConfig::hf_alert_db; 3 dB, twice the HF band power). Set by the caller.
    double rise_threshold_db = 3.0;
    /// The rise must be clear of the noise: at least this share of the bootstrap
    /// replicates must also show a fitted rise of rise_threshold_db (our choice:
    /// a one-sided 95 % level).
    double clear_share = 0.95;
    std::size_t replicates = 1000;      ///< bootstrap resamples of the sweep
    std::uint64_t seed = 20260517;      ///< of the resampling (std::mt19937_64): the same sweep, the same interval
    double knee_step_m = 0.005;         ///< grid of the knee search, then refined between grid points
    /// Steps whose speeds differ from the reference by more than this share are
    /// brought to the reference speed (our choice: 1 %, i.e. 2 % in NPSH).
    double speed_tolerance = 0.01;
    double head_drop = 0.03;            ///< NPSH3: the 3 % head drop (ANSI/HI 14.6, ISO 9906)
};

/// The hinge y = a + b max(0, k - x), least squares.
struct HingeFit {
    double knee_m = 0.0;
    double plateau_db = 0.0;
    double slope_db_per_m = 0.0;
    double rss = 0.0;  ///< weighted residual sum of squares at the fitted means (dB^2)
};

/// Fits the hinge to points (x, y) with weights (empty = 1 each), the knee
/// searched between k_low_m and k_high_m (a grid of knee_step_m and every x in
/// the range, then a golden-section refinement around the best); a and b by
/// least squares (Eigen) at each knee. Throws std::invalid_argument for fewer
/// than two distinct x, mismatched lengths or k_low_m > k_high_m.
HingeFit fit_hinge(std::span<const double> x_m, std::span<const double> y_db, std::span<const double> weight,
                   double k_low_m, double k_high_m, double knee_step_m = 0.005);

/// NPSH3 from heads: the NPSHa where the head first falls to (1 - drop) x the
/// reference head, going down the steps, by linear interpolation between the
/// steps either side. npsha_m must be strictly decreasing.
struct Npsh3Reading {
    std::optional<double> npsh3_m;
    double reference_head_m = 0.0;
    double target_head_m = 0.0;
    std::string reason;  ///< when npsh3_m is empty
};
Npsh3Reading npsh3_by_head_drop(std::span<const double> npsha_m, std::span<const double> head_m,
                                double reference_head_m, double drop = 0.03);

/// What the sweep says of each step.
struct StepReading {
    std::size_t step = 0;         ///< which of the steps given
    double npsha_scaled_m = 0.0;  ///< at the reference speed (= npsha_m when not scaled)
    double level_shift_db = 0.0;  ///< added to the step's levels (0 when not scaled)
    double hf_level_db = 0.0;     ///< median over the step's segments, after the shift
    double hf_rise_db = 0.0;      ///< hf_level_db - the fitted plateau
    double hf_low_db = 0.0, hf_high_db = 0.0;  ///< 10th and 90th percentile of the step's segments (after the shift)
    std::optional<double> head_scaled_m;
    std::size_t segments = 0;
    bool fitted = false;
    bool past_peak = false;       ///< below the step of highest HF level: not fitted
};

enum class Located { fitted, between_steps, not_found };
const char* to_string(Located l);

struct InceptionResult {
    SpeedScaling scaling;
    std::vector<StepReading> steps;  ///< in falling NPSHa at the reference speed (`step` says which was given)
    std::optional<HingeFit> fit;     ///< empty when fewer than two steps lie in the fit range
    double rise_db = 0.0;            ///< fitted rise at the lowest fitted step, b (k - x_min)
    double clear_share = 0.0;        ///< share of replicates whose fitted rise reached the threshold
    std::optional<double> npshi_m;
    std::optional<std::pair<double, double>> interval_m;
    std::optional<std::pair<double, double>> bracket_m;  ///< between_steps: the last quiet and first risen steps
    Located located = Located::not_found;
    std::string reason;              ///< when npshi_m is empty: why, for a person
    Npsh3Reading npsh3;              ///< reason "no head given" when no step has a head
    std::size_t replicates = 0;
};

/// The acoustic NPSH test. steps: at least three, in any order, of distinct
/// NPSHa (at the reference speed), each with at least one recording of at
/// least one segment, rpm > 0.
/// at_rpm: read the sweep at this speed (scales even when the steps share one
/// speed). Throws std::invalid_argument for steps that break these rules.
InceptionResult find_inception(const std::vector<SweepStep>& steps, const InceptionConfig& config,
                               std::optional<double> at_rpm = std::nullopt);

/// The cautions shown with every sweep's result (terminal, JSON, report).
const std::vector<std::string>& inception_cautions();

}  // namespace cavitas::models
