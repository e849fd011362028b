// NPSH available, margin, Thoma number and the standard atmosphere, each
// checked against a published value or a hand calculation shown beside it.
#include <catch2/catch.hpp>

#include <cmath>
#include <numbers>

#include "models/hydraulics.hpp"
#include "models/margin_reading.hpp"
#include "models/operating_point.hpp"
#include "models/water.hpp"

using namespace cavitas::models;
using Catch::Matchers::Contains;
using Catch::Matchers::WithinAbs;
using Catch::Matchers::WithinRel;

TEST_CASE("The standard atmosphere matches its published table", "[models][hydraulics]") {
    // ISO 2533 / US Standard Atmosphere 1976: 101325 Pa at sea level and 22632.1 Pa at the
    // tropopause, 11000 m (the layer table of the barometric formula, base of layer 1).
    CHECK(standard_atmosphere_pa(0.0) == 101325.0);
    CHECK_THAT(standard_atmosphere_pa(11000.0), WithinAbs(22632.1, 0.5));
    // Common practice, no source: near sea level the pressure falls about 1.2 kPa per 100 m.
    CHECK_THAT(standard_atmosphere_pa(0.0) - standard_atmosphere_pa(100.0), WithinAbs(1200.0, 20.0));
    CHECK_THROWS_WITH(standard_atmosphere_pa(12000.0), Contains("barometric"));
    CHECK_THROWS_AS(standard_atmosphere_pa(-1000.0), std::invalid_argument);
}

TEST_CASE("A worked NPSHa example agrees with the hand calculation in SI and in US units", "[models][hydraulics]") {
    // The liquid: water at 60 C (= 140 F exactly). Its vapour pressure and density come from
    // IAPWS-IF97, whose verification values water_test.cpp checks: p_v = 19945.80 Pa; rho at the
    // suction pressure about 983.2 kg/m3.
    const double T = 333.15;
    const double pv = saturation_pressure_pa(T);
    REQUIRE_THAT(pv, WithinAbs(19945.80, 0.01));

    SECTION("SI: 35 kPa gauge, barometer 101.325 kPa, gauge 0.8 m above the eye, 120 m3/h in a 150 mm bore") {
        // By hand:
        //   p_abs          = 101325 + 35000                      = 136325 Pa
        //   rho(60 C, 136 kPa)                                   = 983.226 kg/m3 (IF97 region 1)
        //   pressure head  = (136325 - 19945.80) / (983.226 * 9.80665) = 116379.20 / 9642.16 = 12.0698 m
        //   v              = (120 / 3600) / (pi * 0.15^2 / 4) = 0.0333333 / 0.0176715 = 1.88628 m/s
        //   velocity head  = 1.88628^2 / (2 * 9.80665) = 3.55806 / 19.6133 = 0.18141 m
        //   z              = 0.8 m
        //   NPSHa          = 12.0698 + 0.1814 + 0.8 = 13.0512 m
        const double rho = liquid_water_density_kg_m3(T, 136325.0);
        REQUIRE_THAT(rho, WithinAbs(983.226, 0.001));
        SuctionState s;
        s.absolute_pressure_pa = 136325.0;
        s.gauge_height_m = 0.8;
        s.velocity_m_s = pipe_velocity_m_s(120.0 / 3600.0, 0.150);
        s.liquid = water_properties(T, 136325.0);
        CHECK_THAT(s.velocity_m_s, WithinAbs(1.88628, 1e-5));
        const NpshAvailable n = npsh_available(s);
        CHECK_THAT(n.pressure_head_m, WithinAbs(12.0698, 1e-4));
        CHECK_THAT(n.velocity_head_m, WithinAbs(0.18141, 1e-5));
        CHECK(n.elevation_head_m == 0.8);
        CHECK_THAT(n.npsha_m, WithinAbs(13.0512, 0.01));
    }

    SECTION("US: 5 psig, barometer 14.7 psia, gauge 2.5 ft above the eye, 500 gpm in a 6 in bore") {
        // By hand, in US units (psi, ft, lb/ft3; with standard gravity 1 lbf = 1 lb, so a head in ft
        // is a pressure in lbf/ft2 over a density in lb/ft3):
        //   p_abs          = 5 + 14.7                                = 19.7 psia
        //   p_v            = 19945.80 Pa / 6894.757 Pa/psi           = 2.89290 psia
        //   rho            = 983.22 kg/m3 * 0.0624280 (lb/ft3)/(kg/m3) = 61.3807 lb/ft3
        //   pressure head  = (19.7 - 2.89290) * 144 / 61.3807 = 2420.22 / 61.3807 = 39.4296 ft
        //   v              = (500 * 0.133681 ft3/gal / 60) / (pi * 0.5^2 / 4) = 1.11401 / 0.196350 = 5.67360 ft/s
        //   velocity head  = 5.67360^2 / (2 * 32.1740) = 32.1897 / 64.3480 = 0.50024 ft
        //   z              = 2.5 ft
        //   NPSHa          = 39.4296 + 0.5002 + 2.5 = 42.4298 ft = 12.9326 m
        const double psi = 6894.757293168;  // Pa
        const double ft = 0.3048, in = 0.0254, gal = 231.0 * in * in * in;
        SuctionState s;
        s.absolute_pressure_pa = (5.0 + 14.7) * psi;
        s.gauge_height_m = 2.5 * ft;
        s.velocity_m_s = pipe_velocity_m_s(500.0 * gal / 60.0, 6.0 * in);
        s.liquid = water_properties(T, s.absolute_pressure_pa);
        CHECK_THAT(s.velocity_m_s / ft, WithinAbs(5.67360, 1e-4));
        const NpshAvailable n = npsh_available(s);
        CHECK_THAT(n.pressure_head_m / ft, WithinAbs(39.4296, 2e-3));
        CHECK_THAT(n.velocity_head_m / ft, WithinAbs(0.50024, 1e-4));
        CHECK_THAT(n.npsha_m / ft, WithinAbs(42.4298, 0.01 / ft));
        CHECK_THAT(n.npsha_m, WithinAbs(12.9326, 0.01));
    }
}

