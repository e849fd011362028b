// The reader of UFF datasets 58 and 58b. The record layout every file here is
// written to is the SDRL description as transcribed in methods A8.
#include <catch2/catch.hpp>

#include <unistd.h>

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <limits>
#include <span>
#include <string>
#include <vector>

#include "src/io/errors.hpp"
#include "src/io/sources.hpp"
#include "src/io/uff58.hpp"

namespace fs = std::filesystem;
using namespace cavitas::app;
using Catch::Matchers::Contains;

namespace {

fs::path tmp(const std::string& name) {
    const fs::path d = fs::temp_directory_path() / ("cavitas-uff-test-" + std::to_string(::getpid()));
    fs::create_directories(d);
    return d / name;
}

fs::path spit(const std::string& name, const std::string& bytes) {
    const fs::path p = tmp(name);
    std::ofstream out(p, std::ios::binary | std::ios::trunc);
    out.write(bytes.data(), static_cast<std::streamsize>(bytes.size()));
    REQUIRE(out.good());
    return p;
}

std::span<const std::byte> as_bytes(const std::string& s) {
    return {reinterpret_cast<const std::byte*>(s.data()), s.size()};
}

std::vector<float> read_all(AudioSource& s, std::size_t block = 777) {
    std::vector<float> all, buf(block);
    for (std::size_t n; (n = s.read(buf)) > 0;) all.insert(all.end(), buf.begin(), buf.begin() + static_cast<long>(n));
    return all;
}

// Methods A8's minimal time response (a 125 Hz sine sampled at 1 kHz, 8
// values, m/s^2), with the demo scenario's machine in ID1 and record 6.
const std::string kMinimal =
    "    -1\n"
    "    58\n"
    "OW-P101 DE H accel\n"
    "NONE\n"
    "09-Mar-24 10:15:00\n"
    "NONE\n"
    "NONE\n"
    "    1         0    0         0 P101-DEH           1   1 NONE               0   0\n"
    "         2         8         1  0.00000E+00  1.00000E-03  0.00000E+00\n"
    "        17    0    0    0 Time                 s\n"
    "        12    0    0    0 Acceleration         m/s^2\n"
    "         0    0    0    0 NONE                 NONE\n"
    "         0    0    0    0 NONE                 NONE\n"
    "  0.00000E+00  7.07107E-01  1.00000E+00  7.07107E-01  0.00000E+00 -7.07107E-01\n"
    " -1.00000E+00 -7.07107E-01\n"
    "    -1\n";

// The values of kMinimal as float (text parsed as double, then rounded).
const std::vector<float> kMinimalValues = {0.0f, 0.707107f, 1.0f, 0.707107f, 0.0f, -0.707107f, -1.0f, -0.707107f};

std::string replace(std::string s, const std::string& from, const std::string& to) {
    const auto at = s.find(from);
    REQUIRE(at != std::string::npos);
    return s.replace(at, from.size(), to);
}

std::string crlf(const std::string& s) {
    std::string out;
    for (char c : s) out += c == '\n' ? std::string("\r\n") : std::string(1, c);
    return out;
}

// The 11 header lines of a dataset (records 1..11), written to the A8 layout.
struct Header {
    int function_type = 1, ordinate_type = 2, spacing = 1;
    long long n = 8;
    double dx_s = 1e-3;
    int abscissa_type = 17;
    std::string abscissa_unit = "s", unit = "m/s^2", entity = "P101-DEH";
    int node = 1, direction = 1;
};

std::string header_lines(const Header& h) {
    char r6[128], r7[128], r8[128], r9[128];
    std::snprintf(r6, sizeof r6, "%5d%10d%5d%10d %-10s%10d%4d %-10s%10d%4d\n", h.function_type, 0, 0, 0,
                  h.entity.c_str(), h.node, h.direction, "NONE", 0, 0);
    std::snprintf(r7, sizeof r7, "%10d%10lld%10d%13.5E%13.5E%13.5E\n", h.ordinate_type, h.n, h.spacing, 0.0, h.dx_s,
                  0.0);
    std::snprintf(r8, sizeof r8, "%10d%5d%5d%5d %-20s %-20s\n", h.abscissa_type, 0, 0, 0, "Time",
                  h.abscissa_unit.c_str());
    std::snprintf(r9, sizeof r9, "%10d%5d%5d%5d %-20s %-20s\n", 12, 0, 0, 0, "Acceleration", h.unit.c_str());
    const std::string none = "         0    0    0    0 NONE                 NONE\n";
    return "OW-P101 test\nNONE\n01-Nov-26 08:00:00\nNONE\nNONE\n" + std::string(r6) + r7 + r8 + r9 + none + none;
}

std::string ascii58(const Header& h, const std::vector<double>& values) {
    std::string s = "    -1\n    58\n" + header_lines(h);
    char f[32];
    for (std::size_t i = 0; i < values.size(); ++i) {
        std::snprintf(f, sizeof f, h.ordinate_type == 4 ? "%20.12E" : "%13.5E", values[i]);
        s += f;
        if ((i + 1) % (h.ordinate_type == 4 ? 4 : 6) == 0 || i + 1 == values.size()) s += "\n";
    }
    return s + "    -1\n";
}

// A 58b dataset: id line, records 1..11, the values in the given byte order.
std::string binary58(const Header& h, const std::vector<double>& values, bool big_endian, long long n_bytes = -1) {
    const std::size_t size = h.ordinate_type == 4 ? 8 : 4;
    std::string block;
    for (double v : values) {
        char b[8];
        const float f = static_cast<float>(v);
        if (size == 4) std::memcpy(b, &f, 4);
        else std::memcpy(b, &v, 8);
        if (big_endian) std::reverse(b, b + size);
        block.append(b, size);
    }
    char id[128];
    std::snprintf(id, sizeof id, "%6d%c%6d%6d%12d%12lld%6d%6d%12d%12d\n", 58, 'b', big_endian ? 2 : 1, 2, 11,
                  n_bytes >= 0 ? n_bytes : static_cast<long long>(block.size()), 0, 0, 0, 0);
    return "    -1\n" + std::string(id) + header_lines(h) + block + "\n    -1\n";
}

std::vector<double> ramp(std::size_t n, double scale) {
    std::vector<double> v(n);
    for (std::size_t i = 0; i < n; ++i) v[i] = scale * std::sin(0.37 * static_cast<double>(i)) + 0.001 * static_cast<double>(i);
    return v;
}

}  // namespace

