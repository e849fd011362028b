// Error kinds that map to exit statuses (see main.cpp).
#pragma once

#include <stdexcept>
#include <string>

namespace cavitas::app {

/// Unreadable or invalid input (a recording, a baseline): exit status 1.
/// The message names the file and the problem.
struct InputError : std::runtime_error {
    using std::runtime_error::runtime_error;
};

/// A bad command line: exit status 2.
struct UsageError : std::runtime_error {
    using std::runtime_error::runtime_error;
};

enum class ExitCode : int { ok = 0, input_error = 1, usage_error = 2 };

}  // namespace cavitas::app
