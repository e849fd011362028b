#include "models/machine.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <string>
#include <stdexcept>
#include <vector>

namespace cavitas::models {

BearingOrders bearing_orders(const BearingGeometry& g) {
    if (g.elements <= 0 || !(g.ball_diameter_m > 0.0) || !(g.pitch_diameter_m > g.ball_diameter_m))
        throw std::invalid_argument("BearingGeometry needs elements > 0 and 0 < ball diameter < pitch diameter");
    const double r = g.ball_diameter_m / g.pitch_diameter_m * std::cos(g.contact_angle_rad);
    const double n = static_cast<double>(g.elements);
    BearingOrders o;
    o.bpfo = n / 2.0 * (1.0 - r);
    o.bpfi = n / 2.0 * (1.0 + r);
    o.ftf = 0.5 * (1.0 - r);
    o.bsf = g.pitch_diameter_m / (2.0 * g.ball_diameter_m) * (1.0 - r * r);
    return o;
}

namespace {

// Level of a line in dB over the median of its neighbourhood (a log-spectrum
// prominence, so that the search does not chase the largest absolute peak).
class Prominence {
public:
    Prominence(std::span<const double> psd, double bin_hz) : psd_(psd), bin_hz_(bin_hz) {}
    double at(double f_hz) {
        const auto last = static_cast<long>(psd_.size()) - 1;
        const double pos = f_hz / bin_hz_;
        const long c = static_cast<long>(std::lround(pos));
        if (c < 2 || c + 2 > last) return 0.0;
        // Level at the exact frequency, interpolated between its two bins: a
        // candidate speed whose harmonics fall between lines scores lower than
        // one whose harmonics sit on them (a max over neighbouring bins would
        // not tell a 2 % speed error from none at the fundamental).
        const auto k0 = static_cast<std::size_t>(std::floor(pos));
        const double frac = pos - static_cast<double>(k0);
        const double peak = psd_[k0] * (1.0 - frac) + psd_[k0 + 1] * frac;
        const long w = std::max(8L, static_cast<long>(std::lround(0.08 * pos)));
        tmp_.clear();
        for (long k = std::max(1L, c - w); k <= std::min(last, c + w); ++k)
            if (std::abs(k - c) > 2) tmp_.push_back(psd_[static_cast<std::size_t>(k)]);
        if (tmp_.empty()) return 0.0;
        auto mid = tmp_.begin() + static_cast<std::ptrdiff_t>(tmp_.size() / 2);
        std::nth_element(tmp_.begin(), mid, tmp_.end());
        if (!(*mid > 0.0) || !(peak > 0.0)) return 0.0;
        return 10.0 * std::log10(peak / *mid);
    }

private:
    std::span<const double> psd_;
    double bin_hz_;
    std::vector<double> tmp_;
};

// Is the best speed the shaft's? Its own lines must be clear, and no other
// family in the range may score nearly as well. Speeds at simple ratios of the
// best (1/3 ... 3) share its lines and are not rivals.
void confirm(SpeedEstimate& best, const std::vector<std::pair<double, double>>& scored, Prominence& prom, double nyq,
             int vanes) {
    const double f0 = best.rpm / 60.0;
    std::string lines;
    auto note = [&](const std::string& name, double f) {
        if (f >= nyq * 0.9 || prom.at(f) < kClearLineDb) return false;
        ++best.clear_lines;
        lines += (lines.empty() ? "" : ", ") + name;
        return true;
    };
    const bool one_x = note("1x", f0);
    for (int h = 2; h <= 8; ++h)
        if (!(vanes > 0 && h == vanes)) note(std::to_string(h) + "x", f0 * h);
    const bool bpf = vanes > 0 && note("BPF", f0 * vanes);
    best.fundamental_clear = one_x || bpf;
    static constexpr double kRatios[] = {1.0, 0.5, 2.0, 1.0 / 3.0, 3.0, 2.0 / 3.0, 1.5};
    for (const auto& [f, score] : scored) {
        bool related = false;
        for (double r : kRatios) related = related || std::abs(f / f0 - r) <= 0.03 * r;
        if (!related) best.runner_up_score = std::max(best.runner_up_score, score);
    }
    const double lead = best.score - best.runner_up_score;
    // 1x and BPF both clear is a family on its own: two lines at the vane count's ratio.
    const bool family = (best.clear_lines >= kConfirmLines && best.fundamental_clear) || (one_x && bpf);
    best.confirmed = family && lead >= kConfirmLeadDb;
    char buf[200];
    if (best.confirmed) {
        std::snprintf(buf, sizeof buf, "; leads any other speed in the range by %.1f dB", lead);
        best.how = "confirmed by " + std::to_string(best.clear_lines) + " clear lines (" + lines + ")" + buf;
    } else if (!family) {
        best.how = "not confirmed: " + std::to_string(best.clear_lines) + " clear line(s)" +
                   (lines.empty() ? std::string() : " (" + lines + ")") + ", need " + std::to_string(kConfirmLines) +
                   " including 1x or BPF, or both 1x and BPF";
    } else {
        std::snprintf(buf, sizeof buf, "not confirmed: another speed in the range scores within %.1f dB (lead %.1f dB)",
                      kConfirmLeadDb, lead);
        best.how = buf;
    }
}

}  // namespace

std::optional<SpeedEstimate> estimate_speed(std::span<const double> psd, double bin_hz, double rpm_low,
                                            double rpm_high, int vanes) {
    if (psd.size() < 16 || !(bin_hz > 0.0) || !(rpm_low > 0.0) || !(rpm_high > rpm_low)) return std::nullopt;
    Prominence prom(psd, bin_hz);
    const double nyq = bin_hz * static_cast<double>(psd.size() - 1);
    // Step so that the 8th harmonic moves by less than half a bin per step.
    // At most 20 000 steps, whatever the range (a damaged baseline can ask for any).
    const double step_hz = std::max(bin_hz / 20.0, (rpm_high - rpm_low) / 60.0 / 20000.0);
    auto score_at = [&](double f) {
        double sum = 0.0;
        int used = 0;
        for (int h = 1; h <= 8; ++h) {
            const double fh = f * h;
            if (fh >= nyq * 0.9) break;
            // Only positive prominences count: a missing harmonic should not punish a speed.
            sum += std::max(0.0, prom.at(fh));
            ++used;
        }
        if (vanes > 0 && f * vanes < nyq * 0.9) {
            sum += std::max(0.0, prom.at(f * vanes));
            ++used;
        }
        return std::pair<double, int>{used ? sum / used : 0.0, used};
    };
    SpeedEstimate best;
    bool found = false;
    std::vector<std::pair<double, double>> scored;  // (f, score), for the runner-up
    for (double f = rpm_low / 60.0; f <= rpm_high / 60.0; f += step_hz) {
        const auto [score, used] = score_at(f);
        if (used == 0) continue;
        scored.emplace_back(f, score);
        if (!found || score > best.score) {
            best.score = score;
            best.rpm = f * 60.0;
            best.harmonics_used = used;
            found = true;
        }
    }
    if (!found || best.score < 3.0) return std::nullopt;
    // Refine: the highest harmonic with a clear line pins the speed most finely
    // (resolution bin/(2k) at harmonic k).
    int top = 1;
    const double f0 = best.rpm / 60.0;
    for (int h = 8; h >= 1; --h)
        if (f0 * h < nyq * 0.9 && prom.at(f0 * h) > 6.0) {
            top = h;
            break;
        }
    best.resolution_rpm = 60.0 * bin_hz / (2.0 * top);
    confirm(best, scored, prom, nyq, vanes);
    return best;
}

}  // namespace cavitas::models
