// Reading a small text input (a baseline, a sidecar, a curve, a manifest)
// whole: only regular files (a FIFO would block), with a size cap, and errors
// that name the file and what it was expected to be.
#pragma once

#include <cstddef>
#include <string>

namespace cavitas::app {

/// `what` names the kind of file in errors ("baseline file", "NPSH3 curve").
/// Throws InputError: no such file, a directory, not a regular file, larger
/// than max_bytes, unreadable.
std::string read_text_file(const std::string& path, const std::string& what, std::size_t max_bytes = 64u << 20);

}  // namespace cavitas::app