TEST_CASE("The minimal time response of methods A8 reads back its rate, length, unit and values", "[src][uff]") {
    // Check value: methods A8, "Minimal time response (125 Hz sine, 1 kHz, 8 samples)".
    const auto p = spit("minimal.uff", kMinimal);
    Uff58Source s(p.string(), 0, Calibration{});
    CHECK(s.info().fs_hz == 1000.0);
    CHECK(s.info().frames == 8);
    CHECK(s.info().channels == 1);
    CHECK(s.info().stated_unit == "m/s^2");
    CHECK(s.info().channel_name == "P101-DEH:1:+X");
    CHECK(s.info().format == "UFF dataset 58 (ASCII, real single)");
    CHECK(s.info().is_float);
    CHECK(s.info().pcm_bits == 0);
    CHECK(read_all(s) == kMinimalValues);
}

TEST_CASE("A UFF file is told by its delimiter line and opened and described through sources", "[src][uff]") {
    // Detection: sources.hpp, a UFF file opens with a line holding only -1.
    const auto p = spit("minimal-sniffed.dat", kMinimal);
    CHECK(detect_format(p.string()) == RecordingFormat::uff58);
    auto src = open_recording(p.string(), ReadRequest{}, Calibration{2.0, "m/s^2"});
    std::vector<float> twice;
    for (float v : kMinimalValues) twice.push_back(v * 2.0f);
    CHECK(read_all(*src) == twice);  // calibration.full_scale multiplies each value
    const FileSummary sum = describe_recording(p.string());
    REQUIRE(sum.channels.size() == 1);
    CHECK(sum.channels[0].fs_hz == 1000.0);
    CHECK(sum.channels[0].frames == 8);
    CHECK(sum.channels[0].unit == "m/s^2");
    CHECK(sum.channels[0].name == "P101-DEH:1:+X");
    bool date = false;
    for (const auto& n : sum.notes) date = date || n.find("09-Mar-24 10:15:00") != std::string::npos;
    CHECK(date);  // ID3 holds the date (methods A8, records 1-5)
}

