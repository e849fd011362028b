// Presenting a finding: a short summary for a person, JSON for other tools.
#pragma once

#include <iosfwd>
#include <string>

#include <nlohmann/json.hpp>

#include "src/commands.hpp"

namespace cavitas::app {

inline constexpr const char* kFindingSchema = "cavitas.finding/1";

inline constexpr const char* kNpshSchema = "cavitas.npsh/1";

void write_summary(std::ostream& out, const AnalyzeResult& r, const std::string& baseline_path);
nlohmann::json finding_to_json(const AnalyzeResult& r, const std::string& baseline_path);
/// The data a report draws: the spectrum profile against the baseline's, the
/// averaged squared-envelope spectrum, the kurtogram's mean map (the finding's "plots").
nlohmann::json plots_to_json(const AnalyzeResult& r);

/// The derived hydraulics with units in the keys (npsha_m, vapour_pressure_pa,
/// density_kg_m3, velocity_head_m, absolute_suction_pa, margin_m, margin_ratio,
/// ...) and the stated inputs; shared by `npsh --json` and the finding's
/// "operating_point".
nlohmann::json hydraulics_to_json(const ResolvedOperatingPoint& duty);
/// `npsh --json`: the schema, version and time, then hydraulics_to_json's keys.
nlohmann::json npsh_to_json(const ResolvedOperatingPoint& duty);
/// `npsh`'s account for a person: every term of the sum with its unit.
void write_npsh_account(std::ostream& out, const ResolvedOperatingPoint& duty);
/// What `baseline` prints of the operating point it was learned at.
void write_operating_point_summary(std::ostream& out, const models::OperatingPointSummary& s, std::size_t stated,
                                   std::size_t recordings);

}  // namespace cavitas::app
