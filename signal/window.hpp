// Analysis windows.
#pragma once

#include <cstddef>
#include <span>
#include <vector>

namespace cavitas::dsp {

/// Periodic Hann window of length n: w[k] = 0.5 - 0.5 cos(2 pi k / n).
/// Periodic (not symmetric) so that 50 % overlapped windows sum to a constant;
/// the same convention as scipy.signal.get_window('hann', n).
std::vector<double> hann_periodic(std::size_t n);

/// Sum of w[k] (coherent gain times n).
double window_sum(std::span<const double> w);
/// Sum of w[k]^2 (used for PSD density scaling).
double window_power_sum(std::span<const double> w);
/// Equivalent noise bandwidth in bins: n * sum w^2 / (sum w)^2 (1.5 for Hann).
/// A density PSD times ENBW in Hz (bins x bin width) gives a bin-centred
/// sine's mean square at its line.
double enbw_bins(std::span<const double> w);

}  // namespace cavitas::dsp
