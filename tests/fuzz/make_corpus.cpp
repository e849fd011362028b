// Writes the recording seeds of the fuzz corpus: a few tiny, valid files in
// the formats cavitas meets in the field, written through libsndfile.
//
//   make_corpus OUTPUT_DIR
//
// The signal is deterministic (a 437 Hz tone, a slow modulation, a fixed
// pseudo-random hiss and a few sharp bursts), so a rerun writes the same
// samples. The files are committed; this program only documents how they were
// made (tests/fuzz/make_corpus.sh builds and runs it).
#include <sndfile.h>

#include <cmath>
#include <cstdint>
#include <cstdio>
#include <string>
#include <vector>

namespace {

struct Seed {
    const char* name;
    int format;
    int rate;
    int channels;
    int frames;
};

// Small enough to keep the corpus tiny; two of them are longer than one 1 s
// analysis segment so that the fuzzer reaches the analysis from the start.
const Seed kSeeds[] = {
    {"pcm16_mono_8k.wav", SF_FORMAT_WAV | SF_FORMAT_PCM_16, 8000, 1, 300},
    {"pcm24_stereo_8k.wav", SF_FORMAT_WAV | SF_FORMAT_PCM_24, 8000, 2, 200},
    {"float_mono_8k.wav", SF_FORMAT_WAV | SF_FORMAT_FLOAT, 8000, 1, 300},
    {"pcm16_mono_8k.flac", SF_FORMAT_FLAC | SF_FORMAT_PCM_16, 8000, 1, 300},
    {"pcm16_mono_8k.au", SF_FORMAT_AU | SF_FORMAT_PCM_16, 8000, 1, 300},
    {"pcm16_mono_8k.aiff", SF_FORMAT_AIFF | SF_FORMAT_PCM_16, 8000, 1, 256},
    {"pcm32_stereo_8k.w64", SF_FORMAT_W64 | SF_FORMAT_PCM_32, 8000, 2, 128},
    {"double_mono_8k.caf", SF_FORMAT_CAF | SF_FORMAT_DOUBLE, 8000, 1, 128},
    {"pcm16_quad_8k.wavex", SF_FORMAT_WAVEX | SF_FORMAT_PCM_16, 8000, 4, 64},
    {"u8_mono_4k_1s.wav", SF_FORMAT_WAV | SF_FORMAT_PCM_U8, 4000, 1, 4400},
    {"pcm16_mono_4k_1s.flac", SF_FORMAT_FLAC | SF_FORMAT_PCM_16, 4000, 1, 4200},
};

std::vector<float> signal(int rate, int channels, int frames) {
    std::vector<float> x(static_cast<std::size_t>(frames) * static_cast<std::size_t>(channels));
    std::uint32_t state = 12345u;
    const double pi = 3.14159265358979323846;
    for (int i = 0; i < frames; ++i) {
        const double t = static_cast<double>(i) / rate;
        for (int c = 0; c < channels; ++c) {
            state = state * 1664525u + 1013904223u;  // fixed LCG hiss
            const double hiss = (static_cast<double>(state >> 8) / 16777216.0 - 0.5) * 0.1;
            const double tone = 0.4 * std::sin(2.0 * pi * 437.0 * t + c) * (1.0 + 0.3 * std::sin(2.0 * pi * 24.75 * t));
            const double burst = (i % 97 == 0) ? 0.35 : 0.0;
            x[static_cast<std::size_t>(i) * static_cast<std::size_t>(channels) + static_cast<std::size_t>(c)] =
                static_cast<float>(tone + hiss + burst);
        }
    }
    return x;
}

}  // namespace

int main(int argc, char** argv) {
    if (argc != 2) {
        std::fprintf(stderr, "usage: %s OUTPUT_DIR\n", argv[0]);
        return 2;
    }
    const std::string dir = argv[1];
    for (const Seed& s : kSeeds) {
        SF_INFO info{};
        info.samplerate = s.rate;
        info.channels = s.channels;
        info.format = s.format;
        const std::string path = dir + "/" + s.name;
        SNDFILE* f = sf_open(path.c_str(), SFM_WRITE, &info);
        if (!f) {
            std::fprintf(stderr, "%s: %s\n", path.c_str(), sf_strerror(nullptr));
            return 1;
        }
        // No PEAK chunk or software strings: fewer bytes, the same on every run.
        sf_command(f, SFC_SET_ADD_PEAK_CHUNK, nullptr, SF_FALSE);
        const std::vector<float> x = signal(s.rate, s.channels, s.frames);
        if (sf_writef_float(f, x.data(), s.frames) != s.frames) {
            std::fprintf(stderr, "%s: short write: %s\n", path.c_str(), sf_strerror(f));
            sf_close(f);
            return 1;
        }
        sf_close(f);
        std::printf("%s\n", path.c_str());
    }
    return 0;
}