TEST_CASE("The plant Thoma number agrees with the hand calculation", "[models][hydraulics]") {
    // sigma = (H_atm - H_v - H_s) / H (JSME Mechanical Engineering wiki, "Thoma's cavitation
    // coefficient"). Water at 20 C, standard atmosphere, runner 3 m above tailwater, net head 50 m.
    // By hand: rho g = 998.206 * 9.80665 = 9789.06 N/m3; H_atm = 101325 / 9789.06 = 10.3508 m;
    //          H_v = 2339.22 / 9789.06 = 0.23896 m; sigma = (10.3508 - 0.2390 - 3) / 50 = 0.142238.
    const LiquidProperties w = water_properties(293.15, 101325.0);
    CHECK_THAT(w.vapour_pressure_pa, WithinAbs(2339.22, 0.01));
    CHECK_THAT(w.density_kg_m3, WithinAbs(998.206, 0.001));
    CHECK_THAT(thoma_sigma(101325.0, w, 3.0, 50.0), WithinAbs(0.142238, 2e-6));
    // A submerged runner (negative setting) raises sigma by |H_s| / H.
    CHECK_THAT(thoma_sigma(101325.0, w, -2.0, 50.0) - thoma_sigma(101325.0, w, 3.0, 50.0), WithinAbs(0.1, 1e-12));
    CHECK_THROWS_AS(thoma_sigma(101325.0, w, 3.0, 0.0), std::invalid_argument);
}

