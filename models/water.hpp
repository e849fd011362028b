// Properties of water from IAPWS-IF97.
//
// Source: IAPWS R7-97(2012), "Revised Release on the IAPWS Industrial
// Formulation 1997 for the Thermodynamic Properties of Water and Steam".
// Region 4 (the saturation line): saturation pressure from temperature
// (Eq. 30) and saturation temperature from pressure (Eq. 31), valid for
// 273.15 K <= T <= 647.096 K and 611.213 Pa <= p <= 22.064 MPa.
// Region 1 (compressed liquid): the dimensionless Gibbs free energy (Eq. 7)
// and the specific volume from its pressure derivative, valid for
// 273.15 K <= T <= 623.15 K and ps(T) <= p <= 100 MPa.
#pragma once

namespace cavitas::models {

/// Critical point of water (IF97): 647.096 K, 22.064 MPa.
constexpr double kCriticalTemperatureK = 647.096;
constexpr double kCriticalPressurePa = 22.064e6;
/// Triple-point end of region 4: 273.15 K, 611.213 Pa.
constexpr double kRegion4MinTemperatureK = 273.15;
constexpr double kRegion4MinPressurePa = 611.213;
/// Region 1 bounds: 273.15 .. 623.15 K, up to 100 MPa.
constexpr double kRegion1MinTemperatureK = 273.15;
constexpr double kRegion1MaxTemperatureK = 623.15;
constexpr double kRegion1MaxPressurePa = 100.0e6;
/// Specific gas constant of water used by IF97, J/(kg K).
constexpr double kIf97GasConstantJ_kgK = 461.526;

/// Saturation (vapour) pressure of water at temperature_k, Pa (IF97 Eq. 30).
/// Throws std::invalid_argument outside 273.15 .. 647.096 K.
double saturation_pressure_pa(double temperature_k);

/// Saturation temperature of water at pressure_pa, K (IF97 Eq. 31).
/// Throws std::invalid_argument outside 611.213 Pa .. 22.064 MPa.
double saturation_temperature_k(double pressure_pa);

/// Specific volume of liquid water in region 1, m3/kg (IF97 Eq. 7 and Table 3:
/// v = pi * gamma_pi * R * T / p). Throws std::invalid_argument outside
/// 273.15 .. 623.15 K, or when the pressure is below the saturation pressure
/// at that temperature or above 100 MPa.
double region1_specific_volume_m3_kg(double temperature_k, double pressure_pa);

/// Density of liquid water at temperature_k and pressure_pa, kg/m3 (region 1).
/// A pressure below the saturation pressure (the liquid is flashing) is read as
/// the saturation pressure: the liquid's density is what matters for a head, and
/// it barely depends on pressure (about 0.05 % per MPa at 20 C).
/// Throws std::invalid_argument outside 273.15 .. 623.15 K.
double liquid_water_density_kg_m3(double temperature_k, double pressure_pa);

}  // namespace cavitas::models
