// The entry point of cavitas-report.so, the report renderer loaded by
// run_report (report_loader.cpp). Nothing but this symbol is exported; no
// exception crosses the boundary: each is handed back as a kind and a message.
#include <exception>
#include <ostream>
#include <string>

#include "src/io/errors.hpp"
#include "src/report/report_options.hpp"
#include "src/report/reports.hpp"

extern "C" {

__attribute__((visibility("default"))) int cavitas_report_abi() { return cavitas::app::kReportModuleAbi; }

__attribute__((visibility("default"))) const char* cavitas_report_version() { return CAVITAS_VERSION; }

/// 0 done; 1 input error, 2 usage error (message set).
__attribute__((visibility("default"))) int cavitas_report_run(const cavitas::app::ReportOptions* options,
                                                              std::ostream* out, std::string* message) {
    try {
        cavitas::app::render_report(*options, *out);
        return 0;
    } catch (const cavitas::app::UsageError& e) {
        *message = e.what();
        return 2;
    } catch (const std::exception& e) {
        *message = e.what();
        return 1;
    }
}
}
