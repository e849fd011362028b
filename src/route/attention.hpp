// What to look at first: one ordering of route rows, worst first, and the
// latest state of each measurement point and machine, for the terminal and
// the report alike.
#pragma once

#include <cstddef>
#include <string>
#include <vector>

#include "src/route/route.hpp"

namespace cavitas::app {

/// 0 developed, 1 incipient, 2 a row that failed, 3 indeterminate, 4 normal
/// with a concern (a thin NPSH margin, another finding or an action), 5 normal.
int severity_rank(const SummaryRow& r);

/// How thin the hydraulic margin is: 0 thin (NPSHa under kNearBoilingNpshM,
/// NPSHa/NPSH3 under the 1.1 guidance minimum of ANSI/HI 9.6.1, or a normal
/// verdict at risk), 1 not known, 2 known and within guidance.
int margin_tier(const SummaryRow& r);

/// The one order of attention, for the terminal, the report's banner and its
/// table alike: verdict (severity_rank), then hydraulic margin (margin_tier,
/// then the smaller NPSHa/NPSH3), then the soonest action, then the trend
/// (the larger HF rise since the previous visit), then higher confidence,
/// larger HF rise, earlier line.
bool worse_first(const SummaryRow& a, const SummaryRow& b);

/// Why a row stands where it does, in words specific to it: the verdict and
/// its HF rise, the margin, the change since the previous visit, the first
/// action. One sentence for the report's banner and the terminal.
std::string attention_reason(const SummaryRow& r);

/// The latest row of one channel of one measurement point (an analysed row
/// wins over a failed one), and the earlier rows of the route, oldest first.
struct PointState {
    const SummaryRow* latest = nullptr;
    std::vector<const SummaryRow*> earlier;
};
/// One per machine, point and channel, worst first. Rows without machine or point are left out.
std::vector<PointState> latest_per_point(const std::vector<SummaryRow>& rows);

/// A machine over its points and channels: the worst latest state.
struct MachineState {
    std::string machine;
    const SummaryRow* worst = nullptr;
    std::size_t points = 0;      ///< measurement points
    std::size_t channels = 0;    ///< channels over all points
    std::size_t cavitating = 0;  ///< channels whose latest verdict is incipient or developed
};
/// One per machine, worst first (by its worst channel).
std::vector<MachineState> machine_states(const std::vector<PointState>& latest);

}  // namespace cavitas::app
