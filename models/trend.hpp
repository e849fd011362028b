// Is a measurement point getting worse? The HF level over the baseline of
// each visit, judged over time, so that a slow rise is flagged before it
// crosses into an incipient-cavitation verdict.
//
// How it is judged (said with every result): over the last `window` usable
// visits (indeterminate ones left out), the Theil-Sen slope of the HF rise
// against time and a one-sided Mann-Kendall test (models/rank_tests.hpp).
// "rising" needs at least `min_points` visits, a positive slope and
// p <= `alpha`; rank methods, because one odd visit (a re-mounted sensor)
// must not make or break a trend. With 4 visits the smallest possible p is
// 1/24 = 0.042, so 4 is the fewest that can ever be significant at 0.05.
// A repair resets the history: with `since_days` (the point's last
// maintenance event) only the visits at or after it are judged, so that a
// slope never runs through the repair.
#pragma once

#include <optional>
#include <string>
#include <vector>

namespace cavitas::models {

struct TrendPoint {
    double days = 0.0;         ///< time of the visit, days
    double hf_rise_db = 0.0;   ///< HF band level over the baseline median
    bool usable = true;        ///< false for indeterminate visits
};

struct TrendConfig {
    std::size_t window = 6;
    std::size_t min_points = 4;
    double alpha = 0.05;
    double alert_db = 3.0;     ///< the classifier's HF alert (ClassifierConfig::hf_alert_db)
    std::optional<double> since_days;  ///< judge only visits at or after this time (the last event), days
};

struct TrendJudgement {
    std::size_t points = 0;            ///< visits judged
    bool rising = false;
    std::optional<double> slope_db_per_30d;
    std::optional<double> p_rising;
    std::optional<double> latest_fit_db;     ///< the Theil-Sen line at the latest visit
    std::optional<double> days_to_alert;     ///< at this slope, from the latest visit (rising and below the alert)
    std::string text;                  ///< one sentence with the numbers and how they were judged
};

TrendJudgement judge_hf_trend(const std::vector<TrendPoint>& points, const TrendConfig& config = {});

}  // namespace cavitas::models
