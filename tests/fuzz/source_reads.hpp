// The reading check every recording fuzzer makes: the whole channel read in
// blocks of awkward sizes; no block overrun, every sample finite, and as many
// samples as the source announced. `bug(what, detail)` reports and aborts.
#pragma once

#include <cmath>
#include <cstddef>
#include <iterator>
#include <span>
#include <string>
#include <vector>

#include "src/io/recording.hpp"

namespace cavitas::fuzz {

template <typename Bug>
void read_whole_channel(cavitas::app::AudioSource& source, Bug&& bug) {
    static constexpr std::size_t kBlocks[] = {1, 7, 8191, 8192, 8193, 300, 4096};
    std::vector<float> block(8193);
    std::size_t total = 0;
    for (std::size_t i = 0;; ++i) {
        const std::size_t want = kBlocks[i % std::size(kBlocks)];
        const std::size_t got = source.read(std::span<float>(block.data(), want));
        if (got > want) bug("read() overran its block", std::to_string(got) + " for " + std::to_string(want));
        for (std::size_t k = 0; k < got; ++k)
            if (!std::isfinite(block[k])) bug("a sample is not finite", "sample " + std::to_string(total + k));
        if (got == 0) break;
        total += got;
    }
    if (total != source.info().frames)
        bug("read() delivered another count than frames",
            std::to_string(total) + " of " + std::to_string(source.info().frames));
}

}  // namespace cavitas::fuzz
