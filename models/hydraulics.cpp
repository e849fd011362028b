#include "models/hydraulics.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>
#include <stdexcept>

#include "models/text.hpp"
#include "models/water.hpp"

namespace cavitas::models {

double standard_atmosphere_pa(double elevation_m) {
    if (!(elevation_m >= -610.0 && elevation_m <= 11000.0))
        throw std::invalid_argument(fmt("elevation %.0f m is outside the standard atmosphere's lowest layer "
                                        "(-610 .. 11000 m); give the barometric pressure instead",
                                        elevation_m));
    // ISO 2533 / US Standard Atmosphere 1976, layer 0.
    constexpr double T0_k = 288.15, L_k_m = 0.0065, M_kg_mol = 0.0289644, R_j_molk = 8.31432;
    const double exponent = kStandardGravityM_s2 * M_kg_mol / (R_j_molk * L_k_m);
    return kStandardAtmospherePa * std::pow(1.0 - L_k_m * elevation_m / T0_k, exponent);
}

LiquidProperties water_properties(double temperature_k, double pressure_pa) {
    if (!std::isfinite(temperature_k)) throw std::invalid_argument("the liquid temperature is not a number");
    if (temperature_k < kRegion1MinTemperatureK)
        throw std::invalid_argument(fmt("liquid temperature %.2f C is below 0 C: water freezes there; for another "
                                        "liquid give its vapour pressure and density",
                                        temperature_k - 273.15));
    if (temperature_k > kCriticalTemperatureK)
        throw std::invalid_argument(fmt("liquid temperature %.2f C is above the critical point of water (373.946 C, "
                                        "22.064 MPa): there is no liquid, so nothing to cavitate",
                                        temperature_k - 273.15));
    if (temperature_k > kRegion1MaxTemperatureK)
        throw std::invalid_argument(fmt("liquid temperature %.2f C is above 350 C, outside the liquid region of "
                                        "IAPWS-IF97 that cavitas implements; give the vapour pressure and density",
                                        temperature_k - 273.15));
    LiquidProperties l;
    l.vapour_pressure_pa = saturation_pressure_pa(temperature_k);
    l.density_kg_m3 = liquid_water_density_kg_m3(temperature_k, std::min(pressure_pa, kRegion1MaxPressurePa));
    l.source = "water, IAPWS-IF97";
    return l;
}

double pipe_velocity_m_s(double flow_m3_s, double bore_m) {
    if (!(bore_m > 0.0)) throw std::invalid_argument("the suction bore must be greater than zero");
    const double area_m2 = std::numbers::pi * bore_m * bore_m / 4.0;
    return flow_m3_s / area_m2;
}

NpshAvailable npsh_available(const SuctionState& s) {
    if (!(s.liquid.density_kg_m3 > 0.0)) throw std::invalid_argument("the liquid density must be greater than zero");
    const double rho_g = s.liquid.density_kg_m3 * kStandardGravityM_s2;
    NpshAvailable n;
    n.pressure_head_m = (s.absolute_pressure_pa - s.liquid.vapour_pressure_pa) / rho_g;
    n.velocity_head_m = s.velocity_m_s * s.velocity_m_s / (2.0 * kStandardGravityM_s2);
    n.elevation_head_m = s.gauge_height_m;
    n.npsha_m = n.pressure_head_m + n.velocity_head_m + n.elevation_head_m;
    return n;
}

Npsh3Curve::Npsh3Curve(std::vector<Point> points) : points_(std::move(points)) {
    if (points_.size() < 2) throw std::invalid_argument("an NPSH3 curve needs at least two (flow, NPSH3) points");
    for (std::size_t i = 0; i < points_.size(); ++i) {
        const auto& p = points_[i];
        const std::string where = "NPSH3 curve point " + std::to_string(i + 1) + ": ";
        if (!(std::isfinite(p.flow_m3_s) && p.flow_m3_s >= 0.0))
            throw std::invalid_argument(where + "the flow must be zero or more");
        if (!(std::isfinite(p.npsh3_m) && p.npsh3_m > 0.0))
            throw std::invalid_argument(where + "NPSH3 must be greater than zero");
        if (i > 0 && !(p.flow_m3_s > points_[i - 1].flow_m3_s))
            throw std::invalid_argument(where + "flows must increase from one point to the next");
    }
}

bool Npsh3Curve::covers(double flow_m3_s) const {
    // Half a part per million of slack: a flow typed in the curve's own unit
    // comes back from SI with rounding in the last digits.
    const double slack = 5e-7 * points_.back().flow_m3_s;
    return flow_m3_s >= points_.front().flow_m3_s - slack && flow_m3_s <= points_.back().flow_m3_s + slack;
}

double Npsh3Curve::at(double flow_m3_s) const {
    if (!covers(flow_m3_s)) throw std::out_of_range("flow is outside the NPSH3 curve");
    const double q = std::clamp(flow_m3_s, points_.front().flow_m3_s, points_.back().flow_m3_s);
    auto hi = std::upper_bound(points_.begin(), points_.end(), q,
                               [](double v, const Point& p) { return v < p.flow_m3_s; });
    if (hi == points_.end()) return points_.back().npsh3_m;
    const auto lo = hi - 1;
    const double t = (q - lo->flow_m3_s) / (hi->flow_m3_s - lo->flow_m3_s);
    return lo->npsh3_m + t * (hi->npsh3_m - lo->npsh3_m);
}

const char* to_string(MarginClass c) {
    switch (c) {
        case MarginClass::below_npsh3: return "below_npsh3";
        case MarginClass::thin: return "thin";
        case MarginClass::adequate: return "adequate";
        case MarginClass::large: return "large";
    }
    return "";
}

NpshMargin npsh_margin(double npsha_m, double npsh3_m, const MarginGuidance& g) {
    if (!(npsh3_m > 0.0)) throw std::invalid_argument("NPSH3 must be greater than zero");
    NpshMargin m;
    m.npsha_m = npsha_m;
    m.npsh3_m = npsh3_m;
    m.margin_m = npsha_m - npsh3_m;
    m.ratio = npsha_m / npsh3_m;
    m.required_m = std::max(g.min_ratio * npsh3_m, npsh3_m + g.min_margin_m);
    if (m.ratio < 1.0) m.margin_class = MarginClass::below_npsh3;
    else if (npsha_m < m.required_m) m.margin_class = MarginClass::thin;
    else if (m.ratio >= g.large_ratio) m.margin_class = MarginClass::large;
    else m.margin_class = MarginClass::adequate;
    return m;
}

std::string margin_guidance_text(const MarginGuidance& g) {
    return fmt("pump-standard guidance (ANSI/HI 9.6.1, Guideline for NPSH Margin): NPSHa of at least %.2g x NPSH3 "
               "or NPSH3 + %.2g m, whichever is greater, for water pumps of low suction energy, more (1.2 x or + 1 m) "
               "at high suction energy and up to 2 x for hot water; cavitation starts well above NPSH3, so a margin "
               "within guidance does not rule out bubbles",
               g.min_ratio, g.min_margin_m);
}

double thoma_sigma(double barometric_pa, const LiquidProperties& liquid, double runner_setting_m, double net_head_m) {
    if (!(net_head_m > 0.0)) throw std::invalid_argument("the net head must be greater than zero");
    if (!(liquid.density_kg_m3 > 0.0)) throw std::invalid_argument("the liquid density must be greater than zero");
    const double rho_g = liquid.density_kg_m3 * kStandardGravityM_s2;
    const double h_atm = barometric_pa / rho_g;
    const double h_v = liquid.vapour_pressure_pa / rho_g;
    return (h_atm - h_v - runner_setting_m) / net_head_m;
}

}  // namespace cavitas::models
