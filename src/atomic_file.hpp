// Write a whole file or nothing: the text goes to a temporary file in the same
// folder, is flushed, then renamed over the target, so an interrupted run leaves
// the old file or the new one, never a fragment.
#pragma once

#include <string>

namespace cavitas::app {

/// Throws InputError naming the path on failure (the temporary file is removed).
void write_file_atomically(const std::string& path, const std::string& contents);

}  // namespace cavitas::app
