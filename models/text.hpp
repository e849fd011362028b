// printf-style formatting for the sentences of findings and quality checks
// (g++ 12 has no std::format).
#pragma once

#include <string>

namespace cavitas::models {

std::string fmt(const char* format, ...) __attribute__((format(printf, 1, 2)));

}  // namespace cavitas::models
