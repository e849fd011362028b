// Machine kinematics: shaft and blade-pass frequencies, rolling-bearing defect
// frequencies, and a shaft-speed estimate from a vibration spectrum.
#pragma once

#include <cstddef>
#include <optional>
#include <span>
#include <string>

namespace cavitas::models {

/// Shaft rate in Hz from a speed in rpm.
constexpr double shaft_hz(double rpm) { return rpm / 60.0; }
/// Blade-pass frequency BPF = vanes x rpm / 60 (Hz).
constexpr double blade_pass_hz(double rpm, int vanes) { return static_cast<double>(vanes) * rpm / 60.0; }

/// Rolling-element bearing geometry: n elements of diameter d on pitch diameter D,
/// contact angle phi (radians).
struct BearingGeometry {
    int elements = 0;
    double ball_diameter_m = 0.0;
    double pitch_diameter_m = 0.0;
    double contact_angle_rad = 0.0;
};

/// Defect frequencies as multiples of shaft rate (orders). Formulas as given in
/// R.B. Randall & J. Antoni, "Rolling element bearing diagnostics - a tutorial",
/// MSSP 25 (2011) 485-520:
///   BPFO = n/2 (1 - d/D cos phi), BPFI = n/2 (1 + d/D cos phi),
///   FTF = 1/2 (1 - d/D cos phi), BSF = D/(2d) (1 - (d/D cos phi)^2).
/// Real frequencies deviate 1-2 % from these because of slip.
struct BearingOrders {
    double bpfo = 0.0;
    double bpfi = 0.0;
    double ftf = 0.0;
    double bsf = 0.0;
};
BearingOrders bearing_orders(const BearingGeometry& g);

/// Result of a shaft-speed search.
struct SpeedEstimate {
    double rpm = 0.0;
    double score = 0.0;          ///< mean prominence (dB) of the harmonics used
    int harmonics_used = 0;
    double resolution_rpm = 0.0; ///< +- uncertainty from the spectral resolution
    /// Confirmation: the estimate is trusted only when its family stands out.
    int clear_lines = 0;              ///< of 1x..8x and BPF, lines >= kClearLineDb over their floor
    bool fundamental_clear = false;   ///< 1x or BPF among them
    double runner_up_score = 0.0;     ///< best score of a speed that is not this one nor a simple ratio of it
    bool confirmed = false;
    std::string how;                  ///< words: which lines confirmed it, or why it was not
};

/// A line counts as present at 6 dB over its local floor (twice the floor's
/// amplitude): common practice for a spectral line, no source.
constexpr double kClearLineDb = 6.0;
/// An estimate is confirmed when at least 3 lines of its family are clear, one
/// of them 1x or BPF (or 1x and BPF both clear: two lines at the vane count's
/// ratio), and no unrelated speed in the range scores within 1.5 dB
/// (a second family as strong means the search cannot tell which is the
/// shaft). Our choices, checked on the real and generated recordings.
constexpr int kConfirmLines = 3;
constexpr double kConfirmLeadDb = 1.5;

/// Estimate the shaft speed from a one-sided PSD: the speed in
/// [rpm_low, rpm_high] whose harmonics 1x..8x (and the blade pass when vanes > 0)
/// stand highest above the local spectral floor (a harmonic-sum search in the
/// spirit of the spectral methods compared by Gardonyi & Samu, J. Vibroengineering
/// 21(3) (2019) 538-555). Returns nullopt when no harmonic stands out (score < 3 dB);
/// otherwise the best speed with its confirmation (SpeedEstimate::confirmed).
std::optional<SpeedEstimate> estimate_speed(std::span<const double> psd, double bin_hz, double rpm_low,
                                            double rpm_high, int vanes);

}  // namespace cavitas::models
