// Did a repair or an operating change work? Recordings of one machine and
// point before and after, judged against the same baseline, indicator by
// indicator.
//
// The two-sample test is the Mann-Whitney U test on the per-segment values
// (1 s segments pooled over the recordings of each side), the change is the
// Hodges-Lehmann shift with its distribution-free 95 % interval, the effect
// size Cliff's delta (models/rank_tests.hpp says why rank methods). Segments
// of one recording are not fully independent (a mount or a duty point is
// shared by all of them), so significance alone is not enough: a change
// counts when the HF band level moves by at least `material_db` (the same
// +3 dB, twice the power, the classifier alerts on) with p <= `alpha`, or
// when the verdicts themselves change and the HF level moves significantly
// the same way. Everything else is "unchanged" - no significant change.
#pragma once

#include <string>
#include <vector>

#include "models/analyzer.hpp"
#include "models/baseline.hpp"
#include "models/classifier.hpp"
#include "models/operating_point.hpp"

namespace cavitas::models {

struct CompareConfig {
    double alpha = 0.01;        ///< per-indicator two-sided significance level
    double material_db = 3.0;   ///< HF change that matters on its own
    double confidence = 0.95;   ///< of the shift interval
    /// Re-mount repeatability of a band level (1 sigma, dB; the baseline's
    /// mount: repeatability_floor_db). With fewer than `min_visits` recordings
    /// a side, the units are one recording's segments, which share a mount and
    /// a duty: the HF interval is widened by 1.96 sqrt(2) x this, and a change
    /// needs the widened interval clear of zero.
    double repeatability_db = 1.0;
    /// Recordings a side from which the recordings (visits), not the segments,
    /// are the units of the HF statistics. Our choice: 3 (the fewest for which
    /// a median and a rank interval mean anything).
    std::size_t min_visits = 3;
};

enum class Change { improved, unchanged, worse };
const char* to_string(Change c);

struct IndicatorChange {
    std::string key;            ///< JSON name with its unit suffix, e.g. "hf_band_level_db"
    std::string label;
    std::size_t before_segments = 0, after_segments = 0;
    double before_median = 0.0, after_median = 0.0;
    double shift = 0.0, ci_low = 0.0, ci_high = 0.0;  ///< after - before (Hodges-Lehmann)
    double p_value = 1.0;       ///< Mann-Whitney U, two-sided
    bool exact = false;
    double cliffs_delta = 0.0;  ///< P(after > before) - P(after < before)
    bool significant = false;   ///< p <= alpha (HF: and the interval clear of zero)
    std::string units;          ///< "recordings" or "segments": what the statistics counted
    double widened_db = 0.0;    ///< added each side of the interval for re-mounting (segments as units)
};

struct RecordingSide {
    const RecordingAnalysis* analysis = nullptr;
    const Finding* finding = nullptr;
};

struct BeforeAfter {
    Change change = Change::unchanged;
    std::vector<IndicatorChange> indicators;   ///< HF level first
    std::vector<std::string> evidence;         ///< why this change verdict
    std::vector<std::string> warnings;         ///< what could explain the change instead
    int before_severity = -1, after_severity = -1;  ///< worst verdict (0 normal .. 2 developed; -1 none usable)
};

/// `unit` names the signal unit for key suffixes (as in the finding).
/// Throws std::invalid_argument when a side has no usable (not indeterminate) recording.
BeforeAfter compare_before_after(const std::vector<RecordingSide>& before, const std::vector<RecordingSide>& after,
                                 const std::string& unit, const CompareConfig& config = {});

/// Operating points before and after that differ enough to explain a change:
/// flow by more than 10 %, speed by more than 5 %. One sentence each.
std::vector<std::string> compare_duties(const OperatingPointSummary& before, const OperatingPointSummary& after);

}  // namespace cavitas::models
