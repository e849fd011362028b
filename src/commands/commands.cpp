// What the commands share: progress on the terminal.
#include "src/commands/commands.hpp"

#include <unistd.h>

#include <ostream>

namespace cavitas::app {

Progress stderr_progress(const std::string& path, std::ostream& err) {
    if (!isatty(STDERR_FILENO)) return {};
    return [&err, path](double done_s, double total_s) {
        if (total_s < 30.0) return;
        err << "\r" << path << ": " << static_cast<int>(done_s) << " / " << static_cast<int>(total_s) << " s analysed"
            << (done_s >= total_s - 0.5 ? "\n" : "") << std::flush;
    };
}


}  // namespace cavitas::app
