// Looking back: the history of a measurement point (trend) and a before/after
// comparison of a repair or an operating change (compare).
#pragma once

#include <iosfwd>
#include <optional>
#include <string>
#include <vector>

#include "src/commands/commands.hpp"

namespace cavitas::app {

struct TrendOptions {
    std::string machine;
    std::string point;                  ///< empty: every point of the machine
    std::optional<std::string> store;
    std::optional<std::string> baselines;  ///< store default: BASELINES/history.sqlite
    std::optional<std::string> json_output;
    std::optional<std::string> csv_output;
    std::size_t window = 6;
};
void run_trend(const TrendOptions& options, std::ostream& out);

struct CompareOptions {
    std::string baseline;
    std::vector<std::string> before;
    std::vector<std::string> after;
    std::string machine;
    std::optional<double> rpm;
    std::optional<int> vanes;
    int channel = 0;
    std::optional<std::string> json_output;
};
/// Exit status 0 whatever the change (it is a finding, not an error).
void run_compare(const CompareOptions& options, std::ostream& out, std::ostream& err);

}  // namespace cavitas::app
