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

TEST_CASE("Region-1 specific volume matches the IF97 verification values", "[models]") {
    // IAPWS R7-97(2012) Table 5 (region 1 verification values): v(300 K, 3 MPa) = 0.100215168e-2 m3/kg,
    // v(300 K, 80 MPa) = 0.971180894e-3 m3/kg, v(500 K, 3 MPa) = 0.120241800e-2 m3/kg; 9 digits -> rel 1e-8.
    CHECK_THAT(region1_specific_volume_m3_kg(300.0, 3.0e6), WithinRel(0.100215168e-2, 1e-8));
    CHECK_THAT(region1_specific_volume_m3_kg(300.0, 80.0e6), WithinRel(0.971180894e-3, 1e-8));
    CHECK_THAT(region1_specific_volume_m3_kg(500.0, 3.0e6), WithinRel(0.120241800e-2, 1e-8));
}

TEST_CASE("Liquid water density agrees with handbook values", "[models]") {
    // Common practice, no source: water at 20 C and one atmosphere is 998.2 kg/m3, at 60 C 983.2 kg/m3
    // (handbook tables quote these to 0.1 kg/m3), and it is densest near 4 C, just under 1000 kg/m3.
    CHECK_THAT(liquid_water_density_kg_m3(293.15, 101325.0), WithinAbs(998.2, 0.05));
    CHECK_THAT(liquid_water_density_kg_m3(333.15, 101325.0), WithinAbs(983.2, 0.05));
    const double at4 = liquid_water_density_kg_m3(277.15, 101325.0);
    CHECK(at4 > liquid_water_density_kg_m3(274.15, 101325.0));
    CHECK(at4 > liquid_water_density_kg_m3(281.15, 101325.0));
    CHECK_THAT(at4, WithinAbs(1000.0, 0.1));
    // Below the saturation pressure the density is the saturated liquid's: 150 C at 1 atm is the
    // same as 150 C at its own saturation pressure (computed from the definition above).
    CHECK(liquid_water_density_kg_m3(423.15, 101325.0) ==
          1.0 / region1_specific_volume_m3_kg(423.15, saturation_pressure_pa(423.15)));
}

TEST_CASE("Water boils at 100 C under the standard atmosphere", "[models]") {
    // Common practice, no source: 101.325 kPa <-> 100 C; IF97 puts it at 373.124 K (ITS-90).
    CHECK_THAT(saturation_temperature_k(101325.0), WithinAbs(373.15, 0.05));
    CHECK_THAT(saturation_pressure_pa(saturation_temperature_k(101325.0)), WithinRel(101325.0, 1e-9));
}

TEST_CASE("Temperatures and pressures off the saturation line or the liquid region are refused", "[models]") {
    CHECK_THROWS_AS(saturation_pressure_pa(700.0), std::invalid_argument);
    CHECK_THROWS_AS(saturation_pressure_pa(200.0), std::invalid_argument);
    CHECK_THROWS_WITH(saturation_temperature_k(30e6), Catch::Contains("22.064 MPa"));
    CHECK_THROWS_WITH(region1_specific_volume_m3_kg(630.0, 20e6), Catch::Contains("623.15"));
    CHECK_THROWS_WITH(region1_specific_volume_m3_kg(400.0, 1e5), Catch::Contains("below the saturation pressure"));
    CHECK_THROWS_WITH(region1_specific_volume_m3_kg(300.0, 120e6), Catch::Contains("100 MPa"));
    CHECK_THROWS_AS(liquid_water_density_kg_m3(272.0, 1e5), std::invalid_argument);
}
