// Rank statistics for before/after comparisons and trends over time.
//
// Why rank methods: the segment values cavitas compares (HF level in dB,
// kurtosis, impulse counts) are not Gaussian - kurtosis and impulse rates are
// skewed and bounded below, a dropped segment or a knock is an outlier - and
// there are few of them (8 to 60 segments a side). Rank tests assume neither
// normality nor equal spreads and shrug off outliers.
//
//  - Mann-Whitney U (Wilcoxon rank-sum) test of two independent samples:
//    Mann & Whitney, Ann. Math. Statist. 18 (1947) 50-60. Exact null
//    distribution without ties (counted by the recurrence of the paper), the
//    normal approximation with tie and continuity corrections otherwise - the
//    choices scipy.stats.mannwhitneyu makes ("exact" / "asymptotic").
//  - Hodges-Lehmann shift: the median of all pairwise differences, with its
//    distribution-free confidence interval from the U distribution (Moses):
//    Hodges & Lehmann, Ann. Math. Statist. 34 (1963) 598-611.
//  - Cliff's delta, P(a > b) - P(a < b): an effect size on [-1, 1] that
//    needs no spread estimate; Cliff, Psychol. Bull. 114 (1993) 494-509.
//  - Theil-Sen slope, the median of pairwise slopes: Sen, JASA 63 (1968) 1379.
//  - Mann-Kendall trend test, S = sum of signs of later minus earlier values,
//    exact null distribution without ties (the inversion counts of a random
//    permutation), normal approximation with ties: Kendall, Rank Correlation
//    Methods (1975); the same S and p as scipy.stats.kendalltau against time.
#pragma once

#include <cstddef>
#include <span>
#include <vector>

namespace cavitas::models {

struct RankSumResult {
    double u = 0.0;         ///< U of the first sample: #(a > b) + #(a == b)/2
    double p_two_sided = 1.0;
    bool exact = false;     ///< exact null distribution (no ties, both n <= 50)
};
/// Throws std::invalid_argument when either sample is empty.
RankSumResult mann_whitney_u(std::span<const double> a, std::span<const double> b);

struct ShiftEstimate {
    double shift = 0.0;     ///< median of (b_j - a_i): how far b lies above a
    double ci_low = 0.0;    ///< distribution-free interval at `confidence`
    double ci_high = 0.0;
};
/// Hodges-Lehmann shift of b over a, with the Moses interval (normal
/// approximation of the U critical value). Throws when either sample is empty.
ShiftEstimate hodges_lehmann(std::span<const double> a, std::span<const double> b, double confidence = 0.95);

/// Cliff's delta of b over a: P(b > a) - P(b < a), in [-1, 1].
double cliffs_delta(std::span<const double> a, std::span<const double> b);

/// Theil-Sen slope of y against t (t in any unit; pairs with equal t skipped).
/// Throws when fewer than two distinct t.
double theil_sen_slope(std::span<const double> t, std::span<const double> y);

struct TrendTest {
    double s = 0.0;           ///< Mann-Kendall S
    double tau = 0.0;         ///< Kendall's tau-b against time
    double p_rising = 1.0;    ///< one-sided p of S this large or larger
    double p_two_sided = 1.0;
    bool exact = false;
};
/// Mann-Kendall test of y in the order of t. Throws when n < 2.
TrendTest mann_kendall(std::span<const double> t, std::span<const double> y);

/// Standard normal upper-tail probability and quantile (for the asymptotic forms).
double normal_sf(double z);
double normal_quantile(double p);

}  // namespace cavitas::models
