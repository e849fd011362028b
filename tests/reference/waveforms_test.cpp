// The CSV and MATLAB readers against files written by numpy and scipy
// (write_waveforms.py, run first by ctest into the build tree; the folder is
// passed in CAVITAS_WAVEFORM_DIR). Every file holds the same float32 samples,
// kept raw in samples.f32; each must read back bit for bit.
#include <catch2/catch.hpp>

#include <cstdlib>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <string>
#include <vector>

#include "src/io/csv_waveform.hpp"
#include "src/io/errors.hpp"
#include "src/io/mat_file.hpp"
#include "src/io/recording.hpp"
#include "src/io/sources.hpp"

namespace fs = std::filesystem;
using namespace cavitas::app;

namespace {

constexpr std::size_t kFrames = 25600;  // 2 s at 12 800 Hz (write_waveforms.py)

std::string dir() {
    const char* d = std::getenv("CAVITAS_WAVEFORM_DIR");
    REQUIRE(d != nullptr);
    return d;
}

std::string file(const std::string& name) { return (fs::path(dir()) / name).string(); }

// The samples as numpy wrote them: float32, channel 0 then channel 1.
const std::vector<float>& truth() {
    static const std::vector<float> x = [] {
        std::ifstream in(file("samples.f32"), std::ios::binary);
        std::vector<float> v(2 * kFrames);
        in.read(reinterpret_cast<char*>(v.data()), static_cast<std::streamsize>(v.size() * sizeof(float)));
        REQUIRE(in.gcount() == static_cast<std::streamsize>(v.size() * sizeof(float)));
        return v;
    }();
    return x;
}

std::vector<float> channel(int c) {
    const auto b = truth().begin() + static_cast<long>(static_cast<std::size_t>(c) * kFrames);
    return {b, b + static_cast<long>(kFrames)};
}

std::vector<float> read_all(AudioSource& s) {
    std::vector<float> all, block(4093);
    for (std::size_t n; (n = s.read(block)) > 0;) all.insert(all.end(), block.begin(), block.begin() + static_cast<long>(n));
    return all;
}

// Bit for bit, not within a tolerance.
bool same_bits(const std::vector<float>& a, const std::vector<float>& b) {
    return a.size() == b.size() && std::memcmp(a.data(), b.data(), a.size() * sizeof(float)) == 0;
}

ReadRequest req(int channel, std::optional<double> fs_hz = std::nullopt, const std::string& variable = "") {
    ReadRequest r;
    r.channel = channel;
    r.sample_rate_hz = fs_hz;
    r.variable = variable;
    return r;
}

}  // namespace

TEST_CASE("CSV waveforms written by numpy read back bit for bit", "[reference]") {
    // numpy formats float32 values (as float64) with '%.9g': 9 significant
    // digits identify every float32 (IEEE 754-2008, 5.12.2), so the text
    // parsed and rounded to float is the sample itself.
    for (int c : {0, 1}) {
        CsvWaveformSource t(file("time.csv"), req(c), Calibration{});
        // The time column i / 12800 printed with 9 digits gives 12 800 Hz (write_waveforms.py).
        CHECK(t.info().fs_hz == 12800.0);
        CHECK(t.info().frames == kFrames);
        CHECK(t.info().channels == 2);
        CHECK(t.info().format == "CSV waveform (',' delimited, decimal point, 2 channels)");
        CHECK(t.info().channel_name == (c == 0 ? "accel" : "vel"));
        CHECK(t.info().stated_unit == (c == 0 ? "g" : "mm/s"));
        CHECK(same_bits(read_all(t), channel(c)));

        // "# sample_rate_hz = 12800", ';' and a decimal comma (write_waveforms.py).
        CsvWaveformSource r(file("rate_comma.csv"), req(c), Calibration{});
        CHECK(r.info().fs_hz == 12800.0);
        CHECK(r.info().format == "CSV waveform (';' delimited, decimal comma, 2 channels)");
        CHECK(r.info().stated_unit == "m/s^2");
        CHECK(same_bits(read_all(r), channel(c)));

        // No rate in the file: --sample-rate gives it.
        CsvWaveformSource n(file("norate.csv"), req(c, 12800.0), Calibration{});
        CHECK(n.info().format == "CSV waveform (space delimited, decimal point, 2 channels)");
        CHECK(same_bits(read_all(n), channel(c)));
    }
    CHECK_THROWS_WITH(CsvWaveformSource(file("norate.csv"), req(0), Calibration{}),
                      Catch::EndsWith("norate.csv: no time column or rate line; give --sample-rate"));
    // The file states 12 800 Hz: 12 900 given is refused, 12 800 * (1 + 1e-7) agrees.
    CHECK_THROWS_WITH(CsvWaveformSource(file("time.csv"), req(0, 12900.0), Calibration{}),
                      Catch::Contains("time column gives 12800 Hz, --sample-rate 12900 Hz"));
    CHECK(CsvWaveformSource(file("rate_comma.csv"), req(0, 12800.0 * (1 + 1e-7)), Calibration{}).info().frames ==
          kFrames);
}

