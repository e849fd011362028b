// cavitas analyze: one recording judged against its baseline.
#include "src/commands/commands.hpp"

#include "src/io/atomic_file.hpp"
#include "src/io/output_guard.hpp"
#include "src/output/finding.hpp"
#include "src/output/plain_text.hpp"

namespace cavitas::app {

void run_analyze(const AnalyzeOptions& o, std::ostream& out, std::ostream& err) {
    if (o.json_output) {
        OutputGuard guard;
        guard.input(o.recording, "recording");
        guard.input(o.baseline, "baseline");
        guard_operating_inputs(guard, o.operating, o.recording);
        if (o.zones) guard.input(*o.zones, "zone file");
        guard.output(*o.json_output);
    }
    const AnalyzeResult r = analyze(o, stderr_progress(o.recording, err));
    if (o.json_output) write_file_atomically(*o.json_output, json_text(finding_to_json(r, o.baseline), 2) + "\n");
    write_summary(out, r, o.baseline);
}

}  // namespace cavitas::app
