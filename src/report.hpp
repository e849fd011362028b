// Presenting a finding: a short summary for a person, JSON for other tools.
#pragma once

#include <iosfwd>
#include <string>

#include <nlohmann/json.hpp>

#include "src/commands.hpp"

namespace cavitas::app {

inline constexpr const char* kFindingSchema = "cavitas.finding/1";

void write_summary(std::ostream& out, const AnalyzeResult& r, const std::string& baseline_path);
nlohmann::json finding_to_json(const AnalyzeResult& r, const std::string& baseline_path);

}  // namespace cavitas::app
