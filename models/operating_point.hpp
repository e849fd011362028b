// The operating point of one recording (suction pressure, liquid temperature,
// flow, speed, NPSH3) and what follows from it (NPSH available, margin, Thoma
// number). A baseline keeps a summary of the operating point it was learned
// at; a recording made at another flow is flagged, because both the HF noise
// of the flow and the NPSH the pump needs change with it. How the margin reads
// beside the acoustic verdict is in models/margin_reading.hpp.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "models/hydraulics.hpp"

namespace cavitas::models {

enum class PressureReference { gauge, absolute };

/// What is known about the duty at one recording. Every member is optional;
/// SI units. Text with units is parsed at the edge (src/).
struct OperatingPoint {
    std::optional<double> suction_pressure_pa;  ///< as read on the suction gauge
    std::optional<PressureReference> pressure_reference;  ///< unset = gauge
    std::optional<double> barometric_pa;
    std::optional<double> elevation_m;          ///< site elevation, for the standard atmosphere
    std::optional<double> temperature_k;        ///< liquid temperature
    std::optional<double> gauge_height_m;       ///< suction gauge above the impeller-eye datum
    std::optional<double> flow_m3_s;
    std::optional<double> bore_m;               ///< suction pipe bore at the gauge
    std::optional<double> npsh3_m;              ///< at the operating flow
    std::optional<Npsh3Curve> npsh3_curve;
    std::string npsh3_curve_name;               ///< where the curve came from, for messages
    std::optional<double> vapour_pressure_pa;   ///< a liquid other than water
    std::optional<double> density_kg_m3;
    std::optional<double> rpm;
    std::optional<double> runner_setting_m;     ///< turbine: runner reference above tailwater
    std::optional<double> net_head_m;           ///< turbine: net head
    std::optional<double> sigma_critical;       ///< turbine: critical Thoma number from model tests
    std::string note;

    bool empty() const;
    /// Members set in `over` replace these (command-line flags over a sidecar file).
    void overlay(const OperatingPoint& over);
};

/// Everything derived from an operating point. Quantities that could not be
/// derived are unset, with the reason in `notes`.
struct Hydraulics {
    std::optional<double> barometric_pa;
    std::string barometric_source;              ///< "given", "standard atmosphere at 350 m", ...
    std::optional<LiquidProperties> liquid;
    std::optional<double> absolute_suction_pa;
    std::optional<double> velocity_m_s;
    std::optional<NpshAvailable> npsh;
    std::optional<double> npsh3_m;
    std::string npsh3_source;                   ///< "given" or "curve FILE at 120 m3/h"
    std::optional<NpshMargin> margin;
    std::optional<std::string> margin_unavailable;  ///< why no margin although NPSH3 was given
    std::optional<double> thoma_sigma;
    std::optional<double> thoma_ratio;          ///< plant sigma / critical sigma
    std::vector<std::string> notes;             ///< assumptions and omissions, for a person
};

/// Derive NPSH, margin and Thoma number. Throws std::invalid_argument with
/// words for a person when the inputs contradict physics or each other (a gauge
/// reading below full vacuum, a temperature above the critical point, a density
/// without a vapour pressure, a curve without a flow, ...).
Hydraulics evaluate_operating_point(const OperatingPoint& op, const MarginGuidance& guidance = {});

/// What a baseline stores of the operating point(s) it was learned at (medians
/// over its recordings of what was stated; unset = not stated for any).
struct OperatingPointSummary {
    std::optional<double> rpm;
    std::optional<double> flow_m3_s;
    std::optional<double> temperature_k;
    std::optional<double> absolute_suction_pa;
    std::optional<double> npsha_m;
    std::optional<double> margin_ratio;
    bool empty() const;
};
OperatingPointSummary summarize(const std::vector<std::pair<OperatingPoint, Hydraulics>>& points);

/// Limits for "the baseline was learned at another operating point".
struct OperatingPointLimits {
    /// Flow difference, share of the baseline's flow. HF flow noise and NPSH3 both
    /// climb steeply with flow away from the best-efficiency point; as for speed,
    /// our choice is 10 %.
    double flow_change = 0.10;
    /// Flow under this share of the baseline's, or over its inverse: the
    /// baseline does not apply at all (suction recirculation and flow noise of
    /// part load, or run-out, change the spectrum the baseline describes). The
    /// allowable operating region of ANSI/HI 9.6.3 spans roughly 70-120 % of
    /// the best-efficiency flow (from memory); half the baseline's flow is our
    /// choice of "far outside it" whatever the baseline's own duty.
    double far_flow_share = 0.5;
};

/// A way the recording's duty differs from the baseline's.
struct DutyDifference {
    std::string text;   ///< the finding in words, with both duties and what to do
    std::string brief;  ///< one clause for the list of what lowered the confidence
    bool far = false;   ///< beyond far_flow_share: the baseline is not valid at this duty
};

/// Differences between the baseline's operating point and this recording's
/// that make the comparison doubtful (empty when comparable or when either
/// side is not stated). Speed is judged by the quality gate
/// (models/quality.hpp), which sees the speed the analysis used.
std::vector<DutyDifference> compare_with_baseline(const OperatingPointSummary& baseline, const OperatingPoint& now,
                                                  const OperatingPointLimits& limits = {});

}  // namespace cavitas::models
