#include "models/calibration.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <stdexcept>
#include <string>

#include <Eigen/Dense>

namespace cavitas::models {

namespace {

void check_labels(std::span<const int> labels, const char* what) {
    for (std::size_t i = 0; i < labels.size(); ++i)
        if (labels[i] != 0 && labels[i] != 1)
            throw std::invalid_argument(std::string(what) + "[" + std::to_string(i) + "] is " +
                                        std::to_string(labels[i]) + ", not 0 or 1");
}

// Bin of a confidence in [0, 1] with edges the doubles k/B: [k/B, (k+1)/B), 1.0 in
// the last bin. floor(c B) can land one bin off next to an edge (c B is rounded),
// so the guess is moved until the edges, computed the same way as the reported
// ones, bracket c.
std::size_t bin_of(double c, std::size_t bins) {
    const double nb = static_cast<double>(bins);
    const auto edge = [nb](std::size_t k) { return static_cast<double>(k) / nb; };
    std::size_t k = static_cast<std::size_t>(std::floor(c * nb));
    if (k > bins - 1) k = bins - 1;
    while (k > 0 && c < edge(k)) --k;
    while (k + 1 < bins && c >= edge(k + 1)) ++k;
    return k;
}

// p = 1/(1 + e^f) and q = 1 - p, each computed without cancellation and with
// e raised to a non-positive power only (no overflow for any f).
struct Sigmoid {
    double p, q;
};
Sigmoid platt_sigmoid(double f) {
    if (f >= 0.0) {
        const double e = std::exp(-f);
        return {e / (1.0 + e), 1.0 / (1.0 + e)};
    }
    const double e = std::exp(f);
    return {1.0 / (1.0 + e), e / (1.0 + e)};
}

}  // namespace

CalibrationReport reliability(std::span<const double> confidence, std::span<const int> correct, std::size_t bins) {
    if (confidence.size() != correct.size())
        throw std::invalid_argument("reliability: " + std::to_string(confidence.size()) + " confidences but " +
                                    std::to_string(correct.size()) + " outcomes");
    if (confidence.empty()) throw std::invalid_argument("reliability: no predictions");
    if (bins == 0) throw std::invalid_argument("reliability: the number of bins must be at least 1");
    for (std::size_t i = 0; i < confidence.size(); ++i)
        if (!std::isfinite(confidence[i]) || confidence[i] < 0.0 || confidence[i] > 1.0)
            throw std::invalid_argument("reliability: confidence[" + std::to_string(i) + "] = " +
                                        std::to_string(confidence[i]) + " is not a probability in [0, 1]");
    check_labels(correct, "reliability: correct");

    CalibrationReport r;
    r.n = confidence.size();
    const double nb = static_cast<double>(bins);
    std::vector<double> sum_conf(bins, 0.0), sum_correct(bins, 0.0);
    r.bins.resize(bins);
    for (std::size_t b = 0; b < bins; ++b) {
        r.bins[b].low = static_cast<double>(b) / nb;
        r.bins[b].high = static_cast<double>(b + 1) / nb;
    }
    double sq = 0.0;
    for (std::size_t i = 0; i < r.n; ++i) {
        const std::size_t b = bin_of(confidence[i], bins);
        ++r.bins[b].count;
        sum_conf[b] += confidence[i];
        sum_correct[b] += correct[i];
        const double miss = confidence[i] - correct[i];
        sq += miss * miss;
    }
    const double n = static_cast<double>(r.n);
    r.brier = sq / n;
    for (std::size_t b = 0; b < bins; ++b) {
        ReliabilityBin& bin = r.bins[b];
        if (bin.count == 0) {
            // An empty bin has no mean: NaN rather than 0, so that a reliability
            // diagram cannot draw a point that was never observed (our choice).
            bin.mean_confidence = std::numeric_limits<double>::quiet_NaN();
            bin.accuracy = std::numeric_limits<double>::quiet_NaN();
            continue;
        }
        const double nbin = static_cast<double>(bin.count);
        bin.mean_confidence = sum_conf[b] / nbin;
        bin.accuracy = sum_correct[b] / nbin;
        const double gap = std::abs(bin.accuracy - bin.mean_confidence);
        r.ece += nbin / n * gap;  // Guo et al. 2017
        if (gap > r.mce) r.mce = gap;
    }
    return r;
}

double PlattScaling::operator()(double score) const { return platt_sigmoid(a * score + b).p; }

std::pair<double, double> platt_targets(std::size_t n_pos, std::size_t n_neg) {
    return {(static_cast<double>(n_pos) + 1.0) / (static_cast<double>(n_pos) + 2.0),
            1.0 / (static_cast<double>(n_neg) + 2.0)};
}

PlattScaling fit_platt(std::span<const double> score, std::span<const int> positive) {
    if (score.size() != positive.size())
        throw std::invalid_argument("fit_platt: " + std::to_string(score.size()) + " scores but " +
                                    std::to_string(positive.size()) + " labels");
    if (score.empty()) throw std::invalid_argument("fit_platt: no scores");
    for (std::size_t i = 0; i < score.size(); ++i)
        if (!std::isfinite(score[i]))
            throw std::invalid_argument("fit_platt: score[" + std::to_string(i) + "] is not finite");
    check_labels(positive, "fit_platt: positive");

    std::size_t n_pos = 0;
    for (int p : positive) n_pos += static_cast<std::size_t>(p);
    const std::size_t n_neg = positive.size() - n_pos;
    // Plain names, not a structured binding: clang 14 cannot capture one in a lambda.
    const std::pair<double, double> targets = platt_targets(n_pos, n_neg);
    const double t_pos = targets.first, t_neg = targets.second;
    const auto target = [&](std::size_t i) { return positive[i] ? t_pos : t_neg; };

    // The line search compares losses that differ by ~|g|^2 / (Hessian) near the
    // minimum, far below the rounding of a loss summed over thousands of terms
    // (tried: with the summed loss itself every step was refused from |g| ~ 3e-4
    // on 33 000 scores). So the change of the loss is summed term by term, each
    // term being O(step) and computed without cancellation; the sum then resolves
    // down to roughly |g| ~ N x 2.2e-16.
    // Per term, with L(f) = log(1 + e^f) - (1 - t) f, the cross-entropy of
    // p = 1/(1 + e^f) against target t, and d the change of f:
    //   L(f + d) - L(f) = log(1 + e^(f + d)) - log(1 + e^f) - (1 - t) d
    //                   = log1p(q expm1(d)) - (1 - t) d,  q = 1 - p = e^f / (1 + e^f).
    // For |d| >= 1 the two softplus values are subtracted directly (no cancellation
    // worth the name, and expm1 could overflow).
    const auto softplus = [](double x) { return std::max(x, 0.0) + std::log1p(std::exp(-std::abs(x))); };
    const auto loss_change = [&](double a, double b, double da, double db) {
        double sum = 0.0;
        for (std::size_t i = 0; i < score.size(); ++i) {
            const double f = a * score[i] + b;
            const double d = da * score[i] + db;
            const double q = platt_sigmoid(f).q;
            const double rise = std::abs(d) < 1.0 ? std::log1p(q * std::expm1(d)) : softplus(f + d) - softplus(f);
            sum += rise - (1.0 - target(i)) * d;
        }
        return sum;
    };

    // Settings of Lin, Lin & Weng 2007 (from memory): start at a = 0 with b giving the class
    // prior (smoothed), a 1e-12 ridge on the Hessian (all scores equal make it
    // singular; p(1 - p) underflows when the classes are far apart), steps halved
    // down to 1e-10, Armijo constant 1e-4. The gradient tolerance 1e-10 and the
    // 100 iterations: our choice (Newton converges quadratically here; a few
    // iterations are typical).
    constexpr double kRidge = 1e-12;
    constexpr double kMinStep = 1e-10;
    constexpr double kArmijo = 1e-4;
    constexpr double kGradTol = 1e-10;
    constexpr int kMaxIter = 100;

    PlattScaling m;
    m.a = 0.0;
    m.b = std::log((static_cast<double>(n_neg) + 1.0) / (static_cast<double>(n_pos) + 1.0));
    for (int iter = 0; iter < kMaxIter; ++iter) {
        // dL/df = t - p and d2L/df2 = p (1 - p), so with x = (s, 1):
        // gradient sum (t - p) x, Hessian sum p (1 - p) x x^T.
        Eigen::Vector2d g = Eigen::Vector2d::Zero();
        Eigen::Matrix2d h = Eigen::Matrix2d::Zero();
        for (std::size_t i = 0; i < score.size(); ++i) {
            const double s = score[i];
            const Sigmoid sg = platt_sigmoid(m.a * s + m.b);
            const double d1 = target(i) - sg.p;
            const double d2 = sg.p * sg.q;
            g(0) += d1 * s;
            g(1) += d1;
            h(0, 0) += d2 * s * s;
            h(0, 1) += d2 * s;
            h(1, 1) += d2;
        }
        if (g.norm() < kGradTol) break;
        h(1, 0) = h(0, 1);
        h.diagonal().array() += kRidge;
        const Eigen::Vector2d step = h.ldlt().solve(-g);
        const double slope = g.dot(step);  // directional derivative, < 0 for a descent step
        if (!(slope < 0.0)) break;
        bool moved = false;
        for (double t = 1.0; t >= kMinStep; t *= 0.5) {
            if (loss_change(m.a, m.b, t * step(0), t * step(1)) <= kArmijo * t * slope) {
                m.a += t * step(0);
                m.b += t * step(1);
                moved = true;
                break;
            }
        }
        if (!moved) break;  // no step lowers the loss: the minimum to rounding
    }
    return m;
}

std::vector<double> pav(std::span<const double> y, std::span<const double> weight) {
    if (!weight.empty() && weight.size() != y.size())
        throw std::invalid_argument("pav: " + std::to_string(y.size()) + " values but " +
                                    std::to_string(weight.size()) + " weights");
    for (std::size_t i = 0; i < y.size(); ++i) {
        if (!std::isfinite(y[i])) throw std::invalid_argument("pav: y[" + std::to_string(i) + "] is not finite");
        if (!weight.empty() && !(std::isfinite(weight[i]) && weight[i] > 0.0))
            throw std::invalid_argument("pav: weight[" + std::to_string(i) + "] = " + std::to_string(weight[i]) +
                                        " is not finite and positive");
    }
    // Blocks of pooled values on a stack, each kept as its weighted sum and total
    // weight (so that pooling adds exactly what it pools); a new value pools with
    // the block before it while that block's mean is higher.
    struct Block {
        double sum_wy, sum_w;
        std::size_t len;
        double mean() const { return sum_wy / sum_w; }
    };
    std::vector<Block> stack;
    stack.reserve(y.size());
    for (std::size_t i = 0; i < y.size(); ++i) {
        const double w = weight.empty() ? 1.0 : weight[i];
        stack.push_back({w * y[i], w, 1});
        while (stack.size() > 1 && stack[stack.size() - 2].mean() > stack.back().mean()) {
            const Block top = stack.back();
            stack.pop_back();
            stack.back().sum_wy += top.sum_wy;
            stack.back().sum_w += top.sum_w;
            stack.back().len += top.len;
        }
    }
    std::vector<double> fit;
    fit.reserve(y.size());
    for (const Block& blk : stack) fit.insert(fit.end(), blk.len, blk.mean());
    return fit;
}

}  // namespace cavitas::models
