// libFuzzer target: arbitrary bytes as a UFF file (datasets 58/58b).
//
// The bytes go through Uff58Source from memory: every channel the file holds
// (up to a cap) is opened and read in blocks of changing sizes, and
// describe_uff58 summarises the file. Invariants: a source reports a rate in
// 1 Hz .. 10 MHz, a channel inside 0..channels-1, and read() delivers exactly
// `frames` finite samples, never more than asked. InputError is the
// documented way to refuse an input; anything else (a crash, a sanitizer
// report, any other exception) is a bug.
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <exception>
#include <span>
#include <string>
#include <typeinfo>
#include <vector>

#include "src/io/errors.hpp"
#include "tests/fuzz/source_reads.hpp"
#include "src/io/uff58.hpp"

namespace {

using cavitas::app::Calibration;
using cavitas::app::InputError;
using cavitas::app::Uff58Source;

constexpr int kMaxChannels = 8;  // each opening indexes the whole input again
[[noreturn]] void bug(const char* what, const std::string& detail) {
    std::fprintf(stderr, "\nfuzz_uff: BUG: %s: %s\n", what, detail.c_str());
    std::fflush(stderr);
    std::abort();
}

// Opens and reads one channel; returns its info (throws InputError when refused).
cavitas::app::RecordingInfo read_channel(std::span<const std::byte> bytes, int channel) {
    Uff58Source source(bytes, "fuzz-input", channel, Calibration{50.0, "g"});
    const cavitas::app::RecordingInfo info = source.info();
    if (!(info.fs_hz >= 1.0 && info.fs_hz <= 10e6) || info.frames == 0 || info.channel != channel ||
        info.channel >= info.channels)
        bug("Uff58Source accepted an invalid header", "fs " + std::to_string(info.fs_hz) + " Hz, " +
                                                          std::to_string(info.frames) + " frames, channel " +
                                                          std::to_string(info.channel) + " of " +
                                                          std::to_string(info.channels));
    cavitas::fuzz::read_whole_channel(source, bug);
    return info;
}

void run(std::span<const std::byte> bytes) {
    cavitas::app::FileSummary summary;
    try {
        summary = cavitas::app::describe_uff58(bytes, "fuzz-input");
    } catch (const InputError&) {
        // A file describe refuses has no channel to open either.
        try {
            read_channel(bytes, 0);
        } catch (const InputError&) {
            return;
        }
        bug("describe_uff58 refused a file whose channel 0 opens", "");
    }
    if (summary.channels.empty()) bug("describe_uff58 listed no channel", summary.format);
    const int channels = static_cast<int>(summary.channels.size());
    for (int c = 0; c < channels && c < kMaxChannels; ++c) {
        try {
            const cavitas::app::RecordingInfo info = read_channel(bytes, c);
            const cavitas::app::ChannelSummary& ch = summary.channels[static_cast<std::size_t>(c)];
            if (info.channels != channels || ch.frames != info.frames || ch.fs_hz != info.fs_hz)
                bug("describe_uff58 and Uff58Source disagree", "channel " + std::to_string(c));
        } catch (const InputError&) {
            // this channel refused (not a time waveform, a bad value); the next may still be read
        }
    }
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    const std::span<const std::byte> bytes(reinterpret_cast<const std::byte*>(data), size);
    try {
        run(bytes);
    } catch (const std::exception& e) {
        bug("unexpected exception", std::string(typeid(e).name()) + ": " + e.what());
    }
    return 0;
}
