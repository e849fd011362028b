#include <catch2/catch.hpp>

#include "src/errors.hpp"
#include "src/units.hpp"

using namespace cavitas::app;

TEST_CASE("Full-scale calibrations are parsed with their unit", "[src]") {
    CHECK(parse_full_scale("50g").full_scale == 50.0);
    CHECK(parse_full_scale("50g").unit == "g");
    CHECK(parse_full_scale("500m/s2").unit == "m/s2");
    CHECK(parse_full_scale("9.81 m/s^2").full_scale == 9.81);
    CHECK(parse_full_scale("2000Pa").unit == "Pa");
    CHECK(parse_full_scale("2kPa").full_scale == 2000.0);
}

TEST_CASE("A bad full-scale text is a usage error that names it", "[src]") {
    CHECK_THROWS_AS(parse_full_scale("fifty g"), UsageError);
    CHECK_THROWS_AS(parse_full_scale("-5g"), UsageError);
    CHECK_THROWS_WITH(parse_full_scale("50furlongs"), Catch::Contains("furlongs"));
}
