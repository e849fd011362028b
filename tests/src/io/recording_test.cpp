#include <catch2/catch.hpp>

#include <sndfile.h>
#include <unistd.h>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <vector>

#include "src/io/errors.hpp"
#include "src/io/recording.hpp"

namespace fs = std::filesystem;
using namespace cavitas::app;

namespace {

fs::path tmp(const std::string& name) {
    const fs::path d = fs::temp_directory_path() / ("cavitas-rec-test-" + std::to_string(::getpid()));
    fs::create_directories(d);
    return d / name;
}

// Channel c of frame i holds (c + 1) * 0.1 * sin(i / 10).
fs::path write(const std::string& name, int format, int channels, std::size_t frames) {
    const fs::path p = tmp(name);
    SF_INFO info{};
    info.samplerate = 12800;
    info.channels = channels;
    info.format = format;
    SNDFILE* f = sf_open(p.string().c_str(), SFM_WRITE, &info);
    REQUIRE(f != nullptr);
    std::vector<float> x(frames * static_cast<std::size_t>(channels));
    for (std::size_t i = 0; i < frames; ++i)
        for (int c = 0; c < channels; ++c)
            x[i * static_cast<std::size_t>(channels) + static_cast<std::size_t>(c)] =
                static_cast<float>((c + 1) * 0.1 * std::sin(static_cast<double>(i) / 10.0));
    REQUIRE(sf_writef_float(f, x.data(), static_cast<sf_count_t>(frames)) == static_cast<sf_count_t>(frames));
    sf_close(f);
    return p;
}

std::vector<float> read_all(AudioSource& s) {
    std::vector<float> all, block(777);
    for (std::size_t n; (n = s.read(block)) > 0;) all.insert(all.end(), block.begin(), block.begin() + static_cast<long>(n));
    return all;
}

}  // namespace

TEST_CASE("The chosen channel of a multichannel file is read in calibrated units", "[src]") {
    const auto p = write("three.wav", SF_FORMAT_WAV | SF_FORMAT_PCM_24, 3, 20000);
    SndfileSource s(p.string(), 2, Calibration{50.0, "g"});
    CHECK(s.info().channels == 3);
    CHECK(s.info().fs_hz == 12800.0);
    CHECK(s.info().frames == 20000);
    CHECK(s.info().format == "WAV PCM 24-bit");
    const auto x = read_all(s);
    REQUIRE(x.size() == 20000);
    // 24-bit step is 2^-23 of full scale; times 50 g.
    for (std::size_t i = 0; i < x.size(); i += 997)
        CHECK_THAT(x[i], Catch::Matchers::WithinAbs(50.0 * 0.3 * std::sin(static_cast<double>(i) / 10.0), 50.0 * 2e-7));
}

TEST_CASE("FLAC and float WAV files are read like PCM WAV", "[src]") {
    for (int fmt : {SF_FORMAT_FLAC | SF_FORMAT_PCM_16, SF_FORMAT_WAV | SF_FORMAT_FLOAT}) {
        const auto p = write(fmt == (SF_FORMAT_WAV | SF_FORMAT_FLOAT) ? "f.wav" : "f.flac", fmt, 1, 5000);
        SndfileSource s(p.string(), 0, Calibration{});
        const auto x = read_all(s);
        REQUIRE(x.size() == 5000);
        CHECK_THAT(x[123], Catch::Matchers::WithinAbs(0.1 * std::sin(12.3), 1.0 / 32768.0));
        CHECK(s.info().is_float == (fmt == (SF_FORMAT_WAV | SF_FORMAT_FLOAT)));
    }
}

TEST_CASE("Unreadable inputs raise an input error that names the file", "[src]") {
    CHECK_THROWS_WITH(SndfileSource(tmp("nope.wav").string(), 0, {}), Catch::Contains("nope.wav: no such file"));
    CHECK_THROWS_WITH(SndfileSource(tmp("").string(), 0, {}), Catch::Contains("is a directory"));
    const auto junk = tmp("junk.wav");
    std::ofstream(junk) << "RIFF\x10\0\0\0WAVEjunkjunkjunk";
    CHECK_THROWS_AS(SndfileSource(junk.string(), 0, {}), InputError);
    const auto p = write("two.wav", SF_FORMAT_WAV | SF_FORMAT_PCM_16, 2, 100);
    CHECK_THROWS_WITH(SndfileSource(p.string(), 5, {}), Catch::Contains("numbered 0..1"));
}