TEST_CASE("An NPSH3 curve is read linearly between its points and never extrapolated", "[models][hydraulics]") {
    const double h = 1.0 / 3600.0;  // m3/s per m3/h
    const Npsh3Curve c({{100 * h, 2.0}, {200 * h, 3.0}, {300 * h, 5.0}});
    CHECK_THAT(c.at(100 * h), WithinAbs(2.0, 1e-12));
    CHECK_THAT(c.at(150 * h), WithinAbs(2.5, 1e-12));  // computed from the definition: halfway
    CHECK_THAT(c.at(275 * h), WithinAbs(4.5, 1e-12));
    CHECK_THAT(c.at(300 * h), WithinAbs(5.0, 1e-12));
    CHECK_FALSE(c.covers(301 * h));
    CHECK_THROWS_AS(c.at(99 * h), std::out_of_range);
    CHECK_THROWS_WITH(Npsh3Curve({{1.0, 2.0}}), Contains("two"));
    CHECK_THROWS_WITH(Npsh3Curve({{1.0, 2.0}, {1.0, 3.0}}), Contains("point 2") && Contains("increase"));
    CHECK_THROWS_WITH(Npsh3Curve({{1.0, 2.0}, {2.0, 0.0}}), Contains("greater than zero"));
}

TEST_CASE("The margin is classed against the pump-standard guidance", "[models][hydraulics]") {
    // Guidance minimum: max(1.1 x NPSH3, NPSH3 + 0.6 m) (ANSI/HI 9.6.1 as summarised; see hydraulics.hpp).
    // NPSH3 4 m -> max(4.4, 4.6) = 4.6 m; NPSH3 10 m -> max(11, 10.6) = 11 m.
    CHECK(npsh_margin(3.9, 4.0).margin_class == MarginClass::below_npsh3);
    CHECK(npsh_margin(4.5, 4.0).margin_class == MarginClass::thin);
    CHECK_THAT(npsh_margin(4.5, 4.0).required_m, WithinAbs(4.6, 1e-12));
    CHECK(npsh_margin(4.6, 4.0).margin_class == MarginClass::adequate);
    CHECK(npsh_margin(10.8, 10.0).margin_class == MarginClass::thin);
    CHECK_THAT(npsh_margin(10.8, 10.0).required_m, WithinAbs(11.0, 1e-12));
    CHECK(npsh_margin(8.0, 4.0).margin_class == MarginClass::large);
    // Margin and ratio from the definition (kanesdictionary: difference NPSHA - NPSH3, ratio NPSHA / NPSH3).
    const NpshMargin m = npsh_margin(6.11188, 4.0);
    CHECK_THAT(m.margin_m, WithinAbs(2.11188, 1e-12));
    CHECK_THAT(m.ratio, WithinAbs(1.52797, 1e-5));
    CHECK_THAT(margin_guidance_text(), Contains("ANSI/HI 9.6.1"));
}

namespace {

OperatingPoint pump_at(double gauge_kpa, double npsh3_m) {
    OperatingPoint op;
    op.suction_pressure_pa = gauge_kpa * 1000.0;
    op.barometric_pa = 101325.0;
    op.temperature_k = 293.15;
    op.npsh3_m = npsh3_m;
    return op;
}

}  // namespace

TEST_CASE("An operating point becomes NPSHa, margin and notes", "[models][hydraulics]") {
    // 0 kPa gauge at 20 C under 101.325 kPa: NPSHa = (101325 - 2339.22) / (998.206 * 9.80665) = 10.1119 m
    // (gauge level with the datum, no velocity head).
    const Hydraulics h = evaluate_operating_point(pump_at(0.0, 4.0));
    REQUIRE(h.npsh);
    CHECK_THAT(h.npsh->npsha_m, WithinAbs(10.1119, 1e-4));
    REQUIRE(h.margin);
    CHECK(h.margin->margin_class == MarginClass::large);
    CHECK_THAT(h.notes.front(), Contains("gauge height not given"));

    OperatingPoint absent_barometer = pump_at(0.0, 4.0);
    absent_barometer.barometric_pa.reset();
    const Hydraulics hb = evaluate_operating_point(absent_barometer);
    CHECK(hb.barometric_source == "standard atmosphere at sea level (assumed)");

    OperatingPoint high = pump_at(0.0, 4.0);
    high.barometric_pa.reset();
    high.elevation_m = 1000.0;
    const Hydraulics hh = evaluate_operating_point(high);
    CHECK(*hh.barometric_pa == standard_atmosphere_pa(1000.0));
    CHECK(hh.npsh->npsha_m < h.npsh->npsha_m - 1.0);  // about 1.16 m less head at 1000 m

    OperatingPoint absolute = pump_at(0.0, 4.0);
    absolute.suction_pressure_pa = 50000.0;
    absolute.pressure_reference = PressureReference::absolute;
    CHECK_THAT(*evaluate_operating_point(absolute).absolute_suction_pa, WithinAbs(50000.0, 0.0));
}

