// Calibration of confidences: how far a stated confidence can be taken at its
// word, and two ways of mapping raw scores to probabilities.
//
//  - Reliability diagram, expected and maximum calibration error (ECE, MCE) in
//    equal-width bins: Guo, Pleiss, Sun & Weinberger, "On Calibration of Modern
//    Neural Networks", ICML 2017, arXiv:1706.04599. The Brier score
//    (mean squared error of the probability): Brier, Mon. Weather Rev. 78 (1950) 1-3.
//  - Platt scaling, p = 1 / (1 + exp(a s + b)), fitted to smoothed targets:
//    Platt, "Probabilistic outputs for support vector machines", in Advances in
//    Large Margin Classifiers (1999); the Newton iteration with a ridge and a
//    backtracking line search follows Lin, Lin & Weng, "A note on Platt's
//    probabilistic outputs for support vector machines", Mach. Learn. 68 (2007)
//    267-276. scikit-learn's `_sigmoid_calibration` uses the same targets.
//  - Isotonic regression by pool-adjacent-violators: Ayer, Brunk, Ewing, Reid &
//    Silverman, Ann. Math. Statist. 26 (1955) 641-647; Barlow, Bartholomew,
//    Bremner & Brunk, Statistical Inference under Order Restrictions (1972).
//
// (Guo et al. as given in the project's methods review; the other volumes and
// pages from memory.)
//
// Why here: the classifier states a confidence with each verdict; these tools
// measure whether a stated 0.8 is right about 80 % of the time on labelled
// recordings, and map scores to probabilities when it is not.
#pragma once

#include <cstddef>
#include <span>
#include <utility>
#include <vector>

namespace cavitas::models {

struct ReliabilityBin {
    double low = 0.0;              ///< lower edge b/B (inclusive)
    double high = 0.0;             ///< upper edge (b+1)/B (exclusive, except 1.0 in the last bin)
    std::size_t count = 0;         ///< predictions in the bin
    double mean_confidence = 0.0;  ///< mean stated confidence in the bin; NaN when the bin is empty
    double accuracy = 0.0;         ///< share of the bin's predictions that were correct; NaN when empty
};

struct CalibrationReport {
    std::vector<ReliabilityBin> bins;
    double ece = 0.0;    ///< sum over bins of (n_b / N) |accuracy_b - confidence_b|
    double mce = 0.0;    ///< largest |accuracy_b - confidence_b| over non-empty bins
    double brier = 0.0;  ///< mean of (confidence - correct)^2
    std::size_t n = 0;   ///< number of predictions
};

/// Reliability table, ECE, MCE and Brier score of stated confidences in [0, 1]
/// against outcomes (`correct` 1 when the prediction was right, 0 when wrong),
/// in `bins` equal-width bins over [0, 1].
///
/// Edges: bin b holds [b/B, (b+1)/B), the edges being the doubles b/B, and the
/// last bin also holds 1.0 - numpy.digitize's default (right=False) with the top
/// value folded into the last bin. A (lo, hi] convention would put 0.8 into
/// (0.6, 0.8] with 5 bins; here it is in [0.8, 1.0].
///
/// Throws std::invalid_argument when the spans differ in length or are empty,
/// `bins` is 0, a confidence is not finite or outside [0, 1], or a `correct`
/// value is neither 0 nor 1.
CalibrationReport reliability(std::span<const double> confidence, std::span<const int> correct,
                              std::size_t bins = 10);

/// p = 1 / (1 + exp(a * score + b)): Platt's sign convention, so a < 0 when a
/// higher score means "more likely positive".
struct PlattScaling {
    double a = 0.0;
    double b = 0.0;
    double operator()(double score) const;
};

/// Platt's smoothed targets {t_pos, t_neg} = {(N+ + 1)/(N+ + 2), 1/(N- + 2)}
/// (Laplace's rule of succession, as Platt 1999 derives them): they keep the fit
/// finite when the classes are separable and temper small samples.
std::pair<double, double> platt_targets(std::size_t n_pos, std::size_t n_neg);

/// Fits a and b by minimising the cross-entropy of p(score_i) against the
/// smoothed targets (positive[i] 1 -> t_pos, 0 -> t_neg): Newton's method on
/// (a, b) with the 2x2 Hessian plus a 1e-12 ridge solved by Eigen, an Armijo
/// step-halving line search; stops when the gradient of the summed loss has norm
/// < 1e-10, after 100 iterations, or when no step down is found (the minimum
/// reached to rounding). One class only is allowed: the fit is then a = 0 and
/// p = that class's target everywhere.
///
/// Throws std::invalid_argument when the spans differ in length or are empty, a
/// score is not finite, or a `positive` value is neither 0 nor 1.
PlattScaling fit_platt(std::span<const double> score, std::span<const int> positive);

/// Pool-adjacent-violators: the non-decreasing sequence f minimising
/// sum w_i (y_i - f_i)^2 (all weights 1 when `weight` is empty). Returns one
/// value per input; an empty y gives an empty result.
///
/// Throws std::invalid_argument when `weight` is neither empty nor as long as
/// y, a y is not finite, or a weight is not finite and positive.
std::vector<double> pav(std::span<const double> y, std::span<const double> weight = {});

}  // namespace cavitas::models
