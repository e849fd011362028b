#include "models/water.hpp"

#include <array>
#include <cmath>
#include <stdexcept>
#include <string>

namespace cavitas::models {
namespace {

// IF97 region-4 coefficients n1..n10 (IAPWS R7-97(2012), the saturation equation).
constexpr std::array<double, 10> n = {
    0.11670521452767e4,  -0.72421316703206e6, -0.17073846940092e2, 0.12020824702470e5,  -0.32325550322333e7,
    0.14915108613530e2,  -0.48232657361591e4, 0.40511340542057e6,  -0.23855557567849,  0.65017534844798e3,
};

}  // namespace

double saturation_pressure_pa(double temperature_k) {
    if (!(temperature_k >= kRegion4MinTemperatureK && temperature_k <= kCriticalTemperatureK))
        throw std::invalid_argument("temperature " + std::to_string(temperature_k) +
                                    " K is outside the saturation line of water (273.15 .. 647.096 K)");
    // Eq. 29a-30 with T* = 1 K, p* = 1 MPa.
    const double theta = temperature_k + n[8] / (temperature_k - n[9]);
    const double A = theta * theta + n[0] * theta + n[1];
    const double B = n[2] * theta * theta + n[3] * theta + n[4];
    const double C = n[5] * theta * theta + n[6] * theta + n[7];
    const double ratio = 2.0 * C / (-B + std::sqrt(B * B - 4.0 * A * C));
    return ratio * ratio * ratio * ratio * 1.0e6;
}

double saturation_temperature_k(double pressure_pa) {
    if (!(pressure_pa >= kRegion4MinPressurePa && pressure_pa <= kCriticalPressurePa))
        throw std::invalid_argument("pressure " + std::to_string(pressure_pa) +
                                    " Pa is outside the saturation line of water (611.213 Pa .. 22.064 MPa)");
    // Eq. 29b-31 with p* = 1 MPa, T* = 1 K.
    const double beta = std::pow(pressure_pa / 1.0e6, 0.25);
    const double E = beta * beta + n[2] * beta + n[5];
    const double F = n[0] * beta * beta + n[3] * beta + n[6];
    const double G = n[1] * beta * beta + n[4] * beta + n[7];
    const double D = 2.0 * G / (-F - std::sqrt(F * F - 4.0 * E * G));
    const double s = n[9] + D;
    return 0.5 * (s - std::sqrt(s * s - 4.0 * (n[8] + n[9] * D)));
}

}  // namespace cavitas::models
