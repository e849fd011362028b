// cavitas npsh: NPSH available, margin and Thoma number from a stated duty.
#include "src/commands/commands.hpp"

#include "src/io/atomic_file.hpp"
#include "src/io/output_guard.hpp"
#include "src/output/finding.hpp"
#include "src/output/plain_text.hpp"

namespace cavitas::app {

void run_npsh(const NpshOptions& o, std::ostream& out) {
    const OperatingPointText given = o.operating.text();
    if (!o.operating.file && given.empty())
        throw UsageError("npsh: give the suction reading (--suction-pressure and --temperature) for a pump, or "
                         "--runner-setting and --net-head for a turbine; see 'cavitas npsh --help'");
    if (o.json_output) {
        OutputGuard guard;
        guard_operating_inputs(guard, o.operating, "");
        guard.output(*o.json_output);
    }
    const auto duty = resolve_operating_point(o.operating, "");
    const models::Hydraulics& h = duty->hydraulics;
    if (!h.npsh && !h.thoma_sigma)
        throw UsageError("npsh: give --suction-pressure (a pump's NPSH available) or --runner-setting and --net-head "
                         "(a turbine's Thoma number)");
    // NPSH3 was asked for but cannot be read: say so as an error, not as a missing key.
    if ((duty->op.npsh3_m || duty->op.npsh3_curve) && !h.margin && h.margin_unavailable)
        throw InputError((duty->op.npsh3_curve_name.empty() ? std::string("npsh") : duty->op.npsh3_curve_name) + ": " +
                         *h.margin_unavailable);
    if (o.json_output) {
        nlohmann::json j = npsh_to_json(*duty);
        write_file_atomically(*o.json_output, json_text(j, 2) + "\n");
    }
    write_npsh_account(out, *duty);
}

}  // namespace cavitas::app
