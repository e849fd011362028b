// The work-order report: a finding (analyze --json), a route output folder or
// a before/after comparison (compare --json) turned into a self-contained HTML
// page and a PDF of the same content, for a planner, a mechanic and a
// specialist: the verdict in plain words and what to do next first, the
// cautions, then the evidence (charts and numbers) and where it came from.
#pragma once

#include <iosfwd>
#include <optional>
#include <string>

#include <nlohmann/json.hpp>

#include "src/document.hpp"

namespace cavitas::app {

struct ReportOptions {
    std::string input;                 ///< finding JSON, route output folder, or compare JSON
    std::optional<std::string> html;
    std::optional<std::string> pdf;
    std::string work_order, site, analyst, machine, point, date;
    std::string paper = "a4";          ///< a4 or letter (the PDF)
    std::optional<std::string> store;  ///< route: history for the trend charts (default: the route's store)
};

void run_report(const ReportOptions& options, std::ostream& out);

/// The documents, for tests and other front ends.
doc::Document finding_document(const nlohmann::json& finding, const ReportOptions& options);
doc::Document compare_document(const nlohmann::json& comparison, const ReportOptions& options);
doc::Document route_document(const std::string& folder, const ReportOptions& options);

}  // namespace cavitas::app
