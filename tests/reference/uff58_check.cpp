// Reads back the files write_uff58.py wrote (UFF datasets 58/58b to the record
// layout of methods A8, and a float32 WAV) through open_recording and compares
// every sample, bit for bit, with the values the script wrote beside them:
// text values as numpy parsed them back (float64, rounded to float32), binary
// values as written. The WAV's channels must equal binary_le_single.uff's.
//
//   cavitas_uff58_check DIR      (exit 0 all equal, 1 a difference, 77 no files)
#include <algorithm>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <exception>
#include <fstream>
#include <iterator>
#include <sstream>
#include <string>
#include <vector>

#include "src/io/sources.hpp"

namespace {

using namespace cavitas::app;

int failures = 0;

void fail(const std::string& what) {
    std::printf("FAIL %s\n", what.c_str());
    ++failures;
}

std::vector<float> load_f32(const std::string& path) {
    std::ifstream in(path, std::ios::binary);
    std::vector<char> raw((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
    std::vector<float> v(raw.size() / 4);
    std::memcpy(v.data(), raw.data(), v.size() * 4);  // little-endian float32 (x86-64, the project's target)
    return v;
}

std::vector<float> read_channel(const std::string& path, int channel, double& fs_hz, std::size_t& frames) {
    ReadRequest request;
    request.channel = channel;
    auto src = open_recording(path, request, Calibration{});
    fs_hz = src->info().fs_hz;
    frames = src->info().frames;
    std::vector<float> all, buf(4099);
    for (std::size_t n; (n = src->read(buf)) > 0;) all.insert(all.end(), buf.begin(), buf.begin() + static_cast<long>(n));
    return all;
}

// The first index where two sample vectors differ in bits, or -1.
long first_difference(const std::vector<float>& a, const std::vector<float>& b) {
    for (std::size_t i = 0; i < a.size() && i < b.size(); ++i)
        if (std::memcmp(&a[i], &b[i], 4) != 0) return static_cast<long>(i);
    return a.size() == b.size() ? -1 : static_cast<long>(std::min(a.size(), b.size()));
}

void check_file(const std::string& dir, const std::string& line) {
    std::istringstream fields(line);
    std::string file, prefix;
    int channels = 0;
    double fs_hz = 0.0;
    std::size_t frames = 0;
    fields >> file >> channels >> fs_hz >> frames >> prefix;
    for (int c = 0; c < channels; ++c) {
        const std::string what = file + " channel " + std::to_string(c);
        double got_fs = 0.0;
        std::size_t got_frames = 0;
        const std::vector<float> got = read_channel(dir + "/" + file, c, got_fs, got_frames);
        const std::vector<float> want = load_f32(dir + "/" + prefix + ".ch" + std::to_string(c) + ".f32");
        // The uneven file's rate comes from x values written as E13.5: 6 significant digits (methods A8, record 12).
        const double tol = file.find("uneven") != std::string::npos ? 1e-5 : 1e-12;
        if (std::abs(got_fs - fs_hz) > tol * fs_hz) fail(what + ": " + std::to_string(got_fs) + " Hz");
        if (got_frames != frames || got.size() != frames) fail(what + ": " + std::to_string(got.size()) + " samples");
        if (const long i = first_difference(got, want); i >= 0)
            fail(what + ": sample " + std::to_string(i) + " differs from " + prefix);
        else
            std::printf("ok   %s: %zu samples equal to %s\n", what.c_str(), got.size(), prefix.c_str());
    }
}

}  // namespace

int main(int argc, char** argv) {
    if (argc != 2) {
        std::fprintf(stderr, "usage: cavitas_uff58_check DIR\n");
        return 2;
    }
    const std::string dir = argv[1];
    std::ifstream manifest(dir + "/manifest.txt");
    if (!manifest) {
        std::printf("SKIPPED: no %s/manifest.txt (write_uff58.py did not run)\n", dir.c_str());
        return 77;
    }
    try {
        for (std::string line; std::getline(manifest, line);)
            if (!line.empty()) check_file(dir, line);
    } catch (const std::exception& e) {
        fail(e.what());
    }
    return failures == 0 ? 0 : 1;
}
