// The CSV waveform reader on small tables written here by hand. The layouts
// are the ones src/io/csv_waveform.hpp documents; the expected numbers are
// worked out beside each check.
#include <catch2/catch.hpp>

#include <unistd.h>

#include <cstddef>
#include <filesystem>
#include <fstream>
#include <span>
#include <string>
#include <vector>

#include "src/io/csv_waveform.hpp"
#include "src/io/errors.hpp"
#include "src/io/sources.hpp"

namespace fs = std::filesystem;
using namespace cavitas::app;

namespace {

std::span<const std::byte> bytes(const std::string& s) { return std::as_bytes(std::span<const char>(s.data(), s.size())); }

ReadRequest req(int channel = 0, std::optional<double> fs_hz = std::nullopt, char delimiter = 0, char decimal = 0) {
    ReadRequest r;
    r.channel = channel;
    r.sample_rate_hz = fs_hz;
    r.csv_delimiter = delimiter;
    r.csv_decimal = decimal;
    return r;
}

std::vector<float> read_all(AudioSource& s) {
    std::vector<float> all, block(3);
    for (std::size_t n; (n = s.read(block)) > 0;) all.insert(all.end(), block.begin(), block.begin() + static_cast<long>(n));
    return all;
}

// Reads channel `c` of `text` (kept alive for the source).
std::vector<float> values(const std::string& text, const ReadRequest& r, Calibration cal = {}) {
    CsvWaveformSource s(bytes(text), "t.csv", r, cal);
    return read_all(s);
}

std::string error_of(const std::string& text, const ReadRequest& r = req(0, 1000.0)) {
    try {
        values(text, r);
    } catch (const InputError& e) {
        return e.what();
    }
    return "(no error)";
}

fs::path tmp(const std::string& name) {
    const fs::path d = fs::temp_directory_path() / ("cavitas-csv-test-" + std::to_string(::getpid()));
    fs::create_directories(d);
    return d / name;
}

}  // namespace

TEST_CASE("A CSV waveform's time column gives the rate and its header the names and units", "[src]") {
    // Steps of 0.5 ms -> 2000 Hz; 1 ms in a [ms] column -> 1000 Hz.
    const std::string text = "time [s],accel [g],p (Pa),V\n0,1,2,3\n0.0005,4,5,6\n0.001,7,8,9\n";
    CsvWaveformSource s(bytes(text), "t.csv", req(1), Calibration{});
    CHECK(s.info().fs_hz == 2000.0);
    CHECK(s.info().channels == 3);
    CHECK(s.info().frames == 3);
    CHECK(s.info().channel_name == "p");
    CHECK(s.info().stated_unit == "Pa");
    CHECK(s.info().is_float);
    CHECK(s.info().pcm_bits == 0);
    CHECK(s.info().format == "CSV waveform (',' delimited, decimal point, 3 channels)");
    CHECK(s.columns().at(2).name == "V");
    CHECK(s.columns().at(2).unit.empty());
    CHECK(read_all(s) == std::vector<float>{2, 5, 8});
    CHECK(values("t [ms];x\n0;1\n1;2\n2;3\n", req()) == std::vector<float>{1, 2, 3});
    CHECK(CsvWaveformSource(bytes("Time (ms)\tx\n0\t1\n1\t2\n"), "t.csv", req(), {}).info().fs_hz == 1000.0);
}

TEST_CASE("A CSV waveform's rate line is read in its documented spellings", "[src]") {
    // The spellings src/io/csv_waveform.hpp lists; 12.8 kHz is 12 800 Hz.
    for (const std::string line : {"# sample_rate_hz = 12800", "sample rate: 12800 Hz", "fs=12800", "FS = 12.8 kHz",
                                   "#Sampling-Frequency: 12800", "samplerate=1.28e4"}) {
        INFO(line);
        CsvWaveformSource s(bytes(line + "\nx [g]\n1\n2\n"), "t.csv", req(), {});
        CHECK(s.info().fs_hz == 12800.0);
        CHECK(s.info().stated_unit == "g");
    }
    // A rate line with no number is an error, not a header.
    CHECK_THAT(error_of("fs = fast\n1\n"), Catch::Contains("t.csv:1: rate line 'fs = fast'"));
    // Two rate lines that disagree.
    CHECK_THAT(error_of("fs=1000\n# fs=2000\n1\n"), Catch::Contains("t.csv:2: a second rate line (2000 Hz)"));
}

