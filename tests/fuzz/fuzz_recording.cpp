// libFuzzer target: arbitrary bytes as a recording.
//
// The bytes go through SndfileSource (libsndfile's virtual I/O), every sample
// of the chosen channel is read in blocks of changing sizes, and, when the
// record holds at least one analysis segment and is small enough to stay fast,
// the whole analysis runs on it. InputError, std::invalid_argument and
// std::runtime_error are the documented ways to refuse an input; anything else
// (a crash, a sanitizer report, any other exception) is a bug.
#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <exception>
#include <memory>
#include <span>
#include <stdexcept>
#include <string>
#include <typeinfo>
#include <vector>

#include "models/analyzer.hpp"
#include "src/commands/commands.hpp"
#include "src/io/errors.hpp"
#include "src/io/recording.hpp"

namespace {

using cavitas::app::Calibration;
using cavitas::app::SndfileSource;

// Work caps per input: keep one execution well under the fuzzer's timeout.
constexpr std::size_t kMaxAnalysedSamples = 2'000'000;  // frames x channels stated in the header
constexpr double kMaxAnalysedRateHz = 200'000.0;
constexpr std::size_t kMaxReadFrames = 8'000'000;  // a compressed file can expand a lot

// Block sizes cycled through by the reading loop: odd sizes, sizes around the
// reader's internal 8192-frame block and the analysis' 32768-sample block.
constexpr std::size_t kBlocks[] = {1, 7, 8191, 8192, 8193, 300, 32768, 4096};

[[noreturn]] void bug(const char* what, const std::string& detail) {
    std::fprintf(stderr, "\nfuzz_recording: BUG: %s: %s\n", what, detail.c_str());
    std::fflush(stderr);
    std::abort();
}

std::size_t read_all(SndfileSource& source) {
    std::vector<float> block(32768);
    std::size_t total = 0;
    for (std::size_t i = 0; total < kMaxReadFrames; ++i) {
        const std::size_t want = kBlocks[i % std::size(kBlocks)];
        const std::size_t got = source.read(std::span<float>(block.data(), want));
        if (got > want)
            bug("read() overran its block", std::to_string(got) + " samples for a block of " + std::to_string(want));
        if (got == 0) break;
        total += got;
    }
    return total;
}

void run(std::span<const std::byte> bytes) {
    const Calibration calibration{50.0, "g"};
    auto source = std::make_unique<SndfileSource>(bytes, "fuzz-input", 0, calibration);
    // Read the last channel of a multi-channel file: exercises the de-interleaving.
    if (const int channels = source->info().channels; channels > 1)
        source = std::make_unique<SndfileSource>(bytes, "fuzz-input", channels - 1, calibration);
    const cavitas::app::RecordingInfo info = source->info();
    if (!(info.fs_hz >= 100.0 && info.fs_hz <= 5e6) || info.channels < 1 || info.frames == 0 || info.channel < 0 ||
        info.channel >= info.channels)
        bug("SndfileSource accepted an invalid header",
            "fs " + std::to_string(info.fs_hz) + " Hz, " + std::to_string(info.channels) + " channels, " +
                std::to_string(info.frames) + " frames, channel " + std::to_string(info.channel));

    const std::size_t samples = read_all(*source);

    const bool small = info.fs_hz <= kMaxAnalysedRateHz &&
                       info.frames <= kMaxAnalysedSamples / static_cast<std::size_t>(info.channels);
    if (!small || samples >= kMaxReadFrames || static_cast<double>(samples) < info.fs_hz) return;

    // The machine context varies with the input so that every speed path is taken.
    cavitas::models::MachineContext machine;
    switch (bytes.size() % 3) {
        case 0: machine.rpm = 1485.0; machine.vanes = 7; break;         // speed given
        case 1: machine.vanes = 7; break;                               // searched 300..6000 rpm
        default: machine.rpm_hint = 1485.0; break;                      // searched near a hint
    }
    const cavitas::models::AnalysisSetup setup = cavitas::models::choose_setup(info.fs_hz, 0.0);
    SndfileSource again(bytes, "fuzz-input", info.channel, calibration);
    const cavitas::models::RecordingAnalysis r = cavitas::app::analyze_source(again, setup, machine);
    if (r.samples != samples)
        bug("the same bytes read twice gave different lengths",
            std::to_string(samples) + " then " + std::to_string(r.samples) + " samples");
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    const std::span<const std::byte> bytes(reinterpret_cast<const std::byte*>(data), size);
    try {
        run(bytes);
    } catch (const cavitas::app::InputError&) {
        // refused with a message: expected
    } catch (const std::invalid_argument&) {
        // e.g. choose_setup on a rate too low for an HF band: expected
    } catch (const std::runtime_error&) {
        // expected
    } catch (const std::exception& e) {
        bug("unexpected exception", std::string(typeid(e).name()) + ": " + e.what());
    }
    return 0;
}
