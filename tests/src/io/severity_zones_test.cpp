// The analyst's severity zone file (src/io/severity_zones.hpp).
#include <catch2/catch.hpp>

#include <cmath>
#include <string>

#include "src/analysis/analysis.hpp"
#include "src/io/errors.hpp"
#include "src/io/severity_zones.hpp"

using namespace cavitas;
using Catch::Matchers::Contains;

namespace {
const std::string kGood =
    "# severity zones for a test class of pumps\n"
    "source = \"ISO 10816-7:2009, category II, < 200 kW\"\n"
    "band_hz = [10, 1000]\n"
    "a_b_mm_s = 2.8\n"
    "b_c_mm_s = 4.5\n"
    "c_d_mm_s = 7.1\n";
}

TEST_CASE("A zone file is parsed and a value placed in its zone", "[severity]") {
    // The boundaries are the file's own (the project ships none).
    const models::SeverityZones z = app::parse_severity_zones(kGood, "zones.toml");
    CHECK(z.source == "ISO 10816-7:2009, category II, < 200 kW");
    CHECK(z.band_low_hz == 10.0);
    CHECK(z.band_high_hz == 1000.0);
    CHECK(z.a_b_mm_s == 2.8);
    CHECK(z.b_c_mm_s == 4.5);
    CHECK(z.c_d_mm_s == 7.1);
    CHECK(models::zone_of(3.1, z) == models::SeverityZone::B);
    CHECK(models::zone_of(4.5, z) == models::SeverityZone::C);
    // band_hz is optional: 10-1000 Hz, the band of ISO 10816 (methods notes 2.5).
    const models::SeverityZones d =
        app::parse_severity_zones("source = \"x\"\na_b_mm_s = 1\nb_c_mm_s = 2\nc_d_mm_s = 3\n", "z.toml");
    CHECK(d.band_low_hz == 10.0);
    CHECK(d.band_high_hz == 1000.0);
    CHECK(d.c_d_mm_s == 3.0);
}

TEST_CASE("Malformed zone files are refused naming the file, the key and the value", "[severity]") {
    struct Case {
        const char* text;
        const char* words;
    };
    const Case cases[] = {
        {"a_b_mm_s = 2.8\nb_c_mm_s = 4.5\nc_d_mm_s = 7.1\n", "source is missing"},
        {"source = \"  \"\na_b_mm_s = 2.8\nb_c_mm_s = 4.5\nc_d_mm_s = 7.1\n", "source is empty"},
        {"source = \"x\"\na_b_mm_s = 4.5\nb_c_mm_s = 2.8\nc_d_mm_s = 7.1\n", "b_c_mm_s = 2.8 must be above a_b_mm_s = 4.5"},
        {"source = \"x\"\na_b_mm_s = 2.8\nb_c_mm_s = 4.5\nc_d_mm_s = 4.5\n", "c_d_mm_s = 4.5 must be above"},
        {"source = \"x\"\na_b_mm_s = -1\nb_c_mm_s = 4.5\nc_d_mm_s = 7.1\n", "a_b_mm_s = -1 must be a positive"},
        {"source = \"x\"\na_b_mm_s = nan\nb_c_mm_s = 4.5\nc_d_mm_s = 7.1\n", "a_b_mm_s = nan must be a positive"},
        {"source = \"x\"\na_b_mm_s = \"2.8\"\nb_c_mm_s = 4.5\nc_d_mm_s = 7.1\n", "a_b_mm_s must be a number"},
        {"source = \"x\"\na_b_mm_s = 2.8\nb_c_mm_s = 4.5\n", "c_d_mm_s is missing"},
        {"source = \"x\"\nband_hz = [0.1, 1000]\na_b_mm_s = 2.8\nb_c_mm_s = 4.5\nc_d_mm_s = 7.1\n",
         "band_hz = [0.1, 1000] must lie within 1-10000 Hz"},
        {"source = \"x\"\nband_hz = [1000, 10]\na_b_mm_s = 2.8\nb_c_mm_s = 4.5\nc_d_mm_s = 7.1\n", "low edge must be below"},
        {"source = \"x\"\nband_hz = 10\na_b_mm_s = 2.8\nb_c_mm_s = 4.5\nc_d_mm_s = 7.1\n", "band_hz must be two numbers"},
        {"source = \"x\"\nzone_a = 1\na_b_mm_s = 2.8\nb_c_mm_s = 4.5\nc_d_mm_s = 7.1\n", "zone_a is not a zone file key"},
        {"source = \"x\"\na_b_mm_s = 2.8\nb_c_mm_s = = 4.5\n", "not valid TOML"},
    };
    for (const Case& c : cases) {
        INFO(c.text);
        CHECK_THROWS_WITH(app::parse_severity_zones(c.text, "zones.toml"), Contains("zones.toml") && Contains(c.words));
        CHECK_THROWS_AS(app::parse_severity_zones(c.text, "zones.toml"), app::InputError);
    }
    const std::string long_source = "source = \"" + std::string(201, 'x') + "\"\na_b_mm_s = 1\nb_c_mm_s = 2\nc_d_mm_s = 3\n";
    CHECK_THROWS_WITH(app::parse_severity_zones(long_source, "zones.toml"), Contains("201 bytes long"));
}

TEST_CASE("Velocity is given only for recordings calibrated in acceleration, and says why not otherwise", "[severity]") {
    // A flat acceleration PSD of 1e-4 g^2/Hz on 1 Hz lines: the overall in 10-1000 Hz is
    // sqrt(sum 1e-4 g0^2 / (2 pi f)^2) (calculus), the same sum done here by hand.
    app::AnalyzedRecording rec;
    rec.analysis.setup.fs_hz = 25600.0;
    rec.analysis.mean_psd.assign(12801, 1e-4);
    rec.analysis.psd_bin_hz = 1.0;
    rec.analysis.psd_enbw_hz = 1.5;
    rec.info.calibration.unit = "g";
    double sum = 0.0;
    for (int k = 10; k <= 1000; ++k) sum += 1e-4 * 9.80665 * 9.80665 / std::pow(2.0 * M_PI * k, 2);
    const app::VelocityFinding v = app::velocity_finding(rec, std::nullopt);
    REQUIRE(v.overall_rms_mm_s);
    CHECK(*v.overall_rms_mm_s == Catch::Detail::Approx(1000.0 * std::sqrt(sum)).epsilon(1e-12));
    CHECK_FALSE(v.zone);
    for (const char* unit : {"FS", "V", "Pa", ""}) {
        rec.info.calibration.unit = unit;
        const app::VelocityFinding none = app::velocity_finding(rec, std::nullopt);
        CHECK_FALSE(none.overall_rms_mm_s);
        CHECK_THAT(none.unavailable, Contains("not calibrated in acceleration"));
    }
}