TEST_CASE("A CSV waveform's delimiter and decimal mark are told from its rows or given", "[src]") {
    // "0,5;1,5": ';' delimited with decimal commas -> 0.5 and 1.5 (common practice in
    // spreadsheets of decimal-comma locales, no source).
    CHECK(values("0,5;1,5\n2,25;3\n", req(1, 1000.0)) == std::vector<float>{1.5f, 3.0f});
    CHECK(values("0.5\t1.5\n2\t3\n", req(1, 1000.0)) == std::vector<float>{1.5f, 3.0f});
    CHECK(values("  0.5   1.5\n2 3  \n", req(1, 1000.0)) == std::vector<float>{1.5f, 3.0f});
    // "1,5" alone: two cells by ',' (more cells wins) unless a decimal comma is given.
    CHECK(values("1,5\n2,5\n", req(1, 1000.0)) == std::vector<float>{5, 5});
    CHECK(values("1,5\n2,5\n", req(0, 1000.0, 0, ',')) == std::vector<float>{1.5f, 2.5f});
    CHECK(values("1,5\n2,5\n", req(0, 1000.0, ';')) == std::vector<float>{1.5f, 2.5f});
    // The header must split as the rows do: "a;b" picks ';' over ','.
    CsvWaveformSource s(bytes("a;b\n1,5;2\n"), "t.csv", req(0, 1000.0), {});
    CHECK(s.info().format == "CSV waveform (';' delimited, decimal comma, 2 channels)");
    // A comma as delimiter and decimal mark cannot be read.
    CHECK_THROWS_AS(values("1,5\n", req(0, 1000.0, ',', ',')), UsageError);
}

TEST_CASE("A CSV waveform's values are scaled by the calibration", "[src]") {
    // 0.25 V at 100 mV/g given as full_scale 10 g per V -> 2.5 g.
    const std::string text = "x [V]\n0.25\n-1\n";
    CsvWaveformSource s(bytes(text), "t.csv", req(0, 1000.0), Calibration{10.0, "g"});
    CHECK(s.info().calibration.full_scale == 10.0);
    CHECK(s.info().calibration.unit == "g");
    CHECK(read_all(s) == std::vector<float>{2.5f, -10.0f});
}

TEST_CASE("A CSV waveform tolerates a byte-order mark, CRLF, comments and blank lines", "[src]") {
    const std::string text = "\xEF\xBB\xBF# logger export\r\nfs=1000\r\nx [g]\r\n1\r\n\r\n# pause\r\n2\r\n3\r\n\r\n";
    CsvWaveformSource s(bytes(text), "t.csv", req(), {});
    CHECK(s.info().frames == 3);
    CHECK(s.info().channel_name == "x");
    CHECK(read_all(s) == std::vector<float>{1, 2, 3});
}

