#include "models/operating_point.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>

#include "models/analyzer.hpp"
#include "models/text.hpp"

namespace cavitas::models {

namespace {

constexpr double kM3sToM3h = 3600.0;

template <class T>
void take(std::optional<T>& into, const std::optional<T>& from) {
    if (from) into = from;
}

}  // namespace

bool OperatingPoint::empty() const {
    return !suction_pressure_pa && !pressure_reference && !barometric_pa && !elevation_m && !temperature_k &&
           !gauge_height_m && !flow_m3_s && !bore_m && !npsh3_m && !npsh3_curve && !vapour_pressure_pa &&
           !density_kg_m3 && !rpm && !runner_setting_m && !net_head_m && !sigma_critical && note.empty();
}

void OperatingPoint::overlay(const OperatingPoint& o) {
    take(suction_pressure_pa, o.suction_pressure_pa);
    take(pressure_reference, o.pressure_reference);
    // Barometric pressure and elevation say the same thing: the one given last wins.
    if (o.barometric_pa) elevation_m.reset();
    if (o.elevation_m) barometric_pa.reset();
    take(barometric_pa, o.barometric_pa);
    take(elevation_m, o.elevation_m);
    take(temperature_k, o.temperature_k);
    take(gauge_height_m, o.gauge_height_m);
    take(flow_m3_s, o.flow_m3_s);
    take(bore_m, o.bore_m);
    // So do a single NPSH3 and a curve.
    if (o.npsh3_m) npsh3_curve.reset();
    if (o.npsh3_curve) npsh3_m.reset();
    take(npsh3_m, o.npsh3_m);
    if (o.npsh3_curve) {
        npsh3_curve = o.npsh3_curve;
        npsh3_curve_name = o.npsh3_curve_name;
    }
    take(vapour_pressure_pa, o.vapour_pressure_pa);
    take(density_kg_m3, o.density_kg_m3);
    take(rpm, o.rpm);
    take(runner_setting_m, o.runner_setting_m);
    take(net_head_m, o.net_head_m);
    take(sigma_critical, o.sigma_critical);
    if (!o.note.empty()) note = o.note;
}

Hydraulics evaluate_operating_point(const OperatingPoint& op, const MarginGuidance& guidance) {
    using std::invalid_argument;
    Hydraulics h;
    const bool turbine = op.runner_setting_m || op.net_head_m;
    const bool custom_liquid = op.vapour_pressure_pa || op.density_kg_m3;

    // Plain range checks, so that a value that slipped past the parser still reads clearly.
    if (op.flow_m3_s && !(*op.flow_m3_s >= 0.0)) throw invalid_argument("the flow must be zero or more");
    if (op.bore_m && !(*op.bore_m > 0.0)) throw invalid_argument("the suction bore must be greater than zero");
    if (op.npsh3_m && !(*op.npsh3_m > 0.0)) throw invalid_argument("NPSH3 must be greater than zero");
    if (op.density_kg_m3 && !(*op.density_kg_m3 > 0.0)) throw invalid_argument("the liquid density must be greater than zero");
    if (op.vapour_pressure_pa && !(*op.vapour_pressure_pa >= 0.0))
        throw invalid_argument("the vapour pressure must be zero or more");
    if (op.barometric_pa && !(*op.barometric_pa > 0.0))
        throw invalid_argument("the barometric pressure is an absolute pressure and must be greater than zero");
    if (op.net_head_m && !(*op.net_head_m > 0.0)) throw invalid_argument("the net head must be greater than zero");
    if (op.sigma_critical && !(*op.sigma_critical > 0.0))
        throw invalid_argument("the critical Thoma number must be greater than zero");
    // Plausibility: beyond these a value is a slip of the unit, not a machine.
    auto within = [](const std::optional<double>& v, double lo, double hi, const char* what) {
        if (v && !(*v >= lo && *v <= hi)) throw invalid_argument(fmt("%s of %.6g is implausible (expected %g .. %g)", what, *v, lo, hi));
    };
    within(op.suction_pressure_pa, -1e8, 1e8, "a suction pressure (Pa)");
    within(op.barometric_pa, 3e4, 1.2e5, "a barometric pressure (Pa)");
    within(op.vapour_pressure_pa, 0.0, 1e8, "a vapour pressure (Pa)");
    within(op.density_kg_m3, 1.0, 25000.0, "a liquid density (kg/m3)");
    within(op.bore_m, 0.0, 20.0, "a suction bore (m)");
    within(op.flow_m3_s, 0.0, 1e4, "a flow (m3/s)");
    within(op.gauge_height_m, -1000.0, 1000.0, "a gauge height (m)");
    within(op.npsh3_m, 0.0, 1000.0, "an NPSH3 (m)");
    within(op.net_head_m, 0.0, 3000.0, "a net head (m)");
    within(op.runner_setting_m, -1000.0, 1000.0, "a runner setting (m)");
    within(op.sigma_critical, 0.0, 100.0, "a critical Thoma number");
    within(op.rpm, 0.0, 1e5, "a shaft speed (rpm)");
    if (op.bore_m && !op.flow_m3_s)
        throw invalid_argument("a suction bore is only used with the flow (for the velocity head): give the flow too");
    if (op.npsh3_curve && !op.flow_m3_s)
        throw invalid_argument("an NPSH3 curve needs the operating flow to be read at: give the flow");
    if (turbine && !(op.runner_setting_m && op.net_head_m))
        throw invalid_argument("the Thoma number needs both the runner setting above tailwater and the net head");
    if (op.sigma_critical && !turbine)
        throw invalid_argument("a critical Thoma number needs the runner setting and the net head of the plant");
    if (custom_liquid && !(op.vapour_pressure_pa && op.density_kg_m3))
        throw invalid_argument("for a liquid other than water give both its vapour pressure and its density");

    // Barometric pressure: needed for a gauge reading and for the Thoma number.
    const bool gauge = !op.pressure_reference || *op.pressure_reference == PressureReference::gauge;
    const bool needs_barometric = (op.suction_pressure_pa && gauge) || turbine;
    if (op.barometric_pa) {
        h.barometric_pa = op.barometric_pa;
        h.barometric_source = "given";
    } else if (op.elevation_m) {
        h.barometric_pa = standard_atmosphere_pa(*op.elevation_m);
        h.barometric_source = fmt("standard atmosphere at %.0f m", *op.elevation_m);
    } else if (needs_barometric) {
        h.barometric_pa = kStandardAtmospherePa;
        h.barometric_source = "standard atmosphere at sea level (assumed)";
        h.notes.push_back("barometric pressure not given: the standard atmosphere at sea level (101.325 kPa) is "
                          "assumed; give the barometric pressure or the site elevation (each 100 m of elevation is "
                          "about 1.2 kPa, 0.12 m of water, less)");
    }

    // Absolute suction pressure.
    if (op.suction_pressure_pa) {
        const double p = *op.suction_pressure_pa;
        if (!std::isfinite(p)) throw invalid_argument("the suction pressure is not a number");
        if (gauge) {
            if (p < -kStandardAtmospherePa)
                throw invalid_argument(fmt("a gauge reading of %.3g kPa is below -1 atm (-101.325 kPa): no gauge reads "
                                           "below full vacuum; check the sign and the unit, or say the reading is "
                                           "absolute",
                                           p / 1000.0));
            h.absolute_suction_pa = *h.barometric_pa + p;
            if (!(*h.absolute_suction_pa > 0.0))
                throw invalid_argument(fmt("a gauge reading of %.4g kPa with a barometric pressure of %.4g kPa is below "
                                           "full vacuum; check the reading and the barometric pressure",
                                           p / 1000.0, *h.barometric_pa / 1000.0));
        } else {
            if (!(p > 0.0))
                throw invalid_argument("an absolute suction pressure must be greater than zero (full vacuum is 0)");
            h.absolute_suction_pa = p;
        }
    }

    // The liquid.
    if (custom_liquid) {
        h.liquid = LiquidProperties{*op.vapour_pressure_pa, *op.density_kg_m3, "given"};
    } else if (op.temperature_k) {
        const double p_for_density =
            h.absolute_suction_pa ? *h.absolute_suction_pa : (h.barometric_pa ? *h.barometric_pa : kStandardAtmospherePa);
        h.liquid = water_properties(*op.temperature_k, p_for_density);
    } else if (op.suction_pressure_pa || turbine) {
        throw invalid_argument("give the liquid temperature: it sets the vapour pressure (or, for a liquid other than "
                               "water, give its vapour pressure and density)");
    }

    // NPSH available.
    if (op.suction_pressure_pa) {
        SuctionState s;
        s.absolute_pressure_pa = *h.absolute_suction_pa;
        s.gauge_height_m = op.gauge_height_m.value_or(0.0);
        s.liquid = *h.liquid;
        if (op.flow_m3_s && op.bore_m) {
            h.velocity_m_s = pipe_velocity_m_s(*op.flow_m3_s, *op.bore_m);
            s.velocity_m_s = *h.velocity_m_s;
        } else if (op.flow_m3_s) {
            h.notes.push_back("velocity head not included (give the suction bore): NPSHa is understated by v^2/2g, "
                              "typically 0.1 to 0.5 m in a suction line");
        }
        if (!op.gauge_height_m)
            h.notes.push_back("gauge height not given: the gauge is taken to be level with the impeller-eye datum");
        h.npsh = npsh_available(s);
        if (*h.absolute_suction_pa < h.liquid->vapour_pressure_pa)
            h.notes.push_back("the static pressure at the gauge is below the liquid's vapour pressure: the liquid is "
                              "flashing there");
    }

    // NPSH3 and the margin.
    if (op.npsh3_m) {
        h.npsh3_m = op.npsh3_m;
        h.npsh3_source = "given";
    } else if (op.npsh3_curve) {
        const double q = *op.flow_m3_s;
        const auto& pts = op.npsh3_curve->points();
        const std::string name = op.npsh3_curve_name.empty() ? std::string("the NPSH3 curve") : op.npsh3_curve_name;
        if (op.npsh3_curve->covers(q)) {
            h.npsh3_m = op.npsh3_curve->at(q);
            h.npsh3_source = name + fmt(" at %.4g m3/h", q * kM3sToM3h);
        } else {
            h.margin_unavailable = fmt("the flow %.4g m3/h is outside ", q * kM3sToM3h) + name +
                                   fmt(" (%.4g .. %.4g m3/h); NPSH3 is not extrapolated", pts.front().flow_m3_s * kM3sToM3h,
                                       pts.back().flow_m3_s * kM3sToM3h);
        }
    }
    if (h.npsh3_m) {
        if (h.npsh) h.margin = npsh_margin(h.npsh->npsha_m, *h.npsh3_m, guidance);
        else h.margin_unavailable = "no suction pressure, so no NPSH available to set against NPSH3";
    }

    // Turbine: plant Thoma number.
    if (turbine) {
        h.thoma_sigma = thoma_sigma(*h.barometric_pa, *h.liquid, *op.runner_setting_m, *op.net_head_m);
        if (op.sigma_critical) h.thoma_ratio = *h.thoma_sigma / *op.sigma_critical;
    }
    return h;
}

bool OperatingPointSummary::empty() const {
    return !rpm && !flow_m3_s && !temperature_k && !absolute_suction_pa && !npsha_m && !margin_ratio;
}

OperatingPointSummary summarize(const std::vector<std::pair<OperatingPoint, Hydraulics>>& points) {
    std::vector<double> rpm, flow, temp, suction, npsha, ratio;
    for (const auto& [op, h] : points) {
        if (op.rpm) rpm.push_back(*op.rpm);
        if (op.flow_m3_s) flow.push_back(*op.flow_m3_s);
        if (op.temperature_k) temp.push_back(*op.temperature_k);
        if (h.absolute_suction_pa) suction.push_back(*h.absolute_suction_pa);
        if (h.npsh) npsha.push_back(h.npsh->npsha_m);
        if (h.margin) ratio.push_back(h.margin->ratio);
    }
    OperatingPointSummary s;
    auto med = [](const std::vector<double>& v) { return v.empty() ? std::optional<double>() : median(v); };
    s.rpm = med(rpm);
    s.flow_m3_s = med(flow);
    s.temperature_k = med(temp);
    s.absolute_suction_pa = med(suction);
    s.npsha_m = med(npsha);
    s.margin_ratio = med(ratio);
    return s;
}

std::vector<DutyDifference> compare_with_baseline(const OperatingPointSummary& b, const OperatingPoint& now,
                                                  const OperatingPointLimits& limits) {
    std::vector<DutyDifference> out;
    if (!b.flow_m3_s || !now.flow_m3_s) return out;
    const double then_m3h = *b.flow_m3_s * kM3sToM3h, now_m3h = *now.flow_m3_s * kM3sToM3h;
    if (*b.flow_m3_s == 0.0) {
        if (*now.flow_m3_s > 0.0)
            out.push_back({"baseline learned at zero flow (shut valve), this recording with flow: the baseline does not "
                           "apply at this duty; learn one at this duty point",
                           "baseline learned at zero flow", true});
        return out;
    }
    const double share = *now.flow_m3_s / *b.flow_m3_s;
    if (std::abs(share - 1.0) <= limits.flow_change) return out;
    const bool far = share < limits.far_flow_share || share > 1.0 / limits.far_flow_share;
    const std::string both = fmt("baseline learned at %.4g m3/h, this recording at %.4g m3/h (%.0f %% of the baseline's "
                                 "flow, %+.0f %%)",
                                 then_m3h, now_m3h, 100.0 * share, 100.0 * (share - 1.0));
    if (far)
        out.push_back({"duty far from the baseline's: " + both +
                           ": the baseline is not valid at this duty (part-load recirculation or run-out change the "
                           "spectrum); re-measure at the baseline's duty, or learn a baseline at this one",
                       "the duty is far from the baseline's: " + both, true});
    else
        out.push_back({"duty off the baseline's: " + both +
                           fmt(", more than %.0f %%: flow noise and the NPSH the pump needs change with flow, so the "
                               "baseline may not apply; re-measure at the baseline's duty, or learn a baseline at this one",
                               100.0 * limits.flow_change),
                       "the duty is off the baseline's: " + both, false});
    return out;
}

}  // namespace cavitas::models
