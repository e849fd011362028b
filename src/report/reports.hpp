// The work-order report: a finding (analyze --json), a route output folder or
// a before/after comparison (compare --json) turned into a self-contained HTML
// page and a PDF of the same content, for a planner, a mechanic and a
// specialist: the verdict in plain words and what to do next first, the
// cautions, then the evidence (charts and numbers) and where it came from.
#pragma once

#include <iosfwd>
#include <string>

#include <nlohmann/json.hpp>

#include "src/report/document.hpp"
#include "src/report/report_options.hpp"

namespace cavitas::app {

/// Renders the report (the body of the report module; see report_options.hpp).
void render_report(const ReportOptions& options, std::ostream& out);

/// The documents, for tests and other front ends.
doc::Document finding_document(const nlohmann::json& finding, const ReportOptions& options);
doc::Document compare_document(const nlohmann::json& comparison, const ReportOptions& options);
doc::Document route_document(const std::string& folder, const ReportOptions& options);

/// The document of a finding (analyze --json) or a comparison (compare --json) given as
/// its JSON text, checked as 'report' checks such a file: its size, its schema and every
/// field the report draws (lengths, limits, finite numbers). origin names the text in
/// errors. Throws InputError; what it returns renders (doc::to_html, doc::to_pdf).
doc::Document document_from_text(const std::string& text, const std::string& origin, const ReportOptions& options);

}  // namespace cavitas::app