TEST_CASE("CRLF line ends, a blank line before the closing -1 and trimmed blanks read the same values", "[src][uff]") {
    // Pitfalls of exporters: methods A8 (newline before the closing -1; trailing blanks trimmed); CRLF is
    // common practice, no source.
    const std::string blank_before_close = replace(kMinimal, " -1.00000E+00 -7.07107E-01\n", " -1.00000E+00 -7.07107E-01\n\n");
    for (const std::string& text : {crlf(kMinimal), blank_before_close, crlf(blank_before_close)}) {
        Uff58Source s(as_bytes(text), "variant.uff", 0, Calibration{});
        CHECK(read_all(s, 1) == kMinimalValues);
    }
}

TEST_CASE("Numbers that fill their Fortran field and touch are split by the field width", "[src][uff]") {
    // 6E13.5 per line (methods A8, record 12); a writer with one more digit fills all 13 characters, so two
    // negative numbers touch (common practice, no source).
    std::string text = replace(kMinimal, "  0.00000E+00  7.07107E-01  1.00000E+00  7.07107E-01  0.00000E+00 -7.07107E-01",
                               " 0.000000E+00 7.071070E-01 1.000000E+00 7.071070E-01 0.000000E+00-7.071070E-01");
    text = replace(text, " -1.00000E+00 -7.07107E-01", "-1.000000E+00-7.071070E-01");
    Uff58Source s(as_bytes(text), "touching.uff", 0, Calibration{});
    CHECK(read_all(s) == kMinimalValues);
}

TEST_CASE("A missing closing -1 at the end of the file is accepted when every value is there", "[src][uff]") {
    // Decision of this reader: the value count of record 7 tells a complete dataset; the delimiter is not needed.
    const std::string open_end = kMinimal.substr(0, kMinimal.rfind("    -1"));
    Uff58Source s(as_bytes(open_end), "open-end.uff", 0, Calibration{});
    CHECK(read_all(s) == kMinimalValues);
    const std::string cut = open_end.substr(0, open_end.rfind(" -1.00000E+00"));
    CHECK_THROWS_WITH(Uff58Source(as_bytes(cut), "cut.uff", 0, Calibration{}),
                      Contains("cut.uff: dataset 1 (58, channel 0, record 12): holds 6 of the 8 values") &&
                          Contains("without the closing -1"));
}

TEST_CASE("The 58b id line of methods A8 describes 222 400 real single values, its byte count advisory", "[src][uff]") {
    // Check value: methods A8 / 7.x, pyuff issue #61 header "58b 1 2 11 889600 0 0 0 0" = 222 400 real single
    // values x 4 bytes, dt 3.125e-4 s (3200 Hz, 69.5 s).
    Header h;
    h.n = 222400;
    h.dx_s = 3.125e-4;
    const std::vector<double> v = ramp(222400, 3.0);
    const std::string file = binary58(h, v, false);
    REQUIRE(file.find("    58b     1     2          11      889600     0     0           0           0\n") ==
            std::string("    -1\n").size());
    Uff58Source s(as_bytes(file), "issue61.uff", 0, Calibration{});
    CHECK(s.info().fs_hz == 3200.0);
    CHECK(s.info().frames == 222400);
    CHECK_THAT(s.info().duration_s(), Catch::Matchers::WithinRel(69.5, 1e-12));
    CHECK(s.info().format == "UFF dataset 58b (binary, little-endian, real single)");
    const auto x = read_all(s, 8191);
    REQUIRE(x.size() == v.size());
    for (std::size_t i = 0; i < x.size(); i += 997) CHECK(x[i] == static_cast<float>(v[i]));
    // n_bytes N x 8 for single values (pyuff writes N x 8 whatever the type, methods A8): the count of record 7 wins.
    const std::string wrong = binary58(h, v, false, 222400LL * 8);
    Uff58Source w(as_bytes(wrong), "n-bytes-x8.uff", 0, Calibration{});
    CHECK(read_all(w, 8191) == x);
    const FileSummary sum = describe_uff58(as_bytes(wrong), "n-bytes-x8.uff");
    bool advisory = false;
    for (const auto& n : sum.notes) advisory = advisory || n.find("states 1779200 bytes") != std::string::npos;
    CHECK(advisory);
}