TEST_CASE("Operating points that contradict physics or each other are refused with words", "[models][hydraulics]") {
    OperatingPoint op = pump_at(-110.0, 4.0);  // below -1 atm gauge
    CHECK_THROWS_WITH(evaluate_operating_point(op), Contains("below -1 atm"));
    op = pump_at(-100.0, 4.0);
    op.barometric_pa = 90000.0;  // -100 kPa gauge at 90 kPa barometric: below full vacuum
    CHECK_THROWS_WITH(evaluate_operating_point(op), Contains("below full vacuum"));
    op = pump_at(10.0, 4.0);
    op.temperature_k = 650.0;
    CHECK_THROWS_WITH(evaluate_operating_point(op), Contains("critical point"));
    op.temperature_k = 630.0;
    CHECK_THROWS_WITH(evaluate_operating_point(op), Contains("350 C"));
    op.temperature_k = 260.0;
    CHECK_THROWS_WITH(evaluate_operating_point(op), Contains("freezes"));
    op.temperature_k.reset();
    CHECK_THROWS_WITH(evaluate_operating_point(op), Contains("temperature"));
    op = pump_at(10.0, 4.0);
    op.density_kg_m3 = 850.0;  // without a vapour pressure
    CHECK_THROWS_WITH(evaluate_operating_point(op), Contains("both"));
    op = pump_at(10.0, 4.0);
    op.bore_m = 0.15;  // without a flow
    CHECK_THROWS_WITH(evaluate_operating_point(op), Contains("flow"));
    op = pump_at(10.0, 4.0);
    op.npsh3_m.reset();
    op.npsh3_curve = Npsh3Curve({{0.01, 2.0}, {0.05, 4.0}});
    CHECK_THROWS_WITH(evaluate_operating_point(op), Contains("flow"));
    op.flow_m3_s = 0.08;  // outside the curve: no margin, and the reason
    const Hydraulics h = evaluate_operating_point(op);
    CHECK_FALSE(h.margin);
    REQUIRE(h.margin_unavailable);
    CHECK_THAT(*h.margin_unavailable, Contains("outside") && Contains("not extrapolated"));
    op = pump_at(10.0, 4.0);
    op.runner_setting_m = 3.0;  // without the net head
    CHECK_THROWS_WITH(evaluate_operating_point(op), Contains("net head"));
}

TEST_CASE("A liquid other than water uses the vapour pressure and density given", "[models][hydraulics]") {
    // A light hydrocarbon at its bubble point: p_abs = p_v gives a pressure head of zero (from the definition).
    OperatingPoint op;
    op.suction_pressure_pa = 350000.0;
    op.pressure_reference = PressureReference::absolute;
    op.vapour_pressure_pa = 350000.0;
    op.density_kg_m3 = 550.0;
    op.gauge_height_m = 1.5;
    const Hydraulics h = evaluate_operating_point(op);
    CHECK(h.liquid->source == "given");
    CHECK_THAT(h.npsh->pressure_head_m, WithinAbs(0.0, 1e-12));
    CHECK_THAT(h.npsh->npsha_m, WithinAbs(1.5, 1e-12));
}

