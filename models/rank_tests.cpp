#include "models/rank_tests.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>

#include "signal/stats.hpp"

namespace cavitas::models {

double normal_sf(double z) { return dsp::normal_sf(z); }

double normal_quantile(double p) {
    if (!(p > 0.0 && p < 1.0)) throw std::invalid_argument("normal_quantile needs 0 < p < 1");
    return dsp::normal_quantile(p);
}

namespace {

// P(U <= u) for every u = 0 .. n1 n2 under the null without ties: the number of
// arrangements with U = u satisfies c(u; n1, n2) = c(u - n2; n1 - 1, n2) + c(u; n1, n2 - 1)
// (Mann & Whitney 1947). Counts are kept as probabilities to avoid overflow.
std::vector<double> u_null_pmf(std::size_t n1, std::size_t n2) {
    // f[j][u] for the current i; built up over i = 0 .. n1.
    const std::size_t umax = n1 * n2;
    std::vector<std::vector<double>> f(n2 + 1, std::vector<double>(umax + 1, 0.0));
    for (std::size_t j = 0; j <= n2; ++j) f[j][0] = 1.0;  // i = 0: one arrangement, U = 0
    for (std::size_t i = 1; i <= n1; ++i) {
        std::vector<std::vector<double>> g(n2 + 1, std::vector<double>(umax + 1, 0.0));
        g[0][0] = 1.0;  // j = 0
        for (std::size_t j = 1; j <= n2; ++j) {
            // P_{i,j}(u) = i/(i+j) P_{i-1,j}(u - j) + j/(i+j) P_{i,j-1}(u)
            const double wi = static_cast<double>(i) / static_cast<double>(i + j);
            const double wj = static_cast<double>(j) / static_cast<double>(i + j);
            for (std::size_t u = 0; u <= i * j; ++u) {
                const double from_i = u >= j ? f[j][u - j] : 0.0;
                g[j][u] = wi * from_i + wj * g[j - 1][u];
            }
        }
        f.swap(g);
    }
    return f[n2];
}

bool has_ties(std::vector<double> v) {
    std::sort(v.begin(), v.end());
    return std::adjacent_find(v.begin(), v.end()) != v.end();
}

}  // namespace

RankSumResult mann_whitney_u(std::span<const double> a, std::span<const double> b) {
    if (a.empty() || b.empty()) throw std::invalid_argument("Mann-Whitney U needs two non-empty samples");
    const std::size_t n1 = a.size(), n2 = b.size();
    double u = 0.0;
    for (double x : a)
        for (double y : b) u += x > y ? 1.0 : (x == y ? 0.5 : 0.0);
    std::vector<double> all(a.begin(), a.end());
    all.insert(all.end(), b.begin(), b.end());
    RankSumResult r;
    r.u = u;
    const double nn = static_cast<double>(n1) * static_cast<double>(n2);
    if (!has_ties(all) && n1 <= 50 && n2 <= 50) {
        const std::vector<double> pmf = u_null_pmf(n1, n2);
        // Two-sided: twice the smaller tail at the larger of U and n1 n2 - U.
        const auto ubig = static_cast<std::size_t>(std::max(u, nn - u) + 0.5);
        double sf = 0.0;
        for (std::size_t k = ubig; k < pmf.size(); ++k) sf += pmf[k];
        r.p_two_sided = std::min(1.0, 2.0 * sf);
        r.exact = true;
        return r;
    }
    // Normal approximation with the tie correction of the variance and a
    // continuity correction of 0.5.
    std::sort(all.begin(), all.end());
    double tie_term = 0.0;
    for (std::size_t i = 0; i < all.size();) {
        std::size_t j = i;
        while (j < all.size() && all[j] == all[i]) ++j;
        const double t = static_cast<double>(j - i);
        tie_term += t * t * t - t;
        i = j;
    }
    const double n = static_cast<double>(n1 + n2);
    const double mean = nn / 2.0;
    const double var = nn / 12.0 * ((n + 1.0) - tie_term / (n * (n - 1.0)));
    if (!(var > 0.0)) {
        r.p_two_sided = 1.0;  // every value equal: no evidence of a shift
        return r;
    }
    const double z = (std::max(u, nn - u) - mean - 0.5) / std::sqrt(var);
    r.p_two_sided = std::min(1.0, 2.0 * normal_sf(z));
    return r;
}

ShiftEstimate hodges_lehmann(std::span<const double> a, std::span<const double> b, double confidence) {
    if (a.empty() || b.empty()) throw std::invalid_argument("a shift estimate needs two non-empty samples");
    std::vector<double> d;
    d.reserve(a.size() * b.size());
    for (double x : a)
        for (double y : b) d.push_back(y - x);
    std::sort(d.begin(), d.end());
    const std::size_t m = d.size();
    ShiftEstimate s;
    s.shift = m % 2 ? d[m / 2] : 0.5 * (d[m / 2 - 1] + d[m / 2]);
    // Moses: the interval runs from the k-th smallest to the k-th largest
    // difference, k = floor(n1 n2 / 2 - z sqrt(n1 n2 (n1 + n2 + 1) / 12)).
    const double n1 = static_cast<double>(a.size()), n2 = static_cast<double>(b.size());
    const double z = normal_quantile(0.5 + confidence / 2.0);
    const double kf = std::floor(n1 * n2 / 2.0 - z * std::sqrt(n1 * n2 * (n1 + n2 + 1.0) / 12.0));
    const std::size_t k = kf < 1.0 ? 1 : static_cast<std::size_t>(kf);
    s.ci_low = d[std::min(k, m) - 1];
    s.ci_high = d[m - std::min(k, m)];
    return s;
}

double cliffs_delta(std::span<const double> a, std::span<const double> b) {
    if (a.empty() || b.empty()) throw std::invalid_argument("Cliff's delta needs two non-empty samples");
    double more = 0.0, less = 0.0;
    for (double x : a)
        for (double y : b) {
            if (y > x) more += 1.0;
            else if (y < x) less += 1.0;
        }
    return (more - less) / (static_cast<double>(a.size()) * static_cast<double>(b.size()));
}

double theil_sen_slope(std::span<const double> t, std::span<const double> y) {
    if (t.size() != y.size()) throw std::invalid_argument("Theil-Sen: t and y differ in length");
    std::vector<double> slopes;
    for (std::size_t i = 0; i < t.size(); ++i)
        for (std::size_t j = i + 1; j < t.size(); ++j)
            if (t[j] != t[i]) slopes.push_back((y[j] - y[i]) / (t[j] - t[i]));
    if (slopes.empty()) throw std::invalid_argument("Theil-Sen needs at least two distinct times");
    std::sort(slopes.begin(), slopes.end());
    const std::size_t m = slopes.size();
    return m % 2 ? slopes[m / 2] : 0.5 * (slopes[m / 2 - 1] + slopes[m / 2]);
}

TrendTest mann_kendall(std::span<const double> t, std::span<const double> y) {
    if (t.size() != y.size()) throw std::invalid_argument("Mann-Kendall: t and y differ in length");
    const std::size_t n = t.size();
    if (n < 2) throw std::invalid_argument("Mann-Kendall needs at least two values");
    auto sign = [](double v) { return v > 0.0 ? 1.0 : (v < 0.0 ? -1.0 : 0.0); };
    double s = 0.0;
    for (std::size_t i = 0; i < n; ++i)
        for (std::size_t j = i + 1; j < n; ++j) s += sign(t[j] - t[i]) * sign(y[j] - y[i]);
    TrendTest r;
    r.s = s;
    // Tie groups of t and of y (Kendall's tau-b).
    // Per tie group of k equal values: k(k-1)/2, k(k-1)(k-2), k(k-1)(2k+5).
    auto tie_sums = [](std::vector<double> v, double& pairs, double& cubic, double& var_term) {
        std::sort(v.begin(), v.end());
        pairs = cubic = var_term = 0.0;
        for (std::size_t i = 0; i < v.size();) {
            std::size_t j = i;
            while (j < v.size() && v[j] == v[i]) ++j;
            const double k = static_cast<double>(j - i);
            pairs += k * (k - 1.0) / 2.0;
            cubic += k * (k - 1.0) * (k - 2.0);
            var_term += k * (k - 1.0) * (2.0 * k + 5.0);
            i = j;
        }
    };
    double tp, tc, tv, yp, yc, yv;
    tie_sums(std::vector<double>(t.begin(), t.end()), tp, tc, tv);
    tie_sums(std::vector<double>(y.begin(), y.end()), yp, yc, yv);
    const double nd = static_cast<double>(n);
    const double n0 = nd * (nd - 1.0) / 2.0;
    r.tau = (n0 - tp) > 0.0 && (n0 - yp) > 0.0 ? s / std::sqrt((n0 - tp) * (n0 - yp)) : 0.0;
    if (tp == 0.0 && yp == 0.0 && n <= 60) {
        // Exact: S = n0 - 2 I, I the inversions of a random permutation; the
        // counts of permutations by inversions (Mahonian numbers) as probabilities.
        std::vector<double> pmf{1.0};
        for (std::size_t k = 2; k <= n; ++k) {
            std::vector<double> next(pmf.size() + k - 1, 0.0);
            for (std::size_t i = 0; i < pmf.size(); ++i)
                for (std::size_t j = 0; j < k; ++j) next[i + j] += pmf[i] / static_cast<double>(k);
            pmf.swap(next);
        }
        const auto inv = static_cast<std::size_t>(std::llround((n0 - s) / 2.0));
        double le = 0.0;  // P(I <= inv) = P(S >= s)
        for (std::size_t i = 0; i <= inv && i < pmf.size(); ++i) le += pmf[i];
        double ge = 0.0;  // P(I >= inv) = P(S <= s)
        for (std::size_t i = inv; i < pmf.size(); ++i) ge += pmf[i];
        r.p_rising = std::min(1.0, le);
        r.p_two_sided = std::min(1.0, 2.0 * std::min(le, ge));
        r.exact = true;
        return r;
    }
    // Normal approximation with ties (Kendall 1975, the variance of S with ties in both).
    const double m = nd * (nd - 1.0);
    double var = (m * (2.0 * nd + 5.0) - tv - yv) / 18.0 + 2.0 * tp * yp / m;
    if (n > 2) var += tc * yc / (9.0 * m * (nd - 2.0));
    if (!(var > 0.0)) return r;
    const double z = s / std::sqrt(var);
    r.p_rising = normal_sf(z);
    r.p_two_sided = std::min(1.0, 2.0 * normal_sf(std::abs(z)));
    return r;
}

}  // namespace cavitas::models
