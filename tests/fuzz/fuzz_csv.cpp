// libFuzzer target: arbitrary bytes as a CSV time waveform.
//
// The bytes go through CsvWaveformSource from memory with a few requests
// (detected layout, each delimiter given, a decimal comma given, a rate
// given, the last channel), and every sample is read in blocks of changing
// sizes. Invariants: every sample finite, as many samples as info().frames,
// a header that passes the reader's own bounds. InputError and UsageError are
// the documented ways to refuse; anything else is a bug.
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

#include "src/io/csv_waveform.hpp"
#include "src/io/errors.hpp"
#include "tests/fuzz/source_reads.hpp"

namespace {

using cavitas::app::Calibration;
using cavitas::app::CsvWaveformSource;
using cavitas::app::ReadRequest;

[[noreturn]] void bug(const char* what, const std::string& detail) {
    std::fprintf(stderr, "\nfuzz_csv: BUG: %s: %s\n", what, detail.c_str());
    std::fflush(stderr);
    std::abort();
}

void read_all(CsvWaveformSource& source) {
    const auto& info = source.info();
    if (!(info.fs_hz >= 100.0 && info.fs_hz <= 5e6) || info.channels < 1 || info.frames == 0 ||
        info.channel < 0 || info.channel >= info.channels ||
        source.columns().size() != static_cast<std::size_t>(info.channels))
        bug("an invalid layout accepted", info.format + ", fs " + std::to_string(info.fs_hz) + " Hz, " +
                                              std::to_string(info.frames) + " frames");
    cavitas::fuzz::read_whole_channel(source, bug);
}

void one(std::span<const std::byte> bytes, const ReadRequest& request) {
    try {
        CsvWaveformSource source(bytes, "fuzz-input", request, Calibration{50.0, "g"});
        read_all(source);
        if (source.info().channels > 1) {
            ReadRequest last = request;
            last.channel = source.info().channels - 1;
            CsvWaveformSource again(bytes, "fuzz-input", last, Calibration{});
            read_all(again);
        }
    } catch (const cavitas::app::InputError&) {
        // refused with a message: expected
    } catch (const cavitas::app::UsageError&) {
        // a request that cannot be meant: expected
    } catch (const std::exception& e) {
        bug("unexpected exception", std::string(typeid(e).name()) + ": " + e.what());
    }
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    const std::span<const std::byte> bytes(reinterpret_cast<const std::byte*>(data), size);
    ReadRequest detected;
    one(bytes, detected);
    ReadRequest rate = detected;
    rate.sample_rate_hz = 12800.0;
    one(bytes, rate);
    // The first byte picks a given layout.
    ReadRequest given = rate;
    const unsigned pick = size ? static_cast<unsigned char>(data[0]) % 5 : 0;
    given.csv_delimiter = ",;\t  "[pick];
    given.csv_decimal = pick == 1 || pick == 2 ? ',' : (pick == 4 ? 0 : '.');
    one(bytes, given);
    return 0;
}
