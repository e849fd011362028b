// The report of an acoustic NPSH test (inception --json, cavitas.inception/1):
// the result in words, the cautions, the HF level and the head against NPSHa
// with the fit, NPSHi and its interval and NPSH3 marked, the step table, and
// where every number came from.
#pragma once

#include <string>

#include <nlohmann/json.hpp>

#include "src/report/document.hpp"
#include "src/report/report_options.hpp"

namespace cavitas::app {

/// The document of a sweep's result. Every field the report draws is checked
/// (types, finite numbers, at most kMaxSweepSteps steps); InputError names
/// `origin` and the field otherwise.
doc::Document inception_document(const nlohmann::json& sweep, const std::string& origin, const ReportOptions& options);

/// Steps a report draws at most (a sweep has 5-15 in practice; our limit).
inline constexpr std::size_t kMaxSweepSteps = 200;

}  // namespace cavitas::app
