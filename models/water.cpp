#include "models/water.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <stdexcept>
#include <string>

#include "models/text.hpp"

namespace cavitas::models {

namespace {

// IF97 region-4 coefficients n1..n10 (IAPWS R7-97(2012), the saturation equation).
constexpr std::array<double, 10> n = {
    0.11670521452767e4,  -0.72421316703206e6, -0.17073846940092e2, 0.12020824702470e5,  -0.32325550322333e7,
    0.14915108613530e2,  -0.48232657361591e4, 0.40511340542057e6,  -0.23855557567849,  0.65017534844798e3,
};

// IF97 region-1 coefficients and exponents (IAPWS R7-97(2012), Table 2), 34 terms:
// gamma(pi, tau) = sum n_i (7.1 - pi)^I_i (tau - 1.222)^J_i. The table's verification
// values (Table 5) are in tests/models/water_test.cpp; a wrong digit here fails them.
struct Region1Term {
    int i;
    int j;
    double n;
};
constexpr std::array<Region1Term, 34> region1 = {{
    {0, -2, 0.14632971213167},      {0, -1, -0.84548187169114},     {0, 0, -0.37563603672040e1},
    {0, 1, 0.33855169168385e1},     {0, 2, -0.95791963387872},      {0, 3, 0.15772038513228},
    {0, 4, -0.16616417199501e-1},   {0, 5, 0.81214629983568e-3},    {1, -9, 0.28319080123804e-3},
    {1, -7, -0.60706301565874e-3},  {1, -1, -0.18990068218419e-1},  {1, 0, -0.32529748770505e-1},
    {1, 1, -0.21841717175414e-1},   {1, 3, -0.52838357969930e-4},   {2, -3, -0.47184321073267e-3},
    {2, 0, -0.30001780793026e-3},   {2, 1, 0.47661393906987e-4},    {2, 3, -0.44141845330846e-5},
    {2, 17, -0.72694996297594e-15}, {3, -4, -0.31679644845054e-4},  {3, 0, -0.28270797985312e-5},
    {3, 6, -0.85205128120103e-9},   {4, -5, -0.22425281908000e-5},  {4, -2, -0.65171222895601e-6},
    {4, 10, -0.14341729937924e-12}, {5, -8, -0.40516996860117e-6},  {8, -11, -0.12734301741641e-8},
    {8, -6, -0.17424871230634e-9},  {21, -29, -0.68762131295531e-18}, {23, -31, 0.14478307828521e-19},
    {29, -38, 0.26335781662795e-22}, {30, -39, -0.11947622640071e-22}, {31, -40, 0.18228094581404e-23},
    {32, -41, -0.93537087292458e-25},
}};
// Reducing quantities of region 1: p* = 16.53 MPa, T* = 1386 K.
constexpr double kRegion1PStarPa = 16.53e6;
constexpr double kRegion1TStarK = 1386.0;

// Exact integer power (negative exponents included): pow(x, int) on doubles
// rounds the same way on every platform, and the exponents reach -41.
double ipow(double x, int e) {
    double r = 1.0;
    double b = e < 0 ? 1.0 / x : x;
    unsigned k = static_cast<unsigned>(e < 0 ? -e : e);
    while (k) {
        if (k & 1u) r *= b;
        b *= b;
        k >>= 1u;
    }
    return r;
}

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

double region1_specific_volume_m3_kg(double temperature_k, double pressure_pa) {
    if (!(temperature_k >= kRegion1MinTemperatureK && temperature_k <= kRegion1MaxTemperatureK))
        throw std::invalid_argument(fmt("temperature %.2f K is outside the liquid region of IAPWS-IF97 (273.15 .. 623.15 K)",
                                         temperature_k));
    if (!(pressure_pa <= kRegion1MaxPressurePa))
        throw std::invalid_argument(fmt("pressure %.6g Pa is above the 100 MPa limit of IAPWS-IF97 region 1", pressure_pa));
    const double ps = saturation_pressure_pa(temperature_k);
    // 1e-9 relative: the saturation line itself belongs to region 1.
    if (!(pressure_pa >= ps * (1.0 - 1e-9)))
        throw std::invalid_argument(fmt("pressure %.6g Pa is below the saturation pressure at this temperature: "
                                         "the water is not liquid there",
                                         pressure_pa));
    const double pi = pressure_pa / kRegion1PStarPa;
    const double tau = kRegion1TStarK / temperature_k;
    // gamma_pi = sum -n_i I_i (7.1 - pi)^(I_i - 1) (tau - 1.222)^J_i (Table 4).
    double gamma_pi = 0.0;
    for (const auto& t : region1)
        if (t.i != 0) gamma_pi -= t.n * t.i * ipow(7.1 - pi, t.i - 1) * ipow(tau - 1.222, t.j);
    return pi * gamma_pi * kIf97GasConstantJ_kgK * temperature_k / pressure_pa;
}

double liquid_water_density_kg_m3(double temperature_k, double pressure_pa) {
    if (!(temperature_k >= kRegion1MinTemperatureK && temperature_k <= kRegion1MaxTemperatureK))
        throw std::invalid_argument(fmt("temperature %.2f K is outside the liquid region of IAPWS-IF97 (273.15 .. 623.15 K)",
                                         temperature_k));
    const double p = std::max(pressure_pa, saturation_pressure_pa(temperature_k));
    return 1.0 / region1_specific_volume_m3_kg(temperature_k, p);
}

}  // namespace cavitas::models
