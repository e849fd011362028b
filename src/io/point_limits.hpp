// A measurement point's own alert limits, for a point that is always noisier
// (or quieter) than the defaults suit: a small TOML file beside the point's
// baseline, BASELINES/MACHINE/POINT.limits.toml (for a baseline X.json,
// X.limits.toml), or given with `analyze --limits FILE`.
//
//   reason = "suction-bell vortex at every visit since 2025; survey WO-2508-0117"  # required: why
//   hf_alert_db = 5        # HF rise over the baseline that counts at all (default 3)
//   hf_developed_db = 12   # HF rise read as developed cavitation (default 9)
//   lf_alert_db = 6        # LF rise reported as flow turbulence (default 3)
//
// Only the keys given change; every finding says which limits it used and
// where they came from (models::ClassifierConfig holds the defaults and
// their reasons).
#pragma once

#include <optional>
#include <string>

#include "models/classifier.hpp"

namespace cavitas::app {

/// The limits a finding was judged with, and where they came from.
struct PointLimits {
    double hf_alert_db = models::ClassifierConfig{}.hf_alert_db;
    double hf_developed_db = models::ClassifierConfig{}.hf_developed_db;
    double lf_alert_db = models::ClassifierConfig{}.lf_alert_db;
    std::string source;  ///< the limits file, empty: cavitas's defaults
    std::string reason;  ///< the analyst's words from the file

    /// The classifier's configuration with these limits in it.
    models::ClassifierConfig applied_to(models::ClassifierConfig config) const;
    /// "HF alert +3.0 dB, developed +9.0 dB, LF alert +3.0 dB re baseline (cavitas defaults)".
    std::string words() const;
};

/// A limit must lie within these, dB re baseline (our choice: below half a dB
/// is under any mount's repeatability, above 40 dB no cavitation would ever count).
inline constexpr double kLimitMinDb = 0.5;
inline constexpr double kLimitMaxDb = 40.0;

/// X.json -> X.limits.toml (any other name: NAME.limits.toml).
std::string limits_path_beside(const std::string& baseline_path);

/// Parse a limits file's text; InputError naming `path`, the key and the value
/// (not TOML, an unknown key, a missing or empty reason, a limit not a number
/// within 0.5-40 dB, developed not above alert).
PointLimits parse_point_limits(const std::string& text, const std::string& path);

/// The limits of a point: `explicit_path` when given (it must exist), else the
/// file beside the baseline when there is one, else the defaults.
PointLimits point_limits(const std::optional<std::string>& explicit_path, const std::string& baseline_path);

}  // namespace cavitas::app
