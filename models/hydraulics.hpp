// Hydraulics beside the acoustics: the standard atmosphere, NPSH available from
// a suction-gauge reading, its margin over the pump's NPSH3, and the plant
// Thoma number of a turbine. SI throughout: Pa, m, K, m3/s, kg/m3.
//
// Cavitation begins where the local pressure falls below the liquid's vapour
// pressure. NPSH available is the absolute total head at the impeller-eye datum
// above the vapour-pressure head; NPSH3 is the NPSH at which the pump's head
// has fallen by 3 % at constant flow and speed - cavitation is already well
// developed there, and it starts (inception) well above it.
#pragma once

#include <string>
#include <vector>

namespace cavitas::models {

/// Standard acceleration of gravity, m/s2 (3rd CGPM 1901; ISO 80000-3).
constexpr double kStandardGravityM_s2 = 9.80665;
/// Standard atmosphere at sea level, Pa (ISO 2533; US Standard Atmosphere 1976).
constexpr double kStandardAtmospherePa = 101325.0;

/// Pressure of the standard atmosphere at a geopotential elevation, Pa.
/// Troposphere of ISO 2533 / US Standard Atmosphere 1976: T0 = 288.15 K,
/// lapse rate 6.5 K/km, p = p0 (1 - L h / T0)^(g0 M / (R* L)) with
/// g0 = 9.80665 m/s2, M = 0.0289644 kg/mol, R* = 8.31432 J/(mol K).
/// Throws std::invalid_argument outside -610 .. 11000 m (the layer's bounds).
double standard_atmosphere_pa(double elevation_m);

/// What the NPSH depends on in the liquid.
struct LiquidProperties {
    double vapour_pressure_pa = 0.0;
    double density_kg_m3 = 0.0;
    std::string source;  ///< "water, IAPWS-IF97" or "given"
};

/// Water at temperature_k: vapour pressure from IF97 region 4, density from
/// region 1 at pressure_pa (read as the saturation pressure when below it).
/// Throws std::invalid_argument with words for a person: below 0 C, above the
/// critical point, or above 350 C (outside region 1).
LiquidProperties water_properties(double temperature_k, double pressure_pa);

/// Mean velocity of a flow in a full circular pipe of the given bore, m/s.
double pipe_velocity_m_s(double flow_m3_s, double bore_m);

/// A suction-gauge reading and what it needs to become an NPSH.
struct SuctionState {
    double absolute_pressure_pa = 0.0;  ///< static pressure at the gauge, absolute
    double gauge_height_m = 0.0;        ///< gauge above the impeller-eye datum (negative below)
    double velocity_m_s = 0.0;          ///< mean velocity at the gauge section (0 = not included)
    LiquidProperties liquid;
};

struct NpshAvailable {
    double pressure_head_m = 0.0;   ///< (p_abs - p_v) / (rho g)
    double velocity_head_m = 0.0;   ///< v^2 / (2 g)
    double elevation_head_m = 0.0;  ///< z, the gauge above the datum
    double npsha_m = 0.0;           ///< the sum
};

/// NPSHa = (p_abs - p_v)/(rho g) + v^2/(2 g) + z (total suction head absolute at
/// the datum above the vapour-pressure head; the form of ISO 9906 and ANSI/HI
/// 9.6.1 for a gauge at the suction flange).
NpshAvailable npsh_available(const SuctionState& s);

/// A pump's NPSH3 against flow, from (flow, NPSH3) points: linear between them,
/// never extrapolated (NPSH3 climbs steeply beyond the tested range).
class Npsh3Curve {
public:
    struct Point {
        double flow_m3_s = 0.0;
        double npsh3_m = 0.0;
    };
    /// At least two points, flows strictly increasing and >= 0, NPSH3 > 0;
    /// throws std::invalid_argument naming the point (1-based) otherwise.
    explicit Npsh3Curve(std::vector<Point> points);
    bool covers(double flow_m3_s) const;
    /// Throws std::out_of_range when flow is outside the curve's flows.
    double at(double flow_m3_s) const;
    const std::vector<Point>& points() const { return points_; }

private:
    std::vector<Point> points_;
};

/// Where NPSHa stands against NPSH3.
enum class MarginClass {
    below_npsh3,  ///< ratio < 1: the pump is losing head to cavitation
    thin,         ///< at or above NPSH3 but under the pump-standard guidance minimum
    adequate,     ///< within guidance, under `large_ratio`
    large,        ///< at or above `large_ratio`
};
const char* to_string(MarginClass c);

/// Margin guidance. Source: ANSI/HI 9.6.1, "Rotodynamic Pumps - Guideline for
/// NPSH Margin" (2012), as summarised in public secondary sources (the standard's
/// text was not read): for water, wastewater and general-service pumps of low
/// suction energy, NPSHa of at least 1.1 x NPSH3 or NPSH3 + 0.6 m, whichever is
/// greater; 1.2 x or + 1.0 m at high suction energy; 2.0 x for hot water and
/// liquids near their bubble point, the highest ratio the guidance asks for.
/// Cavitation inception lies above NPSH3, at 1.5 to more than 5 x NPSH3 (larger
/// at part load), so a margin within guidance does not mean no bubbles.
struct MarginGuidance {
    double min_ratio = 1.1;
    double min_margin_m = 0.6;
    /// A margin from which developed cavitation is not explained by the NPSH
    /// alone (the highest ratio of the guidance; our choice).
    double large_ratio = 2.0;
};

struct NpshMargin {
    double npsha_m = 0.0;
    double npsh3_m = 0.0;
    double margin_m = 0.0;   ///< NPSHa - NPSH3
    double ratio = 0.0;      ///< NPSHa / NPSH3
    double required_m = 0.0; ///< guidance minimum: max(min_ratio x NPSH3, NPSH3 + min_margin_m)
    MarginClass margin_class = MarginClass::adequate;
};
/// npsh3_m must be > 0 (std::invalid_argument otherwise).
NpshMargin npsh_margin(double npsha_m, double npsh3_m, const MarginGuidance& guidance = {});

/// The guidance sentence shown wherever the margin is judged, with its source.
std::string margin_guidance_text(const MarginGuidance& guidance = {});

/// Plant Thoma number of a turbine: sigma = (H_atm - H_v - H_s) / H, heads in
/// metres of the liquid: H_atm = p_atm / (rho g), H_v = p_v / (rho g), H_s the
/// runner's reference above tailwater (negative when submerged), H the net head.
/// Source: JSME Mechanical Engineering wiki, "Thoma's cavitation coefficient".
/// net_head_m must be > 0.
double thoma_sigma(double barometric_pa, const LiquidProperties& liquid, double runner_setting_m, double net_head_m);

}  // namespace cavitas::models
