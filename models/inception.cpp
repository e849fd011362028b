#include "models/inception.hpp"

#include <Eigen/Dense>

#include <algorithm>
#include <cmath>
#include <random>
#include <stdexcept>

#include "models/analyzer.hpp"
#include "models/text.hpp"

namespace cavitas::models {

double npsha_at_speed_m(double npsha_m, double rpm, double reference_rpm, double exponent) {
    return npsha_m * std::pow(reference_rpm / rpm, exponent);
}

double level_shift_db(double rpm, double reference_rpm, double level_exponent) {
    return -20.0 * level_exponent * std::log10(rpm / reference_rpm);
}

const char* to_string(Located l) {
    switch (l) {
        case Located::fitted: return "fitted";
        case Located::between_steps: return "between_steps";
        case Located::not_found: return "not_found";
    }
    return "not_found";
}

namespace {

struct Points {
    std::span<const double> x, y, w;
    double weight(std::size_t i) const { return w.empty() ? 1.0 : w[i]; }
};

// a and b by weighted least squares at knee k (Eigen, the 2 x 2 normal equations); its residual sum of squares.
HingeFit fit_at(const Points& p, double k) {
    Eigen::Matrix2d m = Eigen::Matrix2d::Zero();
    Eigen::Vector2d v = Eigen::Vector2d::Zero();
    bool risen = false;
    for (std::size_t i = 0; i < p.x.size(); ++i) {
        const double h = std::max(0.0, k - p.x[i]), w = p.weight(i);
        risen = risen || h > 0.0;
        m(0, 0) += w;
        m(0, 1) += w * h;
        m(1, 1) += w * h * h;
        v(0) += w * p.y[i];
        v(1) += w * h * p.y[i];
    }
    m(1, 0) = m(0, 1);
    HingeFit f;
    f.knee_m = k;
    if (!risen) {
        f.plateau_db = v(0) / m(0, 0);
    } else {
        const Eigen::Vector2d ab = m.ldlt().solve(v);
        f.plateau_db = ab(0);
        f.slope_db_per_m = ab(1);
    }
    for (std::size_t i = 0; i < p.x.size(); ++i) {
        const double r = p.y[i] - f.plateau_db - f.slope_db_per_m * std::max(0.0, k - p.x[i]);
        f.rss += p.weight(i) * r * r;
    }
    return f;
}

bool better(const HingeFit& a, const HingeFit& b) { return a.rss < b.rss - 1e-12 * (1.0 + b.rss); }

// Golden-section search of the knee in [lo, hi], started from the best grid point.
HingeFit refine(const Points& p, double lo, double hi, HingeFit best) {
    constexpr double kInvPhi = 0.6180339887498949;
    double a = lo, b = hi;
    double c = b - kInvPhi * (b - a), d = a + kInvPhi * (b - a);
    HingeFit fc = fit_at(p, c), fd = fit_at(p, d);
    for (int i = 0; i < 48 && b - a > 1e-9; ++i) {
        if (fc.rss <= fd.rss) {
            b = d, d = c, fd = fc;
            c = b - kInvPhi * (b - a);
            fc = fit_at(p, c);
        } else {
            a = c, c = d, fc = fd;
            d = a + kInvPhi * (b - a);
            fd = fit_at(p, d);
        }
    }
    const HingeFit& found = fc.rss <= fd.rss ? fc : fd;
    return better(found, best) ? found : best;
}

}  // namespace

HingeFit fit_hinge(std::span<const double> x_m, std::span<const double> y_db, std::span<const double> weight,
                   double k_low_m, double k_high_m, double knee_step_m) {
    if (x_m.size() != y_db.size() || (!weight.empty() && weight.size() != x_m.size()))
        throw std::invalid_argument("hinge fit: x, y and weights differ in length");
    if (!(k_low_m <= k_high_m) || !(knee_step_m > 0.0)) throw std::invalid_argument("hinge fit: empty knee range");
    const auto [lo_x, hi_x] = std::minmax_element(x_m.begin(), x_m.end());
    if (x_m.empty() || *lo_x == *hi_x) throw std::invalid_argument("hinge fit: fewer than two distinct NPSHa values");
    const Points p{x_m, y_db, weight};
    const auto n = static_cast<std::size_t>(std::max(1.0, std::ceil((k_high_m - k_low_m) / knee_step_m)));
    std::vector<double> knees;
    for (std::size_t i = 0; i <= n; ++i)
        knees.push_back(k_low_m + (k_high_m - k_low_m) * static_cast<double>(i) / static_cast<double>(n));
    for (double x : x_m)
        if (x >= k_low_m && x <= k_high_m) knees.push_back(x);  // the knots: a knee exactly at a step
    HingeFit best = fit_at(p, knees.front());
    for (double k : knees) {
        const HingeFit f = fit_at(p, k);
        if (better(f, best)) best = f;
    }
    const double cell = (k_high_m - k_low_m) / static_cast<double>(n);
    return refine(p, std::max(k_low_m, best.knee_m - cell), std::min(k_high_m, best.knee_m + cell), best);
}

Npsh3Reading npsh3_by_head_drop(std::span<const double> npsha_m, std::span<const double> head_m,
                                double reference_head_m, double drop) {
    if (npsha_m.size() != head_m.size() || npsha_m.empty())
        throw std::invalid_argument("NPSH3: NPSHa and head differ in length or are empty");
    Npsh3Reading r;
    r.reference_head_m = reference_head_m;
    r.target_head_m = (1.0 - drop) * reference_head_m;
    for (std::size_t i = 0; i < head_m.size(); ++i) {
        if (head_m[i] > r.target_head_m) continue;
        if (i == 0) {
            r.reason = fmt("the head at the highest NPSHa tested (%.2f m at %.2f m) is already %.0f %% below the "
                           "reference %.2f m", head_m[0], npsha_m[0], 100.0 * drop, reference_head_m);
            return r;
        }
        const double t = (r.target_head_m - head_m[i - 1]) / (head_m[i] - head_m[i - 1]);
        r.npsh3_m = npsha_m[i - 1] + t * (npsha_m[i] - npsha_m[i - 1]);
        return r;
    }
    const double low = head_m.back();
    r.reason = fmt("the head never fell by %.0f %%: %.2f m at the lowest NPSHa tested (%.2f m), %.1f %% under the "
                   "reference %.2f m; NPSH3 lies below the range tested",
                   100.0 * drop, low, npsha_m.back(), 100.0 * (1.0 - low / reference_head_m), reference_head_m);
    return r;
}

namespace {

void check_steps(const std::vector<SweepStep>& steps, std::optional<double> at_rpm) {
    if (steps.size() < 3) throw std::invalid_argument(fmt("a sweep needs at least 3 NPSHa steps, got %zu", steps.size()));
    if (at_rpm && !(*at_rpm > 0.0)) throw std::invalid_argument("the reference speed must be above 0 rpm");
    for (std::size_t s = 0; s < steps.size(); ++s) {
        const SweepStep& st = steps[s];
        if (!std::isfinite(st.npsha_m) || !(st.rpm > 0.0) || !std::isfinite(st.rpm))
            throw std::invalid_argument(fmt("step %zu: NPSHa and speed must be finite, speed above 0", s + 1));
        if (st.hf_level_db.empty()) throw std::invalid_argument(fmt("step %zu has no recording", s + 1));
        for (const auto& rec : st.hf_level_db) {
            if (rec.empty()) throw std::invalid_argument(fmt("step %zu: a recording without segments", s + 1));
            for (double v : rec)
                if (!std::isfinite(v)) throw std::invalid_argument(fmt("step %zu: a level that is not finite", s + 1));
        }
    }
}

SpeedScaling choose_scaling(const std::vector<SweepStep>& steps, const InceptionConfig& c, std::optional<double> at_rpm) {
    SpeedScaling s;
    s.reference_rpm = at_rpm ? *at_rpm : steps.front().rpm;
    s.applied = at_rpm.has_value();
    for (const auto& st : steps) s.applied = s.applied || std::abs(st.rpm / s.reference_rpm - 1.0) > c.speed_tolerance;
    return s;
}

// The step's segment levels, all recordings together, shifted to the reference speed.
std::vector<double> step_levels(const SweepStep& st, double shift_db) {
    std::vector<double> v;
    for (const auto& rec : st.hf_level_db)
        for (double x : rec) v.push_back(x + shift_db);
    return v;
}

double mean(const std::vector<double>& v) {
    double s = 0.0;
    for (double x : v) s += x;
    return s / static_cast<double>(v.size());
}

// Draws an index in [0, n) from the top 53 bits of one draw (the same on every standard library).
std::size_t draw_index(std::mt19937_64& rng, std::size_t n) {
    const double u = static_cast<double>(rng() >> 11) * 0x1.0p-53;
    return std::min(n - 1, static_cast<std::size_t>(u * static_cast<double>(n)));
}

struct Replicate {
    double knee_m = 0.0, rise_db = 0.0;
};

// One resample: recordings within each fitted step, segments within each recording, with replacement.
Replicate resample_fit(const std::vector<SweepStep>& steps, const std::vector<StepReading>& read, std::size_t fitted,
                       std::mt19937_64& rng, const InceptionConfig& c) {
    // read[s].step: the step given that is s-th in falling NPSHa.
    std::vector<double> x(fitted), y(fitted), w(fitted);
    for (std::size_t s = 0; s < fitted; ++s) {
        const auto& recs = steps[read[s].step].hf_level_db;
        double sum = 0.0, count = 0.0;
        for (std::size_t j = 0; j < recs.size(); ++j) {
            const auto& rec = recs[draw_index(rng, recs.size())];
            for (std::size_t i = 0; i < rec.size(); ++i) sum += rec[draw_index(rng, rec.size())];
            count += static_cast<double>(rec.size());
        }
        x[s] = read[s].npsha_scaled_m;
        y[s] = sum / count + read[s].level_shift_db;
        w[s] = count;
    }
    const HingeFit f = fit_hinge(x, y, w, x[fitted - 1], x[0], c.knee_step_m);
    return {f.knee_m, f.slope_db_per_m * (f.knee_m - x[fitted - 1])};
}

std::string at_speed(const SpeedScaling& s) {
    return s.applied ? fmt(" at %.0f rpm", s.reference_rpm) : std::string();
}

void read_npsh3(InceptionResult& r) {
    std::vector<double> x, h, plateau;
    const double knee = r.fit ? r.fit->knee_m : r.steps.front().npsha_scaled_m;
    for (const auto& st : r.steps) {
        if (!st.head_scaled_m) continue;
        x.push_back(st.npsha_scaled_m);
        h.push_back(*st.head_scaled_m);
        if (st.npsha_scaled_m >= knee - 1e-9) plateau.push_back(*st.head_scaled_m);
    }
    if (h.empty()) {
        r.npsh3.reason = "no head was given (a head column in the sweep gives NPSH3)";
        return;
    }
    if (plateau.empty()) {
        r.npsh3.reason = "no head was given at the quiet steps above the knee, so there is no reference head";
        return;
    }
    r.npsh3 = npsh3_by_head_drop(x, h, median(plateau));
}

void decide(InceptionResult& r, const std::vector<double>& knees, std::size_t fitted, const InceptionConfig& c) {
    const HingeFit& f = *r.fit;
    const double x_min = r.steps[fitted - 1].npsha_scaled_m;
    const bool risen = r.rise_db >= c.rise_threshold_db, clear = r.clear_share >= c.clear_share;
    if (!risen) {
        r.reason = fmt("no rise of %.0f dB over the plateau down to %.2f m%s (the fitted rise there is %.1f dB): "
                       "inception, if any, lies below the range tested",
                       c.rise_threshold_db, x_min, at_speed(r.scaling).c_str(), r.rise_db);
        return;
    }
    if (!clear) {
        r.reason = fmt("a fitted rise of %.1f dB at %.2f m%s, but only %.0f %% of %zu resampled sweeps reach %.0f dB "
                       "(%.0f %% needed): the levels scatter too much to place inception; record longer, or more "
                       "recordings a step",
                       r.rise_db, x_min, at_speed(r.scaling).c_str(), 100.0 * r.clear_share, r.replicates,
                       c.rise_threshold_db, 100.0 * c.clear_share);
        return;
    }
    std::size_t below = 0;
    for (std::size_t s = 0; s < fitted; ++s) below += r.steps[s].npsha_scaled_m < f.knee_m - 1e-9 ? 1 : 0;
    const double q_lo = quantile(knees, 0.025), q_hi = quantile(knees, 0.975);
    if (below <= 1) {
        const double lo = x_min, hi = r.steps[fitted - 2].npsha_scaled_m;
        r.located = Located::between_steps;
        r.bracket_m = std::pair{lo, hi};
        r.npshi_m = 0.5 * (lo + hi);
        r.interval_m = std::pair{std::min(lo, q_lo), std::max(hi, q_hi)};
    } else {
        r.located = Located::fitted;
        r.npshi_m = f.knee_m;
        r.interval_m = std::pair{q_lo, q_hi};
    }
}

}  // namespace

const std::vector<std::string>& inception_cautions() {
    static const std::vector<std::string> c = {
        "A sweep lowers the suction pressure on purpose: the pump is driven into cavitation, which erodes impellers "
        "and wear rings. Run it only as the pump maker's test procedure allows, keep each low step short, and stop "
        "at unusual noise, vibration, or a head falling further than the test asks for.",
        "Follow the practice of ISO 9906 and ANSI/HI 14.6 for NPSH tests and your site's procedures (permits, who "
        "may throttle the suction, minimum flow, seal and bearing limits).",
        "Before any inspection, isolate the machine, lock out and tag out its drive, and relieve and drain the "
        "casing as your site procedure requires.",
        "NPSHi read from vibration belongs to this machine at this flow, speed and liquid temperature; it supports, "
        "and does not replace, the manufacturer's NPSH data and the judgement of qualified staff. Local codes, the "
        "manufacturer's instructions and licensed practice take precedence.",
    };
    return c;
}

InceptionResult find_inception(const std::vector<SweepStep>& steps, const InceptionConfig& c, std::optional<double> at_rpm) {
    check_steps(steps, at_rpm);
    InceptionResult r;
    r.scaling = choose_scaling(steps, c, at_rpm);
    std::vector<StepReading> read;
    std::vector<double> step_means;
    for (std::size_t i = 0; i < steps.size(); ++i) {
        const SweepStep& st = steps[i];
        StepReading sr;
        const SpeedScaling& sc = r.scaling;
        sr.step = i;
        sr.npsha_scaled_m = sc.applied ? npsha_at_speed_m(st.npsha_m, st.rpm, sc.reference_rpm, sc.npsh_exponent) : st.npsha_m;
        sr.level_shift_db = sc.applied ? level_shift_db(st.rpm, sc.reference_rpm, sc.level_exponent) : 0.0;
        if (st.head_m) sr.head_scaled_m = sc.applied ? *st.head_m * std::pow(sc.reference_rpm / st.rpm, 2.0) : *st.head_m;
        const std::vector<double> v = step_levels(st, sr.level_shift_db);
        sr.hf_level_db = median(v);
        sr.hf_low_db = quantile(v, 0.1);
        sr.hf_high_db = quantile(v, 0.9);
        sr.segments = v.size();
        step_means.push_back(mean(v));
        read.push_back(sr);
    }
    std::stable_sort(read.begin(), read.end(),
                     [](const StepReading& a, const StepReading& b) { return a.npsha_scaled_m > b.npsha_scaled_m; });
    std::vector<double> means;
    for (const auto& sr : read) means.push_back(step_means[sr.step]);
    r.steps = std::move(read);
    for (std::size_t s = 1; s < r.steps.size(); ++s)
        if (!(r.steps[s].npsha_scaled_m < r.steps[s - 1].npsha_scaled_m))
            throw std::invalid_argument(fmt("steps %zu and %zu have the same NPSHa (%.3f m%s)", r.steps[s - 1].step + 1,
                                            r.steps[s].step + 1, r.steps[s].npsha_scaled_m, at_speed(r.scaling).c_str()));
    std::size_t peak = 0;
    for (std::size_t s = 1; s < r.steps.size(); ++s)
        if (r.steps[s].hf_level_db > r.steps[peak].hf_level_db) peak = s;
    const std::size_t fitted = peak + 1;
    for (std::size_t s = 0; s < r.steps.size(); ++s) {
        r.steps[s].fitted = s < fitted;
        r.steps[s].past_peak = s >= fitted;
    }
    if (fitted < 2) {
        for (auto& st : r.steps) st.hf_rise_db = st.hf_level_db - r.steps.front().hf_level_db;
        r.reason = fmt("the HF level is highest at the highest NPSHa tested (%.2f m%s) and does not rise as the "
                       "suction pressure falls: no inception within the range tested",
                       r.steps.front().npsha_scaled_m, at_speed(r.scaling).c_str());
        read_npsh3(r);
        return r;
    }
    std::vector<double> x, y, w;
    for (std::size_t s = 0; s < fitted; ++s) {
        x.push_back(r.steps[s].npsha_scaled_m);
        y.push_back(means[s]);
        w.push_back(static_cast<double>(r.steps[s].segments));
    }
    r.fit = fit_hinge(x, y, w, x.back(), x.front(), c.knee_step_m);
    r.rise_db = r.fit->slope_db_per_m * (r.fit->knee_m - x.back());
    for (auto& st : r.steps) st.hf_rise_db = st.hf_level_db - r.fit->plateau_db;
    std::mt19937_64 rng(c.seed);
    std::vector<double> knees;
    std::size_t clear = 0;
    for (std::size_t i = 0; i < c.replicates; ++i) {
        const Replicate rep = resample_fit(steps, r.steps, fitted, rng, c);
        knees.push_back(rep.knee_m);
        clear += rep.rise_db >= c.rise_threshold_db ? 1 : 0;
    }
    r.replicates = c.replicates;
    r.clear_share = c.replicates ? static_cast<double>(clear) / static_cast<double>(c.replicates) : 0.0;
    if (knees.empty()) knees.push_back(r.fit->knee_m);
    decide(r, knees, fitted, c);
    read_npsh3(r);
    return r;
}

}  // namespace cavitas::models
