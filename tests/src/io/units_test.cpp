#include <catch2/catch.hpp>

#include <filesystem>
#include <fstream>

#include <unistd.h>

#include "src/io/errors.hpp"
#include "src/io/operating_point_io.hpp"
#include "src/io/units.hpp"

using namespace cavitas::app;
using Catch::Matchers::Contains;
using Catch::Matchers::WithinAbs;
using Catch::Matchers::WithinRel;

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

TEST_CASE("Every pressure unit converts to pascals", "[src][units]") {
    // Exact by definition: 1 bar = 1e5 Pa; 1 psi = 0.45359237 kg x 9.80665 m/s2 / (0.0254 m)^2
    // = 6894.757293168 Pa (scipy.constants.psi gives the same; tests/reference/units_check.py).
    CHECK(parse_quantity("35kPa", Quantity::pressure) == 35000.0);
    CHECK(parse_quantity("35 kPa", Quantity::pressure) == 35000.0);
    CHECK(parse_quantity("101325Pa", Quantity::pressure) == 101325.0);
    CHECK(parse_quantity("1013.25hPa", Quantity::pressure) == 101325.0);
    CHECK(parse_quantity("1.2MPa", Quantity::pressure) == 1.2e6);
    CHECK(parse_quantity("-0.4bar", Quantity::pressure) == -40000.0);
    CHECK(parse_quantity("250mbar", Quantity::pressure) == 25000.0);
    CHECK_THAT(parse_quantity("14.7psi", Quantity::pressure), WithinRel(14.7 * 6894.757293168, 1e-12));
    CHECK(parse_quantity("35KPA", Quantity::pressure) == 35000.0);  // any case
    CHECK(parse_pressure("5psig").gauge == std::optional<bool>(true));
    CHECK(parse_pressure("19.7psia").gauge == std::optional<bool>(false));
    CHECK(parse_pressure("2barg").gauge == std::optional<bool>(true));
    CHECK(parse_pressure("1.2bara").pa == 120000.0);
    CHECK_FALSE(parse_pressure("35kPa").gauge.has_value());
}

TEST_CASE("Every length, temperature, flow, density and speed unit converts to SI", "[src][units]") {
    // Exact by definition (1959 international yard and pound): ft = 0.3048 m, in = 0.0254 m.
    CHECK(parse_quantity("0.8m", Quantity::length) == 0.8);
    CHECK(parse_quantity("150mm", Quantity::length) == 0.15);
    CHECK(parse_quantity("15cm", Quantity::length) == 0.15);
    CHECK_THAT(parse_quantity("10ft", Quantity::length), WithinRel(3.048, 1e-15));
    CHECK_THAT(parse_quantity("6in", Quantity::length), WithinRel(0.1524, 1e-15));
    // Celsius and Fahrenheit by definition: T/K = t/C + 273.15 = (t/F - 32) x 5/9 + 273.15.
    CHECK_THAT(parse_quantity("60C", Quantity::temperature), WithinAbs(333.15, 1e-12));
    CHECK_THAT(parse_quantity("212F", Quantity::temperature), WithinAbs(373.15, 1e-12));
    CHECK_THAT(parse_quantity("32 degF", Quantity::temperature), WithinAbs(273.15, 1e-12));
    CHECK_THAT(parse_quantity("-40F", Quantity::temperature), WithinAbs(parse_quantity("-40C", Quantity::temperature), 1e-12));
    CHECK_THAT(parse_quantity("14 \xC2\xB0""C", Quantity::temperature), WithinAbs(287.15, 1e-12));  // 14 °C
    CHECK(parse_quantity("300K", Quantity::temperature) == 300.0);
    CHECK_THAT(parse_quantity("120m3/h", Quantity::flow), WithinRel(120.0 / 3600.0, 1e-15));
    CHECK_THAT(parse_quantity("120 m\xC2\xB3/h", Quantity::flow), WithinRel(120.0 / 3600.0, 1e-15));  // m³/h
    CHECK(parse_quantity("0.2m3/s", Quantity::flow) == 0.2);
    CHECK_THAT(parse_quantity("33L/s", Quantity::flow), WithinRel(0.033, 1e-15));
    CHECK_THAT(parse_quantity("33 l/s", Quantity::flow), WithinRel(0.033, 1e-15));
    CHECK_THAT(parse_quantity("600L/min", Quantity::flow), WithinRel(0.01, 1e-15));
    // US gallon = 231 in3 = 3.785411784 L exactly.
    CHECK_THAT(parse_quantity("100gpm", Quantity::flow), WithinRel(100 * 3.785411784e-3 / 60.0, 1e-12));
    CHECK(parse_quantity("850kg/m3", Quantity::density) == 850.0);
    CHECK(parse_quantity("0.85g/cm3", Quantity::density) == 850.0);
    CHECK(parse_quantity("0.85g/mL", Quantity::density) == 850.0);
    CHECK(parse_quantity("0.85kg/L", Quantity::density) == 850.0);
    CHECK_THAT(parse_quantity("62.4lb/ft3", Quantity::density), WithinRel(62.4 * 16.01846337396, 1e-10));
    CHECK(parse_quantity("1485rpm", Quantity::speed) == 1485.0);
    CHECK(parse_quantity("1485 r/min", Quantity::speed) == 1485.0);
    CHECK(parse_quantity("24.75Hz", Quantity::speed) == 1485.0);
}