TEST_CASE("The margin is read beside the acoustic verdict and disagreement is flagged both ways", "[models][hydraulics]") {
    auto reading = [](Verdict v, double npsha, double npsh3) {
        Hydraulics h;
        h.npsh = NpshAvailable{npsha, 0.0, 0.0, npsha};
        h.npsh3_m = npsh3;
        h.margin = npsh_margin(npsha, npsh3);
        return read_margin(v, h);
    };
    // Normal at a margin near NPSH3: at risk.
    CHECK(reading(Verdict::normal, 4.2, 4.0).agreement == MarginAgreement::at_risk);
    CHECK(reading(Verdict::normal, 3.8, 4.0).agreement == MarginAgreement::at_risk);
    CHECK(reading(Verdict::normal, 6.0, 4.0).agreement == MarginAgreement::consistent);
    // Developed at a large margin: not explained by the suction pressure; the note says where to look.
    const MarginReading unexplained = reading(Verdict::developed, 12.0, 4.0);
    CHECK(unexplained.agreement == MarginAgreement::unexplained);
    CHECK_THAT(unexplained.notes.front(), Contains("recirculation") && Contains("air") && Contains("blocked"));
    CHECK(reading(Verdict::developed, 4.2, 4.0).agreement == MarginAgreement::consistent);
    // Incipient well above NPSH3 is expected (inception lies above it).
    CHECK(reading(Verdict::incipient, 12.0, 4.0).agreement == MarginAgreement::consistent);
    CHECK(reading(Verdict::indeterminate, 4.2, 4.0).agreement == MarginAgreement::no_verdict);
    CHECK_THAT(reading(Verdict::normal, 4.2, 4.0).summary, Contains("ratio 1.05"));
    // Without NPSH3 the margin is unknown.
    Hydraulics only;
    only.npsh = NpshAvailable{5.0, 0.0, 0.0, 5.0};
    CHECK(read_margin(Verdict::normal, only).agreement == MarginAgreement::margin_unknown);
}

TEST_CASE("A baseline learned at another flow is flagged", "[models][hydraulics]") {
    OperatingPoint b1, b2, now;
    b1.flow_m3_s = 0.110;
    b2.flow_m3_s = 0.114;
    const OperatingPointSummary s = summarize({{b1, {}}, {b2, {}}});
    CHECK_THAT(*s.flow_m3_s, WithinAbs(0.112, 1e-12));  // median of two: their mean
    now.flow_m3_s = 0.118;  // +5 %: comparable
    CHECK(compare_with_baseline(s, now).empty());
    now.flow_m3_s = 0.080;  // -29 %
    const auto d = compare_with_baseline(s, now);
    REQUIRE(d.size() == 1);
    CHECK_THAT(d.front().text, Contains("403.2 m3/h") && Contains("288 m3/h") && Contains("-29 %"));
    CHECK_FALSE(d.front().far);  // 71 % of the baseline's flow: off, not far (far_flow_share 0.5, our choice)
    now.flow_m3_s.reset();  // not stated now: nothing to compare
    CHECK(compare_with_baseline(s, now).empty());
    Finding f;
    f.verdict = Verdict::normal;
    f.raw_score = 0.9;
    flag_operating_point_differences(f, d);
    // The raw score takes the 0.85; the confidence is its calibration (classifier.hpp).
    CHECK_THAT(f.raw_score, WithinAbs(0.9 * 0.85, 1e-12));
    CHECK_THAT(f.confidence, WithinAbs(calibrated_confidence(0.9 * 0.85), 1e-12));
    CHECK(f.warnings.size() == 1);
    CHECK(f.grade != ConfidenceGrade::high);
    // The difference is a finding of its own, kind off_duty, with both flows in it.
    REQUIRE(f.other_findings.size() == 1);
    CHECK(f.other_findings.front().concern == Concern::off_duty);
    CHECK_THAT(f.other_findings.front().text, Contains("288 m3/h"));
}

