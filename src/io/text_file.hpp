// Reading a small text input (a baseline, a sidecar, a curve, a manifest)
// whole: only regular files (a FIFO would block), with a size cap, and errors
// that name the file and what it was expected to be.
#pragma once

#include <cstddef>
#include <string>

namespace cavitas::app {

/// `what` names the kind of file in errors ("baseline file", "NPSH3 curve").
/// UTF-16 text (with a byte-order mark, or ASCII with every other byte zero)
/// comes back as UTF-8. Throws InputError: no such file, a directory, not a
/// regular file, larger than max_bytes, unreadable, a NUL byte (binary data).
/// sha256 (when given) receives the SHA-256 of the file's bytes as read, before
/// any conversion: the hash of exactly what was parsed.
std::string read_text_file(const std::string& path, const std::string& what, std::size_t max_bytes = 64u << 20,
                           std::string* sha256 = nullptr);

}  // namespace cavitas::app
