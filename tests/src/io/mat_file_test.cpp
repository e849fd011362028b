// The MAT-file reader on files written here with libmatio itself (Mat_CreateVer,
// Mat_VarWrite): v7.3 (HDF5), integer classes, and the variables it must refuse.
// The files numpy and scipy write are checked in tests/reference/waveforms_test.cpp.
#include <catch2/catch.hpp>

#include <matio.h>
#include <unistd.h>

#include <complex>
#include <cstdint>
#include <filesystem>
#include <fstream>
#include <string>
#include <vector>

#include "src/io/errors.hpp"
#include "src/io/mat_file.hpp"
#include "src/io/sources.hpp"

namespace fs = std::filesystem;
using namespace cavitas::app;

namespace {

fs::path tmp(const std::string& name) {
    const fs::path d = fs::temp_directory_path() / ("cavitas-mat-test-" + std::to_string(::getpid()));
    fs::create_directories(d);
    return d / name;
}

struct Writer {
    mat_t* mat;
    Writer(const fs::path& p, mat_ft version) : mat(Mat_CreateVer(p.c_str(), nullptr, version)) { REQUIRE(mat); }
    ~Writer() { Mat_Close(mat); }
    template <class T>
    void put(const char* name, matio_classes c, matio_types t, std::size_t rows, std::size_t cols, std::vector<T> x,
             matio_compression z = MAT_COMPRESSION_NONE, int opt = 0) {
        std::size_t dims[2] = {rows, cols};
        matvar_t* v = Mat_VarCreate(name, c, t, 2, dims, x.data(), opt);
        REQUIRE(v);
        REQUIRE(Mat_VarWrite(mat, v, z) == 0);
        Mat_VarFree(v);
    }
};

ReadRequest req(const std::string& variable, int channel = 0, std::optional<double> fs_hz = std::nullopt) {
    ReadRequest r;
    r.variable = variable;
    r.channel = channel;
    r.sample_rate_hz = fs_hz;
    return r;
}

std::vector<float> read_all(AudioSource& s) {
    std::vector<float> all, block(5);
    for (std::size_t n; (n = s.read(block)) > 0;) all.insert(all.end(), block.begin(), block.begin() + static_cast<long>(n));
    return all;
}

std::string error_of(const fs::path& p, const ReadRequest& r) {
    try {
        MatSource s(p.string(), r, Calibration{});
        read_all(s);
    } catch (const InputError& e) {
        return e.what();
    }
    return "(no error)";
}

}  // namespace

TEST_CASE("A v7.3 MAT-file (HDF5) is read block by block", "[src]") {
    // Debian's libmatio is built with HDF5: Mat_CreateVer(MAT_FT_MAT73) writes v7.3.
    const fs::path p = tmp("v73.mat");
    std::vector<double> x(3 * 40000);  // 40 000 x 3, column-major: column c holds c * 1e5 + row
    for (std::size_t i = 0; i < x.size(); ++i) x[i] = static_cast<double>((i / 40000) * 100000 + i % 40000);
    {
        Writer w(p, MAT_FT_MAT73);
        w.put("acc", MAT_C_DOUBLE, MAT_T_DOUBLE, 40000, 3, x);
        w.put("Fs", MAT_C_DOUBLE, MAT_T_DOUBLE, 1, 1, std::vector<double>{25600.0});
    }
    MatSource s(p.string(), req("", 2), Calibration{2.0, "g"});
    CHECK(s.info().format == "MATLAB 7.3 MAT-file (v7.3)");
    CHECK(s.info().fs_hz == 25600.0);  // the Fs variable
    CHECK(s.info().frames == 40000);
    CHECK(s.info().channels == 3);
    CHECK(s.info().channel_name == "acc:col 2");
    const std::vector<float> y = read_all(s);
    REQUIRE(y.size() == 40000);
    // Calibration 2 g per unit: 2 * (200 000 + row).
    for (std::size_t i = 0; i < y.size(); i += 3331) CHECK(y[i] == static_cast<float>(2.0 * (200000.0 + static_cast<double>(i))));
}

TEST_CASE("Integer MAT variables are read as their values", "[src]") {
    // int16 -32768 and 32767 are the class's ends (MATLAB's intmin/intmax('int16')).
    const fs::path p = tmp("int.mat");
    {
        Writer w(p, MAT_FT_MAT5);
        w.put("x", MAT_C_INT16, MAT_T_INT16, 4, 1, std::vector<std::int16_t>{-32768, -1, 0, 32767},
              MAT_COMPRESSION_ZLIB);
    }
    MatSource s(p.string(), req("", 0, 1000.0), Calibration{});
    CHECK(s.info().format == "MATLAB 5.0 MAT-file (v7 compressed)");
    CHECK(read_all(s) == std::vector<float>{-32768, -1, 0, 32767});
}