TEST_CASE("A duty far from the baseline's is a finding of its own and makes the grade low", "[models][hydraulics]") {
    OperatingPoint b, now;
    b.flow_m3_s = 159.0 / 3600.0;  // the demo's OW-P102: baseline at 159 m3/h
    now.flow_m3_s = 55.0 / 3600.0;  // a throttled valve: 35 % of it (computed: 55 / 159 = 0.346)
    const auto d = compare_with_baseline(summarize({{b, {}}}), now);
    REQUIRE(d.size() == 1);
    CHECK(d.front().far);  // under half the baseline's flow (far_flow_share 0.5, our choice)
    CHECK_THAT(d.front().text, Contains("35 % of the baseline's flow") && Contains("not valid at this duty"));
    Finding f;
    f.verdict = Verdict::developed;
    f.raw_score = 0.97;
    f.confidence = calibrated_confidence(0.97);
    flag_operating_point_differences(f, d);
    CHECK(f.grade == ConfidenceGrade::low);
    // At 150 % of the baseline's flow: off, not yet far; beyond 1 / 0.5 = 200 %: far (run-out side).
    now.flow_m3_s = 1.5 * 159.0 / 3600.0;
    CHECK_FALSE(compare_with_baseline(summarize({{b, {}}}), now).front().far);
    now.flow_m3_s = 2.1 * 159.0 / 3600.0;
    CHECK(compare_with_baseline(summarize({{b, {}}}), now).front().far);
}

// grade_with_margin: NPSH3 is the 3 % head-drop point (ANSI/HI 14.6), so at or
// below it the pump cavitates by definition; under kNearBoilingNpshM (our
// choice, "about a metre") the liquid at the eye is near boiling.
TEST_CASE("A pump at or near boiling at the impeller eye is never judged normal", "[models]") {
    using namespace cavitas::models;
    auto hydraulics = [](double npsha_m, double npsh3_m) {
        Hydraulics h;
        h.npsh = NpshAvailable{npsha_m, 0.0, 0.0, npsha_m};
        if (npsh3_m > 0.0) h.margin = npsh_margin(npsha_m, npsh3_m);
        return h;
    };
    auto normal = [] {
        Finding f;
        f.verdict = Verdict::normal;
        f.confidence = 0.8;
        return f;
    };
    SECTION("NPSHa 0.1 m, no NPSH3: incipient on the operating point alone, with the missing evidence said") {
        Finding f = normal();
        CHECK(grade_with_margin(f, hydraulics(0.1, 0.0)));
        CHECK(f.verdict == Verdict::incipient);
        CHECK(f.hydraulic_only);
        CHECK(f.confidence <= 0.5);
        CHECK(f.grade == ConfidenceGrade::low);
        REQUIRE_FALSE(f.warnings.empty());
        CHECK(f.warnings.back().find("baseline may itself") != std::string::npos);
    }
    SECTION("NPSHa below NPSH3: developed") {
        Finding f = normal();
        CHECK(grade_with_margin(f, hydraulics(2.5, 3.0)));
        CHECK(f.verdict == Verdict::developed);
    }
    SECTION("an ample margin, an acoustic verdict already made, or no verdict: left as they are") {
        Finding f = normal();
        CHECK_FALSE(grade_with_margin(f, hydraulics(8.0, 3.0)));
        CHECK(f.verdict == Verdict::normal);
        Finding d = normal();
        d.verdict = Verdict::developed;
        CHECK_FALSE(grade_with_margin(d, hydraulics(0.2, 0.0)));
        CHECK(d.verdict == Verdict::developed);
        CHECK_FALSE(d.evidence.empty());  // the margin is still printed as evidence
        Finding i;
        CHECK_FALSE(grade_with_margin(i, hydraulics(0.2, 0.0)));
        CHECK(i.verdict == Verdict::indeterminate);
    }
}
