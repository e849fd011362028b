// Baseline <-> JSON. The schema string is checked on reading; unknown future
// schemas are refused rather than half-read.
#pragma once

#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "models/baseline.hpp"

namespace cavitas::app {

nlohmann::json baseline_to_json(const models::Baseline& b);
/// A baseline's warnings as JSON, as the baseline file and every finding against it write them.
nlohmann::json warnings_to_json(const std::vector<models::BaselineWarning>& warnings);
/// `origin` names the file in error messages. Throws InputError.
models::Baseline baseline_from_json(const nlohmann::json& j, const std::string& origin);
models::Baseline read_baseline_file(const std::string& path);

}  // namespace cavitas::app