TEST_CASE("MAT variables that are not waveforms are refused naming the variable and its class", "[src]") {
    const fs::path p = tmp("odd.mat");
    {
        Writer w(p, MAT_FT_MAT5);
        w.put("name", MAT_C_CHAR, MAT_T_UINT8, 1, 4, std::vector<char>{'P', '1', '0', '1'});
        std::vector<double> re{1, 2, 3}, im{0, 1, 0};
        mat_complex_split_t z{re.data(), im.data()};
        std::size_t dims[2] = {3, 1};
        matvar_t* v = Mat_VarCreate("z", MAT_C_DOUBLE, MAT_T_DOUBLE, 2, dims, &z, MAT_F_COMPLEX);
        REQUIRE(Mat_VarWrite(w.mat, v, MAT_COMPRESSION_NONE) == 0);
        Mat_VarFree(v);
        w.put("wide", MAT_C_DOUBLE, MAT_T_DOUBLE, 2, 5, std::vector<double>(10, 1.0));
        w.put("rpm", MAT_C_DOUBLE, MAT_T_DOUBLE, 1, 1, std::vector<double>{1485.0});
        w.put("bad", MAT_C_DOUBLE, MAT_T_DOUBLE, 3, 1, std::vector<double>{1.0, std::nan(""), 2.0});
        const char* fields[] = {"a"};
        std::size_t one[2] = {1, 1};
        matvar_t* s = Mat_VarCreateStruct("meta", 2, one, fields, 1);
        REQUIRE(Mat_VarWrite(w.mat, s, MAT_COMPRESSION_NONE) == 0);
        Mat_VarFree(s);
    }
    const std::string f = p.string();
    CHECK(error_of(p, req("name", 0, 1000.0)) == f + ": variable name is a char array, not numbers");
    CHECK(error_of(p, req("z", 0, 1000.0)) == f + ": variable z is complex; a waveform is real");
    CHECK(error_of(p, req("meta", 0, 1000.0)) == f + ": variable meta is a struct array, not numbers");
    CHECK(error_of(p, req("rpm", 0, 1000.0)) == f + ": variable rpm is a single value, not a waveform");
    CHECK_THAT(error_of(p, req("wide", 0, 1000.0)), Catch::Contains("variable wide is a 2\xC3\x97" "5 matrix"));
    CHECK_THAT(error_of(p, req("nope", 0, 1000.0)), Catch::Contains(": no variable 'nope' (the file holds: name 1\xC3\x97" "4 char"));
    CHECK(error_of(p, req("bad", 0, 1000.0)) ==
          f + ": variable bad, sample 2: not a finite number (NaN, infinity or beyond the float range)");
    CHECK(error_of(p, req("bad")) == f + ": variable bad has no sample rate in the file; give --sample-rate");
    // Only one signal-like variable (bad): it is chosen when none is named.
    CHECK_THAT(error_of(p, req("", 0, 1000.0)), Catch::Contains("variable bad, sample 2"));
    CHECK_THAT(error_of(p, req("bad", 1, 1000.0)), Catch::Contains("channel 1 requested, but variable bad has 1 channel(s)"));
    const FileSummary d = describe_mat(f);
    REQUIRE(d.channels.size() == 1);
    CHECK(d.channels[0].name == "bad");
    CHECK(d.notes.size() == 6);  // name, z, wide, rpm, meta, and no rate variable
}

TEST_CASE("Files that are not MAT-files are refused by name", "[src]") {
    const fs::path p = tmp("text.mat");
    std::ofstream(p) << "MATLAB 5.0 MAT-file, but only this line\n";
    CHECK_THAT(error_of(p, req("")), Catch::StartsWith(p.string() + ": not a readable MAT-file"));
    CHECK_THAT(error_of(tmp("none.mat"), req("")), Catch::EndsWith("none.mat: no such file"));
    CHECK(detect_format(p.string()) == RecordingFormat::mat);  // by its first bytes (sources.cpp)
}

TEST_CASE("Damaged MAT-files are refused by name, with nothing on stderr from libmatio", "[src]") {
    // A v5 header (MathWorks, "MAT-File Format": 116 bytes of text, 8 of subsystem
    // offset, version 0x0100, "IM") and one miMATRIX element promising 4000 bytes but holding 16.
    std::string b = "MATLAB 5.0 MAT-file" + std::string(97, ' ') + std::string(8, '\0');
    b += std::string("\x00\x01IM", 4);
    b += std::string("\x0e\x00\x00\x00\xa0\x0f\x00\x00", 8);
    b += std::string("\x06\x00\x00\x00\x08\x00\x00\x00\x06\x00\x00\x00\x00\x00\x00\x00", 16);
    const fs::path cut = tmp("cut.mat");
    std::ofstream(cut, std::ios::binary) << b;
    CHECK_THAT(error_of(cut, req("", 0, 1000.0)), Catch::StartsWith(cut.string() + ": "));
    // A valid file cut to half its bytes.
    const fs::path whole = tmp("whole.mat"), half = tmp("half.mat");
    {
        Writer w(whole, MAT_FT_MAT5);
        w.put("x", MAT_C_DOUBLE, MAT_T_DOUBLE, 20000, 1, std::vector<double>(20000, 0.5));
    }
    fs::copy_file(whole, half, fs::copy_options::overwrite_existing);
    fs::resize_file(half, fs::file_size(whole) / 2);
    CHECK_THAT(error_of(half, req("", 0, 1000.0)), Catch::StartsWith(half.string() + ": "));
    fs::resize_file(half, 200);
    CHECK_THAT(error_of(half, req("", 0, 1000.0)), Catch::StartsWith(half.string() + ": "));
}
