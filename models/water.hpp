// Properties of water from IAPWS-IF97.
//
// Source: IAPWS R7-97(2012), "Revised Release on the IAPWS Industrial
// Formulation 1997 for the Thermodynamic Properties of Water and Steam".
// Region 4 (the saturation line): saturation pressure from temperature
// (Eq. 30) and saturation temperature from pressure (Eq. 31), valid for
// 273.15 K <= T <= 647.096 K and 611.213 Pa <= p <= 22.064 MPa.
#pragma once

namespace cavitas::models {

/// Critical point of water (IF97): 647.096 K, 22.064 MPa.
constexpr double kCriticalTemperatureK = 647.096;
constexpr double kCriticalPressurePa = 22.064e6;
/// Triple-point end of region 4: 273.15 K, 611.213 Pa.
constexpr double kRegion4MinTemperatureK = 273.15;
constexpr double kRegion4MinPressurePa = 611.213;

/// Saturation (vapour) pressure of water at temperature_k, Pa (IF97 Eq. 30).
/// Throws std::invalid_argument outside 273.15 .. 647.096 K.
double saturation_pressure_pa(double temperature_k);

/// Saturation temperature of water at pressure_pa, K (IF97 Eq. 31).
/// Throws std::invalid_argument outside 611.213 Pa .. 22.064 MPa.
double saturation_temperature_k(double pressure_pa);

}  // namespace cavitas::models
