// Numbers for people: fixed decimals, with or without a sign.
#pragma once

#include <cstdio>
#include <string>

namespace cavitas::app {

inline std::string fixed(double v, int decimals) {
    char b[64];
    std::snprintf(b, sizeof b, "%.*f", decimals, v);
    return b;
}

inline std::string signed_fixed(double v, int decimals) {
    char b[64];
    std::snprintf(b, sizeof b, "%+.*f", decimals, v);
    return b;
}

}  // namespace cavitas::app
