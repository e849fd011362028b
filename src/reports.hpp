// The work-order report: a finding (analyze --json), a route output folder or
// a before/after comparison (compare --json) turned into a self-contained HTML
// page and a PDF of the same content, for a planner, a mechanic and a
// specialist: the verdict in plain words and what to do next first, the
// cautions, then the evidence (charts and numbers) and where it came from.
#pragma once

#include <iosfwd>
#include <string>

#include <nlohmann/json.hpp>

#include "src/document.hpp"
#include "src/report_options.hpp"

namespace cavitas::app {

/// Renders the report (the body of the report module; see report_options.hpp).
void render_report(const ReportOptions& options, std::ostream& out);

/// The documents, for tests and other front ends.
doc::Document finding_document(const nlohmann::json& finding, const ReportOptions& options);
doc::Document compare_document(const nlohmann::json& comparison, const ReportOptions& options);
doc::Document route_document(const std::string& folder, const ReportOptions& options);

}  // namespace cavitas::app