TEST_CASE("SHA-256 of a file matches the published test vector", "[src]") {
    // FIPS 180-2, appendix B.1: SHA-256("abc").
    const auto p = tmp("abc.txt");
    std::ofstream(p, std::ios::binary) << "abc";
    CHECK(sha256_file(p.string()) == "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
}

TEST_CASE("A recording's SHA-256 hashed while decoding is the hash of the whole file", "[src]") {
    // Against sha256_file (itself checked on FIPS 180-2's vector above): read
    // to the end, read in part, not read at all; WAV with a chunk after the
    // samples (libsndfile reads past and seeks back); FLAC (a compressed stream).
    const auto wav = write("hash.wav", SF_FORMAT_WAV | SF_FORMAT_PCM_16, 2, 50000);
    {
        // A trailing chunk after the sample data.
        std::ofstream(tmp("tail.wav"), std::ios::binary) << std::ifstream(wav, std::ios::binary).rdbuf();
        std::ofstream t(tmp("tail.wav"), std::ios::binary | std::ios::app);
        t.write("LIST\x0c\x00\x00\x00INFOabcdefgh", 20);
    }
    const auto flac = write("hash.flac", SF_FORMAT_FLAC | SF_FORMAT_PCM_16, 1, 30000);
    std::vector<float> block(4096);
    for (const fs::path& p : {wav, tmp("tail.wav"), flac}) {
        const std::string want = sha256_file(p.string());
        for (const int reads : {0, 1, 1000}) {
            SndfileSource s(p.string(), 0, {});
            for (int r = 0; r < reads && s.read(block) > 0; ++r) {
            }
            CHECK(s.sha256() == want);
            CHECK(s.sha256() == want);  // asked again: the same
            // Reading on after the hash is final still works.
            if (reads == 1) CHECK(s.read(block) == block.size());
        }
    }
}

TEST_CASE("16-bit WAV samples read raw are libsndfile's floats bit for bit", "[src]") {
    // Every 16-bit value and some stereo interleaving: through SndfileSource
    // (raw samples scaled by 1/32768, then the calibration) and through
    // sf_readf_float (libsndfile's own conversion) times the same calibration.
    for (const int channels : {1, 3}) {
        const fs::path p = tmp("raw16-" + std::to_string(channels) + ".wav");
        SF_INFO info{};
        info.samplerate = 25600;
        info.channels = channels;
        info.format = SF_FORMAT_WAV | SF_FORMAT_PCM_16;
        SNDFILE* w = sf_open(p.string().c_str(), SFM_WRITE, &info);
        REQUIRE(w != nullptr);
        const std::size_t frames = 65536 + 123;
        std::vector<short> v(frames * static_cast<std::size_t>(channels));
        for (std::size_t i = 0; i < v.size(); ++i) v[i] = static_cast<short>(static_cast<int>(i * 7919u % 65536u) - 32768);
        REQUIRE(sf_writef_short(w, v.data(), static_cast<sf_count_t>(frames)) == static_cast<sf_count_t>(frames));
        sf_close(w);
        SF_INFO ri{};
        SNDFILE* r = sf_open(p.string().c_str(), SFM_READ, &ri);
        REQUIRE(r != nullptr);
        std::vector<float> ref(frames * static_cast<std::size_t>(channels));
        REQUIRE(sf_readf_float(r, ref.data(), static_cast<sf_count_t>(frames)) == static_cast<sf_count_t>(frames));
        sf_close(r);
        const int ch = channels - 1;
        Calibration cal;
        cal.full_scale = 49.03325;  // 5 g in m/s2, an awkward factor
        cal.unit = "m/s2";
        SndfileSource s(p.string(), ch, cal);
        std::vector<float> got;
        std::vector<float> block(10007);
        for (std::size_t n; (n = s.read(block)) > 0;) got.insert(got.end(), block.begin(), block.begin() + static_cast<std::ptrdiff_t>(n));
        REQUIRE(got.size() == frames);
        std::size_t differ = 0;
        for (std::size_t i = 0; i < frames; ++i)
            differ += got[i] != ref[i * static_cast<std::size_t>(channels) + static_cast<std::size_t>(ch)] * static_cast<float>(cal.full_scale);
        CHECK(differ == 0);
    }
}