TEST_CASE("Big-endian real double 58b values are read bit for bit", "[src][uff]") {
    // Byte order 2 = big endian, format 2 = IEEE 754 (methods A8, 58b id line).
    Header h;
    h.ordinate_type = 4;
    h.n = 1000;
    h.dx_s = 1.0 / 12800.0;
    const std::vector<double> v = ramp(1000, 7.5);
    const std::string file = binary58(h, v, true);  // the bytes outlive the source
    Uff58Source s(as_bytes(file), "big.uff", 0, Calibration{});
    CHECK(s.info().format == "UFF dataset 58b (binary, big-endian, real double)");
    const auto x = read_all(s, 300);
    REQUIRE(x.size() == 1000);
    for (std::size_t i = 0; i < x.size(); ++i) CHECK(x[i] == static_cast<float>(v[i]));
}

TEST_CASE("Several datasets 58 are channels, other datasets are skipped and noted", "[src][uff]") {
    // Several datasets per file (methods A8); 151 is the header dataset (SDRL dataset list, common practice).
    Header a, b;
    b.n = 12;
    b.dx_s = 5e-4;
    b.entity = "P101-NDEV";
    b.direction = -2;
    b.unit = "g";
    const std::string h151 = "    -1\n   151\nOW-P101\nNONE\ncavitas test\n    -1\n";
    const std::string file = h151 + ascii58(a, ramp(8, 1.0)) + binary58(b, ramp(12, 2.0), false);
    const auto p = spit("three.uff", file);
    Uff58Source s1(p.string(), 1, Calibration{});
    CHECK(s1.info().channels == 2);
    CHECK(s1.info().fs_hz == 2000.0);  // the chosen dataset's own rate and length
    CHECK(s1.info().frames == 12);
    CHECK(s1.info().stated_unit == "g");
    CHECK(s1.info().channel_name == "P101-NDEV:1:-Y");
    const FileSummary sum = describe_uff58(p.string());
    REQUIRE(sum.channels.size() == 2);
    CHECK(sum.channels[0].fs_hz == 1000.0);
    CHECK(sum.channels[1].frames == 12);
    CHECK(sum.format == "UFF datasets 58/58b (mixed encodings)");
    std::string notes;
    for (const auto& n : sum.notes) notes += n + "\n";
    CHECK_THAT(notes, Contains("dataset 1 is a dataset 151 (header), skipped"));
    CHECK_THAT(notes, Contains("differ in sample rate or length"));
    CHECK_THROWS_WITH(Uff58Source(p.string(), 2, Calibration{}),
                      Contains("three.uff: channel 2 requested, but the file has 2 dataset(s) 58"));
}

TEST_CASE("An uneven abscissa is read when it is evenly spaced and refused when not", "[src][uff]") {
    // Uneven spacing interleaves x and y (methods A8, record 12); the 1e-6 rule is this reader's.
    Header h;
    h.spacing = 0;
    h.n = 6;
    h.dx_s = 0.0;
    std::vector<double> xy;
    for (int i = 0; i < 6; ++i) {
        xy.push_back(0.5 + i * 2.5e-4);
        xy.push_back(0.25 * i);
    }
    const std::string file = ascii58(h, xy);  // the bytes outlive the source
    Uff58Source s(as_bytes(file), "uneven.uff", 0, Calibration{});
    CHECK_THAT(s.info().fs_hz, Catch::Matchers::WithinRel(4000.0, 1e-9));
    CHECK(read_all(s) == std::vector<float>{0.0f, 0.25f, 0.5f, 0.75f, 1.0f, 1.25f});
    xy[6] += 1e-4;  // the fourth x 0.4 samples late
    CHECK_THROWS_WITH(Uff58Source(as_bytes(ascii58(h, xy)), "jitter.uff", 0, Calibration{}),
                      Contains("jitter.uff: dataset 1 (58, channel 0, record 12, line 15): x of value 3") &&
                          Contains("cavitas needs evenly sampled data"));
}