TEST_CASE("Unknown units, missing values and bare numbers are refused with words", "[src][units]") {
    CHECK_THROWS_WITH(parse_quantity("35 furlongs", Quantity::pressure),
                      Contains("unknown pressure unit 'furlongs'") && Contains("kPa"));
    CHECK_THROWS_WITH(parse_quantity("60X", Quantity::temperature), Contains("unknown temperature unit 'X'"));
    CHECK_THROWS_WITH(parse_quantity("120 m3/day", Quantity::flow), Contains("gpm"));
    CHECK_THROWS_WITH(parse_quantity("35", Quantity::pressure), Contains("no unit"));
    CHECK_THROWS_WITH(parse_quantity("kPa", Quantity::pressure), Contains("expected a decimal number"));
    // strtod would read these as 16 and infinity: a person types decimals.
    CHECK_THROWS_WITH(parse_quantity("0x10kPa", Quantity::pressure), Contains("expected a decimal number"));
    CHECK_THROWS_WITH(parse_quantity("infC", Quantity::temperature), Contains("expected a decimal number"));
    CHECK_THROWS_AS(parse_full_scale("0x32g"), UsageError);
    CHECK_THROWS_WITH(parse_quantity("", Quantity::flow), Contains("no value"));
    CHECK_THROWS_WITH(parse_quantity("   ", Quantity::length), Contains("no value"));
    CHECK_THROWS_WITH(parse_quantity("nan kPa", Quantity::pressure), Contains("expected a decimal number"));
    CHECK_THROWS_WITH(parse_quantity("inf m", Quantity::length), Contains("expected a decimal number"));
    CHECK_THROWS_WITH(parse_quantity("-300C", Quantity::temperature), Contains("absolute zero"));
    CHECK_THROWS_AS(parse_quantity("35kPa", Quantity::length), std::invalid_argument);  // a pressure is not a length
}

namespace {

std::filesystem::path scratch(const std::string& name, const std::string& text) {
    const auto dir = std::filesystem::temp_directory_path() / ("cavitas-units-test-" + std::to_string(::getpid()));
    std::filesystem::create_directories(dir);
    const auto p = dir / name;
    std::ofstream(p) << text;
    return p;
}

}  // namespace

TEST_CASE("Operating-point text from flags: errors name the flag, unknown keys are refused", "[src][units]") {
    TextOrigin flags;
    flags.flags = true;
    const auto op = parse_operating_point({{"suction_pressure", "5psig"}, {"temperature", "140F"}, {"flow", "500gpm"}},
                                          flags);
    CHECK(op.pressure_reference == cavitas::models::PressureReference::gauge);
    CHECK_THAT(*op.temperature_k, WithinAbs(333.15, 1e-12));
    CHECK_THROWS_WITH(parse_operating_point({{"flow", "12 furlongs"}}, flags), Contains("--flow '12 furlongs'"));
    CHECK_THROWS_AS(parse_operating_point({{"flow", "12 furlongs"}}, flags), UsageError);
    CHECK_THROWS_WITH(parse_operating_point({{"suction_pressure", "5psig"}, {"pressure_ref", "absolute"}}, flags),
                      Contains("says gauge"));
    CHECK_THROWS_WITH(parse_operating_point({{"barometric", "14.7psig"}}, flags), Contains("absolute pressure"));
    TextOrigin file;
    file.file = "x.op.toml";
    CHECK_THROWS_WITH(parse_operating_point({{"temprature", "14 C"}}, file),
                      Contains("x.op.toml: temprature is not an operating-point field"));
    CHECK_THROWS_AS(parse_operating_point({{"temperature", "14"}}, file), InputError);
}

