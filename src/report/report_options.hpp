// What the 'report' command is asked for, and the entry point that runs it.
//
// The report renderer (reports.cpp, document.cpp, plot.cpp: cairo and pango)
// is built as a module of its own, cavitas-report.so beside the executable,
// and loaded only when a report is asked for: the forty-odd graphics and font
// libraries it needs then cost nothing to every other command (about a tenth
// of a one-minute analyze; see DEVELOPERS.md, "Speed").
#pragma once

#include <iosfwd>
#include <optional>
#include <string>

namespace cavitas::app {

struct ReportOptions {
    std::string input;                 ///< finding JSON, route output folder, or compare JSON
    std::optional<std::string> html;
    std::optional<std::string> pdf;
    std::string work_order, site, analyst, machine, point, date;
    std::string paper = "a4";          ///< a4 or letter (the PDF)
    std::optional<std::string> store;  ///< route: history for the trend charts (default: the route's store)
    /// The input's JSON given in memory (inception --html): `input` then only
    /// names it in messages; the caller has checked its files with an OutputGuard.
    std::string input_text;
    /// Where to write input_text itself, staged with the HTML and the PDF (all
    /// or none: inception --json with --html or --pdf).
    std::optional<std::string> input_output;
};

/// Loads the report module and runs it; throws UsageError / InputError as the
/// renderer does, and InputError naming the module when it cannot be loaded.
void run_report(const ReportOptions& options, std::ostream& out);

/// Bumped whenever ReportOptions or the module's entry point changes.
inline constexpr int kReportModuleAbi = 3;

}  // namespace cavitas::app