TEST_CASE("Datasets that are not a real time waveform are refused naming the file, dataset and problem",
          "[src][uff]") {
    // Function types, ordinate types and abscissa types: methods A8, records 6-8.
    auto refused = [](Header h, const std::string& words, bool binary = false) {
        // A complex value is two numbers (methods A8, record 12).
        const std::size_t count = static_cast<std::size_t>(h.n) * (h.ordinate_type == 5 ? 2 : 1);
        const std::string text = binary ? binary58(h, ramp(count, 1.0), false) : ascii58(h, ramp(count, 1.0));
        CHECK_THROWS_WITH(Uff58Source(as_bytes(text), "bad.uff", 0, Calibration{}), Contains(words));
    };
    Header frf;
    frf.function_type = 4;
    refused(frf, "bad.uff: dataset 1 (58, channel 0, record 6): function type 4 (frequency response function)");
    Header complex;
    complex.ordinate_type = 5;
    refused(complex, "bad.uff: dataset 1 (58b, channel 0, record 7): ordinate data type 5 (complex single)", true);
    Header dx0;
    dx0.dx_s = 0.0;
    refused(dx0, "bad.uff: dataset 1 (58, channel 0, record 7): abscissa increment 0 s");
    Header slow;
    slow.dx_s = 10.0;
    refused(slow, "record 7): abscissa increment 10 s is a sample rate of 0.1 Hz, outside 1 Hz .. 10 MHz");
    Header hz;
    hz.abscissa_type = 18;
    hz.abscissa_unit = "Hz";
    refused(hz, "bad.uff: dataset 1 (58, channel 0, record 8): abscissa of data type 18 in unit \"Hz\" is not time");
    Header none;
    none.n = 0;
    refused(none, "record 7): number of values 0 is outside 1 .. 2^31");
}

TEST_CASE("A damaged 58b or a value that is not finite is refused with the dataset and the place", "[src][uff]") {
    Header h;
    h.n = 100;
    const std::string file = binary58(h, ramp(100, 1.0), false);
    // Truncated binary block: derive the length from type and count (methods A8).
    const std::string cut = file.substr(0, file.size() - 8 - 4 * 30);
    CHECK_THROWS_WITH(Uff58Source(as_bytes(cut), "cut.uff", 0, Calibration{}),
                      Contains("cut.uff: dataset 1 (58b, channel 0, record 12): the file ends after 70 of the 100 values"));
    std::vector<double> v = ramp(8, 1.0);
    v[3] = std::numeric_limits<double>::quiet_NaN();
    CHECK_THROWS_WITH(Uff58Source(as_bytes(binary58(Header{}, v, true)), "nan.uff", 0, Calibration{}),
                      Contains("nan.uff: dataset 1 (58b, channel 0, record 12): value 3 (counting from 0) is nan"));
    const std::string text_inf = replace(kMinimal, "-1.00000E+00", "         inf");
    CHECK_THROWS_WITH(Uff58Source(as_bytes(text_inf), "inf.uff", 0, Calibration{}),
                      Contains("inf.uff: dataset 1 (58, channel 0, record 12, line 15): value 6 (counting from 0) is inf"));
    CHECK_THROWS_WITH(Uff58Source(as_bytes(std::string("    -1\n  2411\n")), "nodes.uff", 0, Calibration{}),
                      Contains("nodes.uff: holds no dataset 58"));
    CHECK_THROWS_WITH(Uff58Source(tmp("missing.uff").string(), 0, Calibration{}), Contains("missing.uff: no such file"));
}
