#include "signal/window.hpp"

#include <cmath>
#include <numbers>
#include <stdexcept>

namespace cavitas::dsp {

std::vector<double> hann_periodic(std::size_t n) {
    if (n == 0) throw std::invalid_argument("hann_periodic: window length must be > 0");
    std::vector<double> w(n);
    const double step = 2.0 * std::numbers::pi / static_cast<double>(n);
    for (std::size_t k = 0; k < n; ++k) w[k] = 0.5 - 0.5 * std::cos(step * static_cast<double>(k));
    return w;
}

double window_sum(std::span<const double> w) {
    double s = 0.0;
    for (double v : w) s += v;
    return s;
}

double window_power_sum(std::span<const double> w) {
    double s = 0.0;
    for (double v : w) s += v * v;
    return s;
}

double enbw_bins(std::span<const double> w) {
    const double s = window_sum(w);
    return s != 0.0 ? static_cast<double>(w.size()) * window_power_sum(w) / (s * s) : 0.0;
}

}  // namespace cavitas::dsp
