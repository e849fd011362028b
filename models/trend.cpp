#include "models/trend.hpp"

#include <algorithm>
#include <cmath>

#include "models/analyzer.hpp"
#include "models/rank_tests.hpp"
#include "models/text.hpp"

namespace cavitas::models {

TrendJudgement judge_hf_trend(const std::vector<TrendPoint>& all, const TrendConfig& c) {
    std::vector<TrendPoint> pts;
    for (const auto& p : all)
        if (p.usable && std::isfinite(p.hf_rise_db) && (!c.since_days || p.days >= *c.since_days)) pts.push_back(p);
    std::stable_sort(pts.begin(), pts.end(), [](const TrendPoint& a, const TrendPoint& b) { return a.days < b.days; });
    if (pts.size() > c.window) pts.erase(pts.begin(), pts.end() - static_cast<std::ptrdiff_t>(c.window));
    TrendJudgement j;
    j.points = pts.size();
    const std::string how = fmt("Theil-Sen slope and one-sided Mann-Kendall test over the last %zu usable visits, "
                                "rising when p <= %.2g",
                                pts.size(), c.alpha);
    std::vector<double> t, y;
    for (const auto& p : pts) {
        t.push_back(p.days);
        y.push_back(p.hf_rise_db);
    }
    const bool distinct_times = pts.size() >= 2 && pts.front().days != pts.back().days;
    if (pts.size() < c.min_points || !distinct_times) {
        j.text = fmt("too few visits to judge a trend (%zu usable; at least %zu are needed, the fewest for which a "
                     "rank test can reach p <= %.2g)",
                     pts.size(), c.min_points, c.alpha);
        return j;
    }
    const double slope = theil_sen_slope(t, y);
    const TrendTest mk = mann_kendall(t, y);
    std::vector<double> resid;
    for (std::size_t i = 0; i < t.size(); ++i) resid.push_back(y[i] - slope * t[i]);
    const double intercept = median(resid);
    j.slope_db_per_30d = slope * 30.0;
    j.p_rising = mk.p_rising;
    j.latest_fit_db = intercept + slope * t.back();
    j.rising = slope > 0.0 && mk.p_rising <= c.alpha;
    if (j.rising) {
        if (*j.latest_fit_db < c.alert_db) {
            j.days_to_alert = (c.alert_db - *j.latest_fit_db) / slope;
            j.text = fmt("rising: HF over baseline %+.2f dB per 30 days (p = %.3f), now about %+.1f dB; at this rate it "
                         "reaches the %+.0f dB alert in about %.0f days - re-measure sooner and check the suction side (%s)",
                         *j.slope_db_per_30d, mk.p_rising, *j.latest_fit_db, c.alert_db, *j.days_to_alert, how.c_str());
        } else {
            j.text = fmt("rising: HF over baseline %+.2f dB per 30 days (p = %.3f), already about %+.1f dB, over the "
                         "%+.0f dB alert (%s)",
                         *j.slope_db_per_30d, mk.p_rising, *j.latest_fit_db, c.alert_db, how.c_str());
        }
    } else {
        j.text = fmt("no significant rise: HF over baseline %+.2f dB per 30 days (p = %.3f) (%s)", *j.slope_db_per_30d,
                     mk.p_rising, how.c_str());
    }
    return j;
}

}  // namespace cavitas::models
