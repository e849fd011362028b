#include <catch2/catch.hpp>

#include "models/water.hpp"

using namespace cavitas::models;
using Catch::Matchers::WithinAbs;
using Catch::Matchers::WithinRel;

TEST_CASE("Saturation pressure matches the IF97 verification values", "[models]") {
    // IAPWS R7-97(2012) region-4 verification values for Eq. 30: ps(300 K) = 0.353658941e-2 MPa,
    // ps(500 K) = 0.263889776e1 MPa, ps(600 K) = 0.123443146e2 MPa; 9 digits -> rel 1e-8.
    CHECK_THAT(saturation_pressure_pa(300.0), WithinRel(0.353658941e-2 * 1e6, 1e-8));
    CHECK_THAT(saturation_pressure_pa(500.0), WithinRel(0.263889776e1 * 1e6, 1e-8));
    CHECK_THAT(saturation_pressure_pa(600.0), WithinRel(0.123443146e2 * 1e6, 1e-8));
}

TEST_CASE("Saturation temperature matches the IF97 verification values", "[models]") {
    // IAPWS R7-97(2012) region-4 verification values for Eq. 31: Ts(0.1 MPa) = 0.372755919e3 K,
    // Ts(1 MPa) = 0.453035632e3 K, Ts(10 MPa) = 0.584149488e3 K; the table's last digit is 1e-6 K.
    CHECK_THAT(saturation_temperature_k(0.1e6), WithinAbs(0.372755919e3, 1e-5));
    CHECK_THAT(saturation_temperature_k(1.0e6), WithinAbs(0.453035632e3, 1e-5));
    CHECK_THAT(saturation_temperature_k(10.0e6), WithinAbs(0.584149488e3, 1e-5));
}

TEST_CASE("Water boils at 100 C under the standard atmosphere", "[models]") {
    // Common practice, no source: 101.325 kPa <-> 100 C; IF97 puts it at 373.124 K (ITS-90).
    CHECK_THAT(saturation_temperature_k(101325.0), WithinAbs(373.15, 0.05));
    CHECK_THAT(saturation_pressure_pa(saturation_temperature_k(101325.0)), WithinRel(101325.0, 1e-9));
}

TEST_CASE("Temperatures and pressures off the saturation line are refused", "[models]") {
    CHECK_THROWS_AS(saturation_pressure_pa(700.0), std::invalid_argument);
    CHECK_THROWS_AS(saturation_pressure_pa(200.0), std::invalid_argument);
    CHECK_THROWS_WITH(saturation_temperature_k(30e6), Catch::Contains("22.064 MPa"));
}
