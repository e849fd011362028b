// Baseline <-> JSON. The schema string is checked on reading; unknown future
// schemas are refused rather than half-read.
#pragma once

#include <string>

#include <nlohmann/json.hpp>

#include "models/baseline.hpp"

namespace cavitas::app {

nlohmann::json baseline_to_json(const models::Baseline& b);
/// `origin` names the file in error messages. Throws InputError.
models::Baseline baseline_from_json(const nlohmann::json& j, const std::string& origin);
models::Baseline read_baseline_file(const std::string& path);

}  // namespace cavitas::app