TEST_CASE("MAT files written by scipy read back bit for bit, and as the float WAV", "[reference]") {
    // scipy.io.savemat writes x as double (exact copies of the float32
    // samples) and ch0, ch1 as single; reading to float is exact for both.
    for (const std::string v : {"v5", "v7"}) {
        for (int c : {0, 1}) {
            MatSource m(file(v + "_matrix.mat"), req(c), Calibration{});
            CHECK(m.info().fs_hz == 12800.0);  // the fs variable (write_waveforms.py)
            CHECK(m.info().frames == kFrames);
            CHECK(m.info().channels == 2);
            CHECK(m.info().channel_name == "x:col " + std::to_string(c));
            CHECK(m.info().stated_unit.empty());
            CHECK(m.info().format == (v == "v5" ? "MATLAB 5.0 MAT-file (v5)" : "MATLAB 5.0 MAT-file (v7 compressed)"));
            CHECK(same_bits(read_all(m), channel(c)));
            // ch0 is N x 1, ch1 is 1 x N (write_waveforms.py).
            const std::string name = "ch" + std::to_string(c);
            MatSource s(file(v + "_vectors.mat"), req(0, std::nullopt, name), Calibration{});
            CHECK(s.info().channels == 1);
            CHECK(s.info().channel_name == name);
            CHECK(same_bits(read_all(s), channel(c)));
        }
        // Two vectors and fs: which one is meant cannot be guessed.
        CHECK_THROWS_WITH(MatSource(file(v + "_vectors.mat"), req(0), Calibration{}),
                          Catch::Contains("holds 3 numeric variables (ch0 25600\xC3\x97" "1, ch1 1\xC3\x97" "25600, fs "
                                          "1\xC3\x97" "1); choose one with --variable"));
        CHECK_THROWS_WITH(MatSource(file(v + "_matrix.mat"), req(0, 25600.0), Calibration{}),
                          Catch::Contains("variable fs gives 12800 Hz, --sample-rate 25600 Hz"));
    }
    // scipy.io.wavfile.write stores the same float32 samples in a WAV; libsndfile reads them unchanged.
    for (int c : {0, 1}) {
        SndfileSource w(file("wave.wav"), c, Calibration{});
        MatSource m(file("v5_matrix.mat"), req(c), Calibration{});
        CHECK(same_bits(read_all(w), read_all(m)));
    }
}

TEST_CASE("The files written by numpy and scipy are told apart and described", "[reference]") {
    // open_recording by content and name (sources.hpp): the same samples whatever the reader.
    for (const std::string name : {"time.csv", "v7_matrix.mat", "wave.wav"}) {
        auto s = open_recording(file(name), req(1), Calibration{});
        CHECK(same_bits(read_all(*s), channel(1)));
    }
    const FileSummary csv = describe_recording(file("time.csv"));
    REQUIRE(csv.channels.size() == 2);
    CHECK(csv.channels[1].name == "vel");
    CHECK(csv.channels[1].unit == "mm/s");
    CHECK(csv.channels[1].fs_hz == 12800.0);
    CHECK(csv.channels[1].frames == kFrames);
    const FileSummary norate = describe_recording(file("norate.csv"));
    CHECK(norate.channels.at(0).fs_hz == 0.0);  // not stated
    const FileSummary mat = describe_recording(file("v5_vectors.mat"));
    REQUIRE(mat.channels.size() == 2);
    CHECK(mat.channels[0].name == "ch0");
    CHECK(mat.channels[1].name == "ch1");
    CHECK(mat.channels[1].frames == kFrames);
    CHECK(mat.channels[1].fs_hz == 12800.0);
    REQUIRE(mat.notes.size() == 1);
    CHECK(mat.notes[0] == "fs: 1\xC3\x97" "1 double (the sample rate)");
}