TEST_CASE("A bad CSV waveform is refused naming the file, line and column", "[src]") {
    CHECK(error_of("") == "t.csv: is empty");
    CHECK(error_of("a,b\n# nothing\n") == "t.csv: no data rows (no line starting with a number)");
    CHECK_THAT(error_of("a,b\n1,2\n3,4x\n", req(1, 1000.0)), Catch::EndsWith("t.csv:3: column 2 (b): '4x' is not a number"));
    CHECK_THAT(error_of("1;2\n3;nan\n", req(1, 1000.0)), Catch::EndsWith("t.csv:2: column 2: 'nan' is not a finite number (as a float)"));
    CHECK_THAT(error_of("1,2\n3,-inf\n", req(1, 1000.0)), Catch::Contains("'-inf' is not a finite number"));
    // 1e39 is beyond the float range (FLT_MAX is about 3.4e38, C11 5.2.4.2.2).
    CHECK_THAT(error_of("1\n1e39\n"), Catch::EndsWith("t.csv:2: column 1: '1e39' is not a finite number (as a float)"));
    CHECK_THAT(error_of("a,b\n1,2\n3\n"), Catch::EndsWith("t.csv:3: a short row: 1 cells where line 2 has 2 (',' delimited)"));
    CHECK_THAT(error_of("a,b\n1,2\n3,4,5\n"), Catch::Contains("t.csv:3: a long row"));
    CHECK_THAT(error_of("a;b;c\n1;2\n"), Catch::EndsWith("t.csv:1: the header has 3 columns, the data rows 2 (';' delimited)"));
    // A long cell is quoted shortened.
    CHECK_THAT(error_of("1\n" + std::string(40, 'x') + "\n"), Catch::Contains("'" + std::string(32, 'x') + "...'"));
    CHECK_THAT(error_of(std::string("1\n2\0" "3\n", 6)), Catch::Contains("t.csv:2: holds a NUL byte"));
    CHECK_THAT(error_of(std::string("\xFF\xFEx\0", 4)), Catch::Contains("UTF-16"));
    CHECK(error_of("1\n2\n", req()) == "t.csv: no time column or rate line; give --sample-rate");
    CHECK_THAT(error_of("1\n", req(3, 1000.0)), Catch::Contains("channel 3 requested, but the file has 1 channel(s)"));
    CHECK_THAT(error_of("1\n", req(0, 50.0)), Catch::Contains("sample rate 50 Hz is outside 100 Hz .. 5 MHz"));
}

TEST_CASE("A CSV waveform's time column must be evenly spaced and agree with a stated rate", "[src]") {
    // A missing row at line 5: a step of 2 ms after steps of 1 ms.
    CHECK_THAT(error_of("time [ms],x\n0,1\n1,1\n2,1\n4,1\n", req()),
               Catch::Contains("t.csv:5: the time column is not evenly spaced: a step of 2 ms after a mean step of 1 ms"));
    CHECK_THAT(error_of("t,x\n1,1\n1,1\n", req()), Catch::Contains("t.csv:3: the time column does not increase"));
    CHECK_THAT(error_of("time [min],x\n0,1\n", req()), Catch::Contains("t.csv:1: time column in 'min'"));
    CHECK_THAT(error_of("t,x\n0,1\n", req()), Catch::Contains("one data row"));
    // Time column 1000 Hz against a rate line of 2000 Hz, and against --sample-rate.
    CHECK_THAT(error_of("fs=2000\ntime [ms],x\n0,1\n1,1\n", req()),
               Catch::Contains("the time column gives 1000 Hz, the rate line (line 1) 2000 Hz"));
    CHECK_THAT(error_of("time [ms],x\n0,1\n1,1\n", req(0, 1001.0)),
               Catch::Contains("its time column gives 1000 Hz, --sample-rate 1001 Hz"));
    // Agreement within 1e-6 (relative) passes.
    CHECK(values("time [ms],x\n0,1\n1,2\n", req(0, 1000.0005)) == std::vector<float>{1, 2});
}

TEST_CASE("A CSV waveform file is read in lines across its blocks, and described", "[src]") {
    // 100 000 rows (1.2 MB, beyond the reader's 64 KiB block): every value back in order.
    const fs::path p = tmp("long.csv");
    {
        std::ofstream out(p, std::ios::binary);
        out << "# fs = 25600\r\nch [g];n\r\n";
        for (int i = 0; i < 100000; ++i) out << i << ",5;" << i % 7 << "\r\n";
    }
    CsvWaveformSource s(p.string(), req(), {});
    CHECK(s.info().frames == 100000);
    const std::vector<float> x = read_all(s);
    REQUIRE(x.size() == 100000);
    for (std::size_t i = 0; i < x.size(); i += 9973) CHECK(x[i] == static_cast<float>(i) + 0.5f);
    const FileSummary d = describe_recording(p.string());
    CHECK(d.format == "CSV waveform (';' delimited, decimal comma, 2 channels)");
    REQUIRE(d.channels.size() == 2);
    CHECK(d.channels[1].name == "n");
    CHECK(d.channels[0].unit == "g");
    CHECK(d.channels[0].fs_hz == 25600.0);
    CHECK(d.notes.at(0) == "sample rate from its rate line (line 1)");
    CHECK_THROWS_WITH(CsvWaveformSource(tmp("none.csv").string(), req(), {}), Catch::EndsWith("none.csv: no such file"));
    fs::remove(p);
}