TEST_CASE("A sidecar TOML file is read, with errors naming the file and line", "[src][units]") {
    const auto curve = scratch("p.npsh3.csv", "# maker's test\nflow [m3/h], npsh3 [m]\n100, 2.0\n200, 3.0\n300, 5.0\n");
    const auto good = scratch("good.op.toml",
                              "suction_pressure = \"-38 kPa\"\ntemperature = \"14 C\"\nelevation = \"62 m\"\n"
                              "flow = \"150 m3/h\"\nnpsh3_curve = \"p.npsh3.csv\"\nspeed = \"1485 rpm\"\n"
                              "note = \"sump level low\"\n");
    const auto op = read_operating_point_file(good.string());
    CHECK(*op.suction_pressure_pa == -38000.0);
    CHECK(*op.rpm == 1485.0);
    CHECK(op.note == "sump level low");
    REQUIRE(op.npsh3_curve);
    CHECK_THAT(op.npsh3_curve->at(150.0 / 3600.0), WithinAbs(2.5, 1e-9));
    CHECK(sidecar_path_for("route/OW-P101_2026-11-04.wav") == "route/OW-P101_2026-11-04.op.toml");

    const auto bare = scratch("bare.op.toml", "temperature = 14\n");
    CHECK_THROWS_WITH(read_operating_point_file(bare.string()),
                      Contains("bare.op.toml:1") && Contains("temperature = \"14 C\""));
    const auto broken = scratch("broken.op.toml", "flow = \"150 m3/h\"\nsuction_pressure = \"-38 kPa\n");
    CHECK_THROWS_WITH(read_operating_point_file(broken.string()), Contains("broken.op.toml:2") && Contains("TOML"));
    const auto table = scratch("table.op.toml", "[pump]\nflow = \"1 m3/h\"\n");
    CHECK_THROWS_WITH(read_operating_point_file(table.string()), Contains("must be a string"));
    CHECK_THROWS_WITH(read_operating_point_file("no-such.op.toml"), Contains("no-such.op.toml: no such"));
}

TEST_CASE("An NPSH3 curve file is read, with errors naming the file and line", "[src][units]") {
    const auto us = scratch("us.csv", "flow [gpm], npsh3 [ft]\r\n400, 8\r\n800, 14\r\n");
    const auto c = read_npsh3_curve(us.string());
    CHECK_THAT(c.points()[1].npsh3_m, WithinRel(14 * 0.3048, 1e-15));
    CHECK_THROWS_WITH(read_npsh3_curve(scratch("h.csv", "q, h\n1, 2\n").string()), Contains("h.csv:1") && Contains("header"));
    CHECK_THROWS_WITH(read_npsh3_curve(scratch("u.csv", "flow [bbl/d], npsh3 [m]\n1, 2\n").string()),
                      Contains("u.csv:1") && Contains("bbl/d"));
    CHECK_THROWS_WITH(read_npsh3_curve(scratch("n.csv", "flow [m3/h], npsh3 [m]\n100, 2\n150, two\n").string()),
                      Contains("n.csv:3"));
    CHECK_THROWS_WITH(read_npsh3_curve(scratch("c.csv", "flow [m3/h], npsh3 [m]\n100, 2\n90, 3\n").string()),
                      Contains("c.csv") && Contains("increase"));
    CHECK_THROWS_WITH(read_npsh3_curve(scratch("e.csv", "").string()), Contains("empty"));
    CHECK_THROWS_WITH(read_npsh3_curve(scratch("w.csv", "flow [m3/h], npsh3 [m]\n100, 2, 7\n").string()),
                      Contains("w.csv:2") && Contains("two columns"));
}
