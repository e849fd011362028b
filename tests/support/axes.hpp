// Several axes of one measurement point made from the demo's mono recordings,
// written as one multichannel float WAV (for the triaxial tests).
#pragma once

#include <sndfile.h>

#include <array>
#include <filesystem>
#include <stdexcept>
#include <utility>
#include <vector>

namespace cavitas::test {

inline std::vector<float> read_mono(const std::filesystem::path& p) {
    SF_INFO info{};
    SNDFILE* f = sf_open(p.string().c_str(), SFM_READ, &info);
    if (!f || info.channels != 1) throw std::runtime_error(p.string() + ": not a mono recording");
    std::vector<float> x(static_cast<std::size_t>(info.frames));
    sf_readf_float(f, x.data(), info.frames);
    sf_close(f);
    return x;
}

/// One axis: the sum of weight x source over its terms.
using Axis = std::vector<std::pair<float, const std::vector<float>*>>;

/// Writes the axes as a 3-channel 32-bit float WAV at 25.6 kHz (the demo's rate).
inline void write_axes(const std::filesystem::path& p, const std::array<Axis, 3>& axes) {
    SF_INFO info{};
    info.samplerate = 25600;
    info.channels = 3;
    info.format = SF_FORMAT_WAV | SF_FORMAT_FLOAT;
    const std::size_t n = axes[0].front().second->size();
    std::vector<float> x(3 * n, 0.0f);
    for (std::size_t k = 0; k < 3; ++k)
        for (const auto& [w, src] : axes[k])
            for (std::size_t i = 0; i < n; ++i) x[3 * i + k] += w * (*src)[i];
    SNDFILE* f = sf_open(p.string().c_str(), SFM_WRITE, &info);
    if (!f) throw std::runtime_error(p.string() + ": cannot be written");
    sf_writef_float(f, x.data(), static_cast<sf_count_t>(n));
    sf_close(f);
}

}  // namespace cavitas::test
