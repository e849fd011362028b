// Baseline <-> JSON. The schema string is checked on reading; unknown future
// schemas are refused rather than half-read.
#pragma once

#include <optional>
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

/// The baselines of several channels of one measurement point (a triaxial
/// accelerometer, say) in one file: {"schema": "cavitas.baseline-channels/1",
/// "machine": ..., "channels": [one baseline per channel, ascending]}. A
/// single channel is written as a plain baseline, as before.
inline constexpr const char* kBaselineChannelsSchema = "cavitas.baseline-channels/1";
nlohmann::json baseline_channels_to_json(const std::vector<models::Baseline>& channels);

/// Every channel's baseline in a file (one for a plain baseline). Throws InputError.
/// sha256 (when given) receives the SHA-256 of the file's bytes as read.
std::vector<models::Baseline> read_baseline_channels(const std::string& path, std::string* sha256 = nullptr);

/// The baseline of `channel` in a file; a plain baseline serves whatever
/// channel is asked (the classifier notes a differing channel), a file of
/// several channels only its own, else InputError listing them.
models::Baseline read_baseline_file(const std::string& path, std::optional<int> channel = std::nullopt,
                                    std::string* sha256 = nullptr);

}  // namespace cavitas::app
