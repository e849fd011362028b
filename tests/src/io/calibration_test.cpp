// Sensitivity, gain and units: from a file's values to engineering units.
#include <catch2/catch.hpp>

#include <cmath>
#include <vector>

#include "src/io/calibration.hpp"
#include "src/io/errors.hpp"
#include "src/io/recording.hpp"
#include "src/io/sources.hpp"

using namespace cavitas::app;
using Catch::Matchers::Contains;
using Catch::Matchers::WithinRel;

namespace {
// Standard gravity, 9.80665 m/s2 exactly (ISO 80000-3; CGPM 1901).
constexpr double kGn = 9.80665;
}  // namespace

TEST_CASE("Sensitivities are read in the forms data sheets print", "[src][calibration]") {
    CHECK_THAT(parse_sensitivity("100mV/g").volts_per_unit, WithinRel(0.1, 1e-15));
    CHECK(parse_sensitivity("100mV/g").unit.name == "g");
    CHECK_THAT(parse_sensitivity("10.2 mV/(m/s2)").volts_per_unit, WithinRel(0.0102, 1e-15));
    CHECK(parse_sensitivity("10.2 mV/(m/s2)").unit.name == "m/s2");
    CHECK_THAT(parse_sensitivity("50 mV/Pa").volts_per_unit, WithinRel(0.05, 1e-15));
    // Hydrophones: -200 dB re 1 V/uPa is 10^(-10) V/uPa = 10^(-4) V/Pa (20 log10 of a voltage
    // ratio, common practice, no source; 1 Pa = 10^6 uPa by definition).
    CHECK_THAT(parse_sensitivity("-200 dB re 1 V/uPa").volts_per_unit, WithinRel(1e-4, 1e-12));
    CHECK_THAT(parse_sensitivity("-200dB re 1V/\xC2\xB5Pa").volts_per_unit, WithinRel(1e-4, 1e-12));
    CHECK_THAT(parse_sensitivity("1e-4 V/Pa").volts_per_unit, WithinRel(1e-4, 1e-15));
    CHECK_THROWS_AS(parse_sensitivity("100"), UsageError);
    CHECK_THROWS_AS(parse_sensitivity("-5mV/g"), UsageError);
    CHECK_THROWS_WITH(parse_sensitivity("100mV/furlong"), Contains("furlong"));
}

TEST_CASE("A gain is a factor or a level in dB", "[src][calibration]") {
    CHECK(parse_gain("10") == 10.0);
    CHECK_THAT(parse_gain("20dB"), WithinRel(10.0, 1e-12));  // 10^(20/20)
    CHECK_THAT(parse_gain("6 dB"), WithinRel(1.99526231497, 1e-9));
    CHECK_THROWS_AS(parse_gain("ten"), UsageError);
    CHECK_THROWS_AS(parse_gain("0"), UsageError);
}

TEST_CASE("100 mV/g with gain 10 turns a 1 V sine into 1 g, 9.80665 m/s2", "[src][calibration]") {
    // Hand computation: 1 V / (10 x 0.1 V/g) = 1 g; 1 g = 9.80665 m/s2 (standard gravity).
    CalibrationText t;
    t.sensitivity = "100mV/g";
    t.gain = "10";
    const Calibration c = resolve_calibration(t, "V", "sine.csv");
    CHECK(c.unit == "g");
    CHECK_THAT(c.full_scale, WithinRel(1.0, 1e-12));
    const double fs_hz = 1000.0;
    std::vector<float> volts(1000);
    for (std::size_t i = 0; i < volts.size(); ++i)
        volts[i] = static_cast<float>(std::sin(2.0 * M_PI * 50.0 * static_cast<double>(i) / fs_hz));
    MemorySource src(volts, fs_hz, c);
    std::vector<float> got(volts.size());
    REQUIRE(src.read(got) == got.size());
    float peak = 0.0f;
    for (float v : got) peak = std::max(peak, std::abs(v));
    CHECK_THAT(peak, WithinRel(1.0f, 1e-6f));
    // The same in m/s2: a file stating mV against a baseline in m/s2.
    t.sensitivity = "10.19716 mV/(m/s2)";  // 100 mV/g / 9.80665
    const Calibration m = resolve_calibration(t, "mV", "sine.uff");
    CHECK(m.unit == "m/s2");
    CHECK_THAT(1000.0 * m.full_scale, WithinRel(1.0 / (10 * 0.01019716), 1e-9));
    StoredCalibration in_g{Calibration{1.0, "g", ""}, "g"};
    const Calibration conv = resolve_calibration({}, "m/s2", "x.uff", in_g);
    CHECK(conv.unit == "g");
    CHECK_THAT(conv.full_scale, WithinRel(1.0 / kGn, 1e-15));
}

TEST_CASE("A sound file needs its full scale in volts before a sensitivity", "[src][calibration]") {
    CalibrationText t;
    t.sensitivity = "100mV/g";
    CHECK_THROWS_WITH(resolve_calibration(t, "FS", "a.wav"), Contains("--full-scale in volts"));
    t.full_scale = "10V";
    t.gain = "20dB";
    const Calibration c = resolve_calibration(t, "FS", "a.wav");
    CHECK(c.unit == "g");
    CHECK_THAT(c.full_scale, WithinRel(10.0, 1e-12));  // 10 V / (10 x 0.1 V/g)
    CHECK_THAT(c.account, Contains("100mV/g"));
}

TEST_CASE("Calibrations that do not fit the file are refused by name", "[src][calibration]") {
    CalibrationText t;
    t.sensitivity = "100mV/g";
    CHECK_THROWS_WITH(resolve_calibration(t, "m/s^2", "p.uff"), Contains("p.uff") && Contains("not volts"));
    CalibrationText fs;
    fs.full_scale = "50g";
    CHECK_THROWS_WITH(resolve_calibration(fs, "g", "p.csv"), Contains("--full-scale is for sound files"));
    CHECK_THROWS_WITH(resolve_calibration({}, "furlongs", "p.csv"), Contains("'furlongs'"));
    StoredCalibration in_g{Calibration{50.0, "g", ""}, "FS"};
    CHECK_THROWS_WITH(resolve_calibration({}, "Pa", "h.uff", in_g), Contains("speaks g"));
    CalibrationText gain_only;
    gain_only.gain = "10";
    CHECK_THROWS_AS(resolve_calibration(gain_only, "V", "v.csv"), UsageError);
}

TEST_CASE("A baseline's calibration reads files whose values come as its did", "[src][calibration]") {
    const StoredCalibration wav{Calibration{50.0, "g", "full scale 50g"}, "FS"};
    const Calibration c = resolve_calibration({}, "FS", "b.wav", wav);
    CHECK(c.full_scale == 50.0);
    CHECK(c.unit == "g");
    // Volts learned with a sensitivity: another file in volts is read alike.
    const StoredCalibration volts{Calibration{0.5, "g", "sensitivity 200mV/g, gain 10"}, "V"};
    CHECK(resolve_calibration({}, "V", "c.csv", volts).full_scale == 0.5);
    CHECK_THAT(resolve_calibration({}, "mV", "c.uff", volts).full_scale, WithinRel(0.5e-3, 1e-15));
    // A file in volts against a baseline that did not learn from volts: the sensitivity is needed.
    CHECK_THROWS_WITH(resolve_calibration({}, "V", "d.csv", wav), Contains("--sensitivity"));
}
