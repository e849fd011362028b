// Hostile inputs against the real cavitas binary. Every damaged, foreign,
// absurd or misdirected input must end in the contracted exit status (1 for a
// bad input, with exactly one line "cavitas: error: <file>: <problem>" on
// stderr; 2 for a bad command line), never in a crash or a hang, and must
// leave no output file behind nor change one that was already there.
// The corpus is generated at test time in a per-process temp folder.
#include <catch2/catch.hpp>

#include <sndfile.h>
#include <sys/stat.h>
#include <sys/types.h>
#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <functional>
#include <limits>
#include <numbers>
#include <optional>
#include <random>
#include <sstream>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

namespace fs = std::filesystem;

namespace {

constexpr int kRate = 12800;     // Hz: above cavitas' 100 Hz floor, quick to analyse
constexpr int kSeconds = 4;      // four 1 s segments
constexpr int kTimeoutS = 10;    // a call that takes longer than this is a hang
// Rows whose input must be refused before a single sample is analysed use a
// shorter limit, so that a hang costs the suite little.
constexpr int kQuickS = 3;

// Removes the corpus when the test process ends.
struct RemoveOnExit {
    fs::path dir;
    ~RemoveOnExit() {
        std::error_code ec;
        fs::remove_all(dir, ec);
    }
};

fs::path workdir() {
    static const fs::path d = [] {
        fs::path p = fs::temp_directory_path() / ("cavitas-hostile-test-" + std::to_string(::getpid()));
        fs::create_directories(p);
        return p;
    }();
    static const RemoveOnExit cleanup{d};
    return d;
}

fs::path at(const std::string& name) { return workdir() / name; }
std::string q(const fs::path& p) { return "'" + p.string() + "'"; }
// The quoted path of a corpus file, for command lines.
std::string Q(const std::string& name) { return q(at(name)); }

std::string slurp(const fs::path& p) {
    std::ifstream in(p, std::ios::binary);
    std::stringstream ss;
    ss << in.rdbuf();
    return ss.str();
}

void spit(const fs::path& p, const std::string& bytes) {
    std::ofstream out(p, std::ios::binary | std::ios::trunc);
    out.write(bytes.data(), static_cast<std::streamsize>(bytes.size()));
    REQUIRE(out.good());
}

struct Run {
    bool exited = false;  // false: the shell itself was killed by a signal
    int status = -1;
    int timeout_s = 0;
    std::string out, err;
};

// Runs cavitas under `timeout`, stdin closed, stdout and stderr to files.
Run run(const std::string& args, int timeout_s = kTimeoutS) {
    const fs::path o = at("stdout.txt"), e = at("stderr.txt");
    const std::string cmd = "timeout " + std::to_string(timeout_s) + " '" + std::string(CAVITAS_BIN) + "' " + args +
                            " </dev/null >" + q(o) + " 2>" + q(e);
    const int rc = std::system(cmd.c_str());
    Run r;
    r.timeout_s = timeout_s;
    r.exited = WIFEXITED(rc);
    r.status = r.exited ? WEXITSTATUS(rc) : -1;
    r.out = slurp(o);
    r.err = slurp(e);
    return r;
}

// 124 is timeout's "timed out"; the shell reports a child killed by signal N as 128 + N.
bool crashed_or_hung(const Run& r) { return !r.exited || r.status == 124 || r.status > 128; }

std::string describe(const Run& r) {
    if (!r.exited) return "killed by a signal";
    if (r.status == 124) return "timed out after " + std::to_string(r.timeout_s) + " s (hang)";
    if (r.status > 128) return "killed by signal " + std::to_string(r.status - 128) + " (crash)";
    return "exit " + std::to_string(r.status);
}

// A kSeconds, kRate, 16-bit mono WAV: the 1x line of 1485 rpm and the blade-pass
// line of 7 vanes over uniform noise, written by libsndfile.
void make_wav(const fs::path& p, std::uint64_t seed) {
    SF_INFO info{};
    info.samplerate = kRate;
    info.channels = 1;
    info.format = SF_FORMAT_WAV | SF_FORMAT_PCM_16;
    SNDFILE* f = sf_open(p.string().c_str(), SFM_WRITE, &info);
    REQUIRE(f != nullptr);
    std::vector<float> x(static_cast<std::size_t>(kRate) * kSeconds);
    std::uint64_t s = seed;
    for (std::size_t i = 0; i < x.size(); ++i) {
        s = s * 6364136223846793005ULL + 1442695040888963407ULL;
        const double u = static_cast<double>(s >> 11) / 9007199254740992.0 - 0.5;
        const double t = static_cast<double>(i) / kRate;
        x[i] = static_cast<float>(0.01 * std::sin(2 * std::numbers::pi * 24.75 * t) +
                                  0.02 * std::sin(2 * std::numbers::pi * 173.25 * t) + 0.02 * u);
    }
    REQUIRE(sf_writef_float(f, x.data(), static_cast<sf_count_t>(x.size())) == static_cast<sf_count_t>(x.size()));
    sf_close(f);
}

// The bytes of a valid WAV, to be damaged by the rows.
const std::string& wav_bytes() {
    static const std::string bytes = [] {
        const fs::path p = at("pristine.wav");
        make_wav(p, 7);
        return slurp(p);
    }();
    return bytes;
}

// Offset of the body of RIFF chunk `id` (e.g. "fmt ", "data") in a WAV.
std::size_t chunk_body(const std::string& wav, const std::string& id) {
    std::size_t pos = 12;
    while (pos + 8 <= wav.size()) {
        const auto size = static_cast<std::uint32_t>(static_cast<unsigned char>(wav[pos + 4])) |
                          static_cast<std::uint32_t>(static_cast<unsigned char>(wav[pos + 5])) << 8 |
                          static_cast<std::uint32_t>(static_cast<unsigned char>(wav[pos + 6])) << 16 |
                          static_cast<std::uint32_t>(static_cast<unsigned char>(wav[pos + 7])) << 24;
        if (wav.compare(pos, 4, id) == 0) return pos + 8;
        pos += 8 + size + (size & 1u);
    }
    FAIL("no '" << id << "' chunk in the generated WAV");
    return 0;
}

void put_le(std::string& b, std::size_t off, std::uint32_t v, int bytes) {
    for (int i = 0; i < bytes; ++i) b[off + static_cast<std::size_t>(i)] = static_cast<char>((v >> (8 * i)) & 0xFFu);
}

void put_be32(std::string& b, std::uint32_t v) {
    for (int i = 3; i >= 0; --i) b += static_cast<char>((v >> (8 * i)) & 0xFFu);
}

// Writes a copy of the valid WAV with one edit applied.
std::function<void()> patched_wav(const std::string& name, std::function<void(std::string&)> edit) {
    return [name, edit] {
        std::string b = wav_bytes();
        edit(b);
        spit(at(name), b);
    };
}

// A field of the fmt chunk: +0 format tag (16 bit), +2 channels (16 bit), +4 sample rate (32 bit).
std::function<void(std::string&)> fmt_field(std::size_t offset, std::uint32_t value, int bytes) {
    return [=](std::string& b) { put_le(b, chunk_body(b, "fmt ") + offset, value, bytes); };
}

std::function<void()> copy_of(const std::string& from, const std::string& to) {
    return [=] { fs::copy_file(at(from), at(to), fs::copy_options::overwrite_existing); };
}

std::function<void()> text_file(const std::string& name, const std::string& text) {
    return [=] { spit(at(name), text); };
}

// The good baseline, edited as JSON.
std::function<void()> edited_baseline(const std::string& name, std::function<void(nlohmann::json&)> edit) {
    return [=] {
        nlohmann::json j = nlohmann::json::parse(slurp(at("good.json")));
        edit(j);
        spit(at(name), j.dump(2));
    };
}

// The control row's finding, edited as JSON (rows run in order; the control comes first).
std::function<void()> edited_finding(const std::string& name, std::function<void(nlohmann::json&)> edit) {
    return [=] {
        nlohmann::json j = nlohmann::json::parse(slurp(at("ctl-finding.json")));
        edit(j);
        spit(at(name), j.dump());
    };
}

// A 4 s recording in another container libsndfile writes (RF64, W64, AU), cut to 45 % of its bytes.
std::function<void()> cut_container(const std::string& name, int format) {
    return [=] {
        SF_INFO info{};
        info.samplerate = kRate;
        info.channels = 1;
        info.format = format | SF_FORMAT_PCM_16;
        SNDFILE* f = sf_open(at(name).c_str(), SFM_WRITE, &info);
        REQUIRE(f != nullptr);
        std::vector<float> x(static_cast<std::size_t>(kRate) * kSeconds);
        for (std::size_t i = 0; i < x.size(); ++i) x[i] = static_cast<float>(0.1 * std::sin(0.01 * static_cast<double>(i)));
        sf_writef_float(f, x.data(), static_cast<sf_count_t>(x.size()));
        sf_close(f);
        fs::resize_file(at(name), fs::file_size(at(name)) * 45 / 100);
    };
}

// Several steps in order.
std::function<void()> all(std::vector<std::function<void()>> steps) {
    return [steps] {
        for (const auto& s : steps) s();
    };
}

const std::function<void()> nothing = [] {};

// A UFF dataset 58 (record layout of methods A8) of 8 values; `r6` and `r7`
// replace records 6 and 7, `data` record 12. Damaged copies are built from it.
std::string uff58(const std::string& r6 = "    1         0    0         0 P101-DEH           1   1 NONE               0   0",
                  const std::string& r7 = "         2         8         1  0.00000E+00  1.00000E-03  0.00000E+00",
                  const std::string& data = "  0.00000E+00  7.07107E-01  1.00000E+00  7.07107E-01  0.00000E+00 -7.07107E-01\n"
                                            " -1.00000E+00 -7.07107E-01\n    -1\n",
                  const std::string& r8 = "        17    0    0    0 Time                 s") {
    return "    -1\n    58\nOW-P101 DE H accel\nNONE\n09-Mar-24 10:15:00\nNONE\nNONE\n" + r6 + "\n" + r7 + "\n" + r8 +
           "\n        12    0    0    0 Acceleration         m/s^2\n"
           "         0    0    0    0 NONE                 NONE\n         0    0    0    0 NONE                 NONE\n" +
           data;
}

// A 58b dataset whose id line promises 100 real single values; only 30 follow.
std::string uff58b_cut() {
    std::string s = "    -1\n    58b     1     2          11         400     0     0           0           0\n";
    const std::string text = uff58("    1         0    0         0 P101-DEH           1   1 NONE               0   0",
                                   "         2       100         1  0.00000E+00  1.00000E-03  0.00000E+00", "");
    s += text.substr(text.find("OW-P101"));
    return s + std::string(120, '\x3f');
}

// A stale output from an earlier run: a failing call must leave it byte for byte.
std::function<void()> stale_output(const std::string& name) {
    return text_file(name, "{\"stale\": \"an earlier run's output, must survive a failed call\"}\n");
}

struct Row {
    std::string name;            // what the row feeds cavitas
    std::function<void()> make;  // writes the hostile input(s) into the temp folder
    std::string command;         // the arguments after `cavitas`
    int status;                  // expected exit status
    std::vector<std::string> words;  // expected in stderr
    std::string culprit;         // the file the error line must name ("" for usage errors)
    std::string output;          // the -o / --json target ("" when there is none)
    int timeout_s = kTimeoutS;   // beyond this the call counts as a hang
};

std::size_t line_count(const std::string& s) { return static_cast<std::size_t>(std::count(s.begin(), s.end(), '\n')); }

bool contains(const std::string& hay, const std::string& needle) { return hay.find(needle) != std::string::npos; }

// Leftovers of an interrupted atomic write (".NAME.XXXXXX" beside NAME).
bool temp_leftover(const fs::path& out) {
    std::error_code ec;
    if (!fs::is_directory(out.parent_path(), ec)) return false;
    const std::string prefix = "." + out.filename().string() + ".";
    for (const auto& e : fs::directory_iterator(out.parent_path(), ec))
        if (e.path().filename().string().rfind(prefix, 0) == 0) return true;
    return false;
}

}  // namespace

TEST_CASE("Every hostile input ends in the contracted exit status with one error line and nothing written",
          "[hostile]") {
    // The good corpus: two known-good recordings, one recording to judge, one baseline.
    make_wav(at("good1.wav"), 11);
    make_wav(at("good2.wav"), 12);
    make_wav(at("today.wav"), 13);
    {
        const Run r = run("baseline --rpm 1485 --vanes 7 --full-scale 50g -o " + Q("good.json") + " " + Q("good1.wav") +
                          " " + Q("good2.wav"));
        INFO(r.err);
        REQUIRE(r.status == 0);
        REQUIRE(fs::exists(at("good.json")));
    }
    const std::string good = Q("good.json"), today = Q("today.wav");
    const std::string base_o = "baseline --rpm 1485 --vanes 7 --full-scale 50g -o ";
    const std::string judge = "analyze --rpm 1485 --baseline ";

    const std::vector<Row> rows = {
        // --- controls: the harness itself must let good inputs through -------------
        // Guards against a table that "passes" because every call fails for some other reason.
        {"control: good recordings learn a baseline", nothing,
         base_o + Q("ctl.json") + " " + Q("good1.wav") + " " + Q("good2.wav"), 0, {}, "", "ctl.json"},
        {"control: a good recording is judged", nothing,
         judge + good + " --json " + Q("ctl-finding.json") + " " + today, 0, {}, "", "ctl-finding.json"},

        // --- recordings that are not recordings --------------------------------------
        // Zero bytes: libsndfile has nothing to sniff; must not be read as 0 frames and "analysed".
        {"0-byte .wav", text_file("empty.wav", ""), base_o + Q("o-empty.json") + " " + Q("empty.wav"), 1,
         {"not a readable recording"}, "empty.wav", "o-empty.json"},
        // Text with an audio extension: the extension must not be trusted.
        {"text file named .wav", text_file("notes.wav", "pump P101 sounded rough on Tuesday\nsee work order 4711\n"),
         base_o + Q("o-notes.json") + " " + Q("notes.wav"), 1, {"not a readable recording"}, "notes.wav",
         "o-notes.json"},
        // Random bytes (fixed seed): a header parser fed garbage must fail cleanly, not crash.
        {"4 KB of random bytes named .wav",
         [] {
             std::mt19937 gen(20240611u);
             std::string b;
             while (b.size() < 4096) {
                 const auto v = static_cast<std::uint32_t>(gen());
                 for (int i = 0; i < 4; ++i) b += static_cast<char>((v >> (8 * i)) & 0xFFu);
             }
             spit(at("random.wav"), b);
         },
         base_o + Q("o-random.json") + " " + Q("random.wav"), 1, {"not a readable recording"}, "random.wav",
         "o-random.json"},

        // --- CSV waveforms and MATLAB files that are damaged -----------------------------
        // Refused with the file named whichever reader takes them (libsndfile's "not a
        // readable recording", or the CSV and MAT readers' own line- or variable-naming message).
        {"CSV waveform with a cell that is not a number",
         text_file("bad-cell.csv", "time [s],accel [g]\n0,0.1\n0.0001,0.2\n0.0002,zero point three\n"),
         judge + good + " --json " + Q("j-bad-cell.json") + " " + Q("bad-cell.csv"), 1, {}, "bad-cell.csv",
         "j-bad-cell.json", kQuickS},
        {"CSV waveform with a short row", text_file("short-row.csv", "fs=12800\n1,2\n3\n4,5\n"),
         judge + good + " --json " + Q("j-short-row.json") + " " + Q("short-row.csv"), 1, {}, "short-row.csv",
         "j-short-row.json", kQuickS},
        {"CSV waveform whose time column jumps",
         text_file("jump.csv", "t [ms];x\n0;1\n1;2\n2;3\n7;4\n"),
         judge + good + " --json " + Q("j-jump.json") + " " + Q("jump.csv"), 1, {}, "jump.csv", "j-jump.json", kQuickS},
        // A MAT-file's text header alone (116 bytes, then nothing).
        {"MAT-file header and nothing after it",
         text_file("header-only.mat", "MATLAB 5.0 MAT-file, Platform: GLNXA64, Created on: Mon Jun 10 08:00:00 2024" +
                                          std::string(40, ' ')),
         judge + good + " --json " + Q("j-header-only.json") + " " + Q("header-only.mat"), 1, {}, "header-only.mat",
         "j-header-only.json", kQuickS},
        // A v5 MAT-file whose one matrix element promises 4000 bytes and holds 16 (the
        // layout of MathWorks' "MAT-File Format" document: 128-byte header, then tagged elements).
        {"MAT-file cut inside its first variable",
         [] {
             std::string b = "MATLAB 5.0 MAT-file" + std::string(97, ' ');
             b += std::string(8, '\0');
             b += std::string("\x00\x01IM", 4);                                     // version 0x0100, little-endian
             b += std::string("\x0e\x00\x00\x00\xa0\x0f\x00\x00", 8);         // miMATRIX, 4000 bytes
             b += std::string("\x06\x00\x00\x00\x08\x00\x00\x00\x06\x00\x00\x00\x00\x00\x00\x00", 16);  // flags: double
             spit(at("cut.mat"), b);
         },
         judge + good + " --json " + Q("j-cut-mat.json") + " " + Q("cut.mat"), 1, {}, "cut.mat", "j-cut-mat.json",
         kQuickS},

        // --- a valid WAV cut short ---------------------------------------------------
        // Only "RIFF....WAVE": no fmt chunk at all.
        {"WAV header cut at 12 bytes", text_file("cut12.wav", wav_bytes().substr(0, 12)),
         base_o + Q("o-cut12.json") + " " + Q("cut12.wav"), 1, {"not a readable recording"}, "cut12.wav",
         "o-cut12.json"},
        // Cut inside the fmt chunk (after the sample rate, in the middle of the byte rate).
        {"WAV header cut at 30 bytes", text_file("cut30.wav", wav_bytes().substr(0, 30)),
         base_o + Q("o-cut30.json") + " " + Q("cut30.wav"), 1, {"not a readable recording"}, "cut30.wav",
         "o-cut30.json"},
        // The canonical 44-byte header complete and not one sample: "no samples", not a 0 s verdict.
        {"WAV header cut at 44 bytes", text_file("cut44.wav", wav_bytes().substr(0, 44)),
         base_o + Q("o-cut44.json") + " " + Q("cut44.wav"), 1, {"holds no samples"}, "cut44.wav", "o-cut44.json"},
        // The data chunk promises 4 s but the file holds 0.5 s: libsndfile would read
        // what is there; cavitas refuses a file cut short.
        {"WAV data chunk cut to 0.5 s",
         text_file("cut-data.wav", wav_bytes().substr(0, chunk_body(wav_bytes(), "data") + kRate)),
         base_o + Q("o-cut-data.json") + " " + Q("cut-data.wav"), 1, {"cut short"}, "cut-data.wav",
         "o-cut-data.json"},
        // The same short file judged by analyze: the --json target must not appear.
        {"WAV data chunk cut to 0.5 s, analyzed", nothing, judge + good + " --json " + Q("j-cut-data.json") + " " +
         Q("cut-data.wav"), 1, {"cut short"}, "cut-data.wav", "j-cut-data.json"},
        // Cut to 3 of its 4 s: long enough to analyse, but not the recording that was made.
        {"WAV data chunk cut to 3 s, analyzed",
         text_file("cut3s.wav", wav_bytes().substr(0, chunk_body(wav_bytes(), "data") + 6 * kRate)),
         judge + good + " --json " + Q("j-cut3s.json") + " " + Q("cut3s.wav"), 1, {"cut short"}, "cut3s.wav",
         "j-cut3s.json"},

        // Other containers cut short: each says so in its own header field (libsndfile's log), and each is
        // refused as the WAV is (before: analysed as a short recording, a verdict, exit 0).
        {"RF64 cut to 45 %", cut_container("cut.rf64", SF_FORMAT_RF64),
         judge + good + " --json " + Q("j-cut-rf64.json") + " " + Q("cut.rf64"), 1, {"cut short"}, "cut.rf64",
         "j-cut-rf64.json"},
        {"W64 cut to 45 %", cut_container("cut.w64", SF_FORMAT_W64),
         judge + good + " --json " + Q("j-cut-w64.json") + " " + Q("cut.w64"), 1, {"cut short"}, "cut.w64",
         "j-cut-w64.json"},
        {"AU cut to 45 %", cut_container("cut.au", SF_FORMAT_AU),
         judge + good + " --json " + Q("j-cut-au.json") + " " + Q("cut.au"), 1, {"cut short"}, "cut.au", "j-cut-au.json"},

        // --- an encoding nobody supports -----------------------------------------------
        // An unknown fmt format tag: libsndfile must refuse, not guess PCM.
        {"WAV format tag 0x1234", patched_wav("tag1234.wav", fmt_field(0, 0x1234u, 2)),
         base_o + Q("o-tag1234.json") + " " + Q("tag1234.wav"), 1, {"not a readable recording"}, "tag1234.wav",
         "o-tag1234.json"},

        // --- absurd header fields ---------------------------------------------------------
        // Sample rate 0: every duration and frequency would divide by zero. libsndfile
        // itself refuses it (its wording, "SF_INFO struct incomplete", is adopted as is).
        {"WAV sample rate 0", patched_wav("rate0.wav", fmt_field(4, 0u, 4)),
         base_o + Q("o-rate0.json") + " " + Q("rate0.wav"), 1, {"not a readable recording"}, "rate0.wav",
         "o-rate0.json"},
        // Sample rate 10^9: a 1 s segment would need gigabytes (cavitas caps at 5 MHz).
        {"WAV sample rate 1 000 000 000", patched_wav("rate1e9.wav", fmt_field(4, 1000000000u, 4)),
         base_o + Q("o-rate1e9.json") + " " + Q("rate1e9.wav"), 1, {"sample rate"}, "rate1e9.wav", "o-rate1e9.json"},
        // Zero channels: interleaving and channel selection would divide by zero
        // (libsndfile refuses it: "Channel count is zero").
        {"WAV channels 0", patched_wav("ch0.wav", fmt_field(2, 0u, 2)),
         base_o + Q("o-ch0.json") + " " + Q("ch0.wav"), 1, {"not a readable recording"}, "ch0.wav", "o-ch0.json"},
        // RIFF size 0xFFFFFFFF (overflows any "size + 8"): libsndfile trusts the file's
        // real length, so the recording is fine and a baseline is learned (exit 0).
        {"WAV RIFF size 0xFFFFFFFF", patched_wav("riff-ffff.wav", [](std::string& b) { put_le(b, 4, 0xFFFFFFFFu, 4); }),
         base_o + Q("o-riff-ffff.json") + " " + Q("riff-ffff.wav"), 0, {}, "", "o-riff-ffff.json"},
        // data size 0xFFFFFFFF (the "unknown length" of streamed WAVs): libsndfile
        // clamps it to the bytes present, the 4 s are read, a baseline is learned (exit 0).
        {"WAV data size 0xFFFFFFFF",
         patched_wav("data-ffff.wav", [](std::string& b) { put_le(b, chunk_body(b, "data") - 4, 0xFFFFFFFFu, 4); }),
         base_o + Q("o-data-ffff.json") + " " + Q("data-ffff.wav"), 0, {}, "", "o-data-ffff.json"},
        // 100 000 channels in a Sun/NeXT AU header: one interleaved frame would be 200 kB
        // and a block of frames gigabytes; must be refused from the header. libsndfile
        // refuses it first ("Too many channels specified"), before cavitas' own 1..1024 check.
        {"AU header with 100 000 channels",
         [] {
             std::string b = ".snd";
             put_be32(b, 24);       // header size
             put_be32(b, 65536);    // data size
             put_be32(b, 3);        // encoding: 16-bit linear PCM
             put_be32(b, kRate);    // sample rate
             put_be32(b, 100000);   // channels
             b.append(65536, '\0');
             spit(at("wide.au"), b);
         },
         base_o + Q("o-wide.json") + " " + Q("wide.au"), 1, {"not a readable recording"}, "wide.au", "o-wide.json"},

        // --- damaged UFF datasets 58 (methods A8 layout) ------------------------------------------
        // Each must end in one error line naming the file: today libsndfile refuses them ("not a readable
        // recording"); once the commands read through open_recording, the UFF reader refuses them naming the
        // dataset and the problem. No words are required, so the rows hold before and after that change.
        {"UFF 58b whose binary block is cut short", text_file("cut58b.uff", uff58b_cut()),
         base_o + Q("o-cut58b.json") + " " + Q("cut58b.uff"), 1, {}, "cut58b.uff", "o-cut58b.json", kQuickS},
        {"UFF 58 of complex values", text_file("complex.uff", uff58("    1         0    0         0 P101-DEH           1   1 NONE               0   0",
                                                                   "         5         4         1  0.00000E+00  1.00000E-03  0.00000E+00")),
         base_o + Q("o-complex.json") + " " + Q("complex.uff"), 1, {}, "complex.uff", "o-complex.json", kQuickS},
        {"UFF 58 frequency response function",
         text_file("frf.uff", uff58("    4         0    0         0 P101-DEH           1   1 NONE               0   0")),
         judge + good + " --json " + Q("j-frf.json") + " " + Q("frf.uff"), 1, {}, "frf.uff", "j-frf.json", kQuickS},
        {"UFF 58 abscissa increment 0",
         text_file("dx0.uff", uff58("    1         0    0         0 P101-DEH           1   1 NONE               0   0",
                                    "         2         8         1  0.00000E+00  0.00000E+00  0.00000E+00")),
         base_o + Q("o-dx0.json") + " " + Q("dx0.uff"), 1, {}, "dx0.uff", "o-dx0.json", kQuickS},
        {"UFF 58 over frequency, not time",
         text_file("hz.uff", uff58("    1         0    0         0 P101-DEH           1   1 NONE               0   0",
                                   "         2         8         1  0.00000E+00  1.00000E-03  0.00000E+00",
                                   "  1.0  2.0  3.0  4.0  5.0  6.0\n  7.0  8.0\n    -1\n",
                                   "        18    0    0    0 Frequency            Hz")),
         base_o + Q("o-hz.json") + " " + Q("hz.uff"), 1, {}, "hz.uff", "o-hz.json", kQuickS},
        {"UFF 58 with a value that is not a number",
         text_file("nan.uff", uff58("    1         0    0         0 P101-DEH           1   1 NONE               0   0",
                                    "         2         8         1  0.00000E+00  1.00000E-03  0.00000E+00",
                                    "  1.0  2.0  nan  4.0  5.0  6.0\n  7.0  8.0\n    -1\n")),
         base_o + Q("o-nan.json") + " " + Q("nan.uff"), 1, {}, "nan.uff", "o-nan.json", kQuickS},
        {"UFF with a 70 kB line after its delimiter", text_file("longline.uff", "    -1\n" + std::string(70000, '7') + "\n"),
         base_o + Q("o-longline.json") + " " + Q("longline.uff"), 1, {}, "longline.uff", "o-longline.json", kQuickS},
        {"UFF holding only a dataset 2411", text_file("nodes.uff", "    -1\n  2411\n         1         1\n    -1\n"),
         base_o + Q("o-nodes.json") + " " + Q("nodes.uff"), 1, {}, "nodes.uff", "o-nodes.json", kQuickS},

        // --- paths that are not regular files ------------------------------------------
        // A folder, even one named like a recording.
        {"a directory as recording", [] { fs::create_directories(at("folder.wav")); },
         base_o + Q("o-folder.json") + " " + Q("folder.wav"), 1, {"is a directory"}, "folder.wav", "o-folder.json"},
        // A recording in a folder that does not exist.
        {"a recording in a missing folder", nothing,
         base_o + Q("o-nofolder.json") + " " + Q("no-such-folder/rec.wav"), 1, {"no such file"},
         "no-such-folder/rec.wav", "o-nofolder.json"},
        // A FIFO: opening it would block for ever waiting for a writer (the timeout catches a hang).
        {"a FIFO as recording",
         [] {
             std::error_code ec;
             fs::remove(at("pipe.wav"), ec);
             REQUIRE(::mkfifo(at("pipe.wav").c_str(), 0600) == 0);
         },
         base_o + Q("o-pipe.json") + " " + Q("pipe.wav"), 1, {"not a regular file"}, "pipe.wav", "o-pipe.json",
         kQuickS},
        // The FIFO judged by analyze.
        {"a FIFO as recording, analyzed", nothing,
         judge + good + " --json " + Q("j-pipe.json") + " " + Q("pipe.wav"), 1, {"not a regular file"}, "pipe.wav",
         "j-pipe.json", kQuickS},
        // A bad recording after a good one: the first one's work must not leak out as a
        // baseline, and a stale output from an earlier run must survive.
        {"a good then a damaged recording over a stale output", stale_output("o-stale.json"),
         base_o + Q("o-stale.json") + " " + Q("good1.wav") + " " + Q("cut12.wav"), 1, {"not a readable recording"},
         "cut12.wav", "o-stale.json"},

        // --- severity zone files (analyze --zones) -----------------------------------------
        // Boundaries out of order would place every value in a wrong zone.
        {"zone file with boundaries out of order",
         text_file("zones-order.toml", "source = \"test class\"\na_b_mm_s = 4.5\nb_c_mm_s = 2.8\nc_d_mm_s = 7.1\n"),
         judge + good + " --zones " + Q("zones-order.toml") + " --json " + Q("j-zones-order.json") + " " + today, 1,
         {"b_c_mm_s = 2.8", "a_b_mm_s = 4.5"}, "zones-order.toml", "j-zones-order.json"},
        // Limits without a source cannot be judged by the reader of the finding.
        {"zone file without a source",
         text_file("zones-nosource.toml", "a_b_mm_s = 2.8\nb_c_mm_s = 4.5\nc_d_mm_s = 7.1\n"),
         judge + good + " --zones " + Q("zones-nosource.toml") + " --json " + Q("j-zones-nosource.json") + " " + today,
         1, {"source is missing"}, "zones-nosource.toml", "j-zones-nosource.json", kQuickS},
        // A negative boundary, a band past 10 kHz, and no TOML at all.
        {"zone file with a negative boundary",
         text_file("zones-neg.toml", "source = \"x\"\na_b_mm_s = -2.8\nb_c_mm_s = 4.5\nc_d_mm_s = 7.1\n"),
         judge + good + " --zones " + Q("zones-neg.toml") + " --json " + Q("j-zones-neg.json") + " " + today, 1,
         {"a_b_mm_s = -2.8"}, "zones-neg.toml", "j-zones-neg.json", kQuickS},
        {"zone file band past 10 kHz",
         text_file("zones-band.toml",
                   "source = \"x\"\nband_hz = [10, 20000]\na_b_mm_s = 2.8\nb_c_mm_s = 4.5\nc_d_mm_s = 7.1\n"),
         judge + good + " --zones " + Q("zones-band.toml") + " --json " + Q("j-zones-band.json") + " " + today, 1,
         {"band_hz", "20000"}, "zones-band.toml", "j-zones-band.json", kQuickS},
        {"zone file that is not TOML", text_file("zones-json.toml", "{\"a_b_mm_s\": 2.8}\n"),
         judge + good + " --zones " + Q("zones-json.toml") + " --json " + Q("j-zones-json.json") + " " + today, 1,
         {"not valid TOML"}, "zones-json.toml", "j-zones-json.json", kQuickS},
        {"zone file missing", nothing,
         judge + good + " --zones " + Q("zones-absent.toml") + " --json " + Q("j-zones-absent.json") + " " + today, 1,
         {"zones-absent.toml"}, "zones-absent.toml", "j-zones-absent.json", kQuickS},

        // --- operating points (sidecar files, curves, flags) ------------------------------
        // A sidecar that is a folder, beside a good recording.
        {"a directory as sidecar",
         all({copy_of("today.wav", "side-dir.wav"), [] { fs::create_directories(at("side-dir.op.toml")); }}),
         judge + good + " --json " + Q("j-side-dir.json") + " " + Q("side-dir.wav"), 1, {"is a directory"},
         "side-dir.op.toml", "j-side-dir.json", kQuickS},
        // A FIFO sidecar would block for ever.
        {"a FIFO as sidecar",
         all({copy_of("today.wav", "side-fifo.wav"),
              [] {
                  std::error_code ec;
                  fs::remove(at("side-fifo.op.toml"), ec);
                  REQUIRE(::mkfifo(at("side-fifo.op.toml").c_str(), 0600) == 0);
              }}),
         judge + good + " --json " + Q("j-side-fifo.json") + " " + Q("side-fifo.wav"), 1, {"not a regular file"},
         "side-fifo.op.toml", "j-side-fifo.json", kQuickS},
        // A unit nobody knows in a sidecar: the reading would be silently mis-scaled.
        {"sidecar flow in furlongs",
         all({copy_of("today.wav", "side-unit.wav"), text_file("side-unit.op.toml", "flow = \"12 furlongs\"\n")}),
         judge + good + " --json " + Q("j-side-unit.json") + " " + Q("side-unit.wav"), 1, {"flow", "furlongs"},
         "side-unit.op.toml", "j-side-unit.json", kQuickS},
        // JSON where TOML is expected.
        {"sidecar that is not TOML",
         all({copy_of("today.wav", "side-json.wav"), text_file("side-json.op.toml", "{\"flow\": \"12 m3/h\"}\n")}),
         judge + good + " --json " + Q("j-side-json.json") + " " + Q("side-json.wav"), 1, {"not valid TOML"},
         "side-json.op.toml", "j-side-json.json", kQuickS},
        // A sidecar whose reading is below full vacuum: physics, not syntax, is wrong.
        {"sidecar gauge reading below -1 atm",
         all({copy_of("today.wav", "side-vac.wav"),
              text_file("side-vac.op.toml", "suction_pressure = \"-150 kPa\"\ntemperature = \"14 C\"\n")}),
         judge + good + " --json " + Q("j-side-vac.json") + " " + Q("side-vac.wav"), 1, {"below -1 atm"},
         "side-vac.op.toml", "j-side-vac.json", kQuickS},
        // --operating-point naming a file that is not there.
        {"--operating-point at a missing file", nothing,
         judge + good + " --operating-point " + Q("absent.op.toml") + " --json " + Q("j-op-absent.json") + " " + today,
         1, {"no such operating-point file"}, "absent.op.toml", "j-op-absent.json", kQuickS},
        // An NPSH3 curve whose flows run backwards.
        {"NPSH3 curve with decreasing flows",
         text_file("back.csv", "flow [m3/h], npsh3 [m]\n200, 3\n100, 2\n"),
         "npsh --suction-pressure 10kPa --temperature 20C --flow 150m3/h --npsh3-curve " + Q("back.csv") +
             " --json " + Q("n-back.json"),
         1, {"increase"}, "back.csv", "n-back.json", kQuickS},
        // A flow outside the curve: NPSH3 is not extrapolated.
        {"flow outside the NPSH3 curve", text_file("short.csv", "flow [m3/h], npsh3 [m]\n100, 2\n200, 3\n"),
         "npsh --suction-pressure 10kPa --temperature 20C --flow 250m3/h --npsh3-curve " + Q("short.csv") +
             " --json " + Q("n-short.json"),
         1, {"outside", "not extrapolated"}, "short.csv", "n-short.json", kQuickS},
        // Physics refused on the command line: usage errors (exit 2) naming the problem.
        {"npsh gauge reading below -1 atm", nothing,
         "npsh --suction-pressure -15psig --temperature 20C --json " + Q("n-vac.json"), 2, {"below -1 atm"}, "",
         "n-vac.json", kQuickS},
        {"npsh temperature above the critical point", nothing,
         "npsh --suction-pressure 10kPa --temperature 400C --json " + Q("n-crit.json"), 2, {"critical point"}, "",
         "n-crit.json", kQuickS},
        {"npsh value without a unit", nothing, "npsh --suction-pressure 35 --temperature 20C --json " + Q("n-bare.json"),
         2, {"--suction-pressure", "no unit"}, "", "n-bare.json", kQuickS},
        {"npsh flag without a value", nothing, "npsh --temperature 20C --suction-pressure", 2, {"--suction-pressure"},
         "", "", kQuickS},

        // --- routes (file-level problems: nothing is analysed, nothing written) ------------
        {"route manifest missing", [] { fs::create_directories(at("lib")); },
         "route " + Q("absent.csv") + " --baselines " + Q("lib") + " --out " + Q("r-absent"), 1,
         {"no such route manifest"}, "absent.csv", "r-absent", kQuickS},
        {"route manifest is a directory", [] { fs::create_directories(at("mdir.csv")); },
         "route " + Q("mdir.csv") + " --baselines " + Q("lib") + " --out " + Q("r-mdir"), 1, {"is a directory"},
         "mdir.csv", "r-mdir", kQuickS},
        {"route manifest without the required columns", text_file("cols.csv", "file,machine\ntoday.wav,OW-P101\n"),
         "route " + Q("cols.csv") + " --baselines " + Q("lib") + " --out " + Q("r-cols"), 1,
         {"lacks the column(s) point, channel, datetime, rpm, vanes"}, "cols.csv", "r-cols", kQuickS},
        {"route manifest with a quote never closed",
         text_file("quote.csv", "file,machine,point,channel,datetime,rpm,vanes\n\"today.wav,OW-P101,DE-H,0,2026-11-02,,\n"),
         "route " + Q("quote.csv") + " --baselines " + Q("lib") + " --out " + Q("r-quote"), 1, {"never closed"},
         "quote.csv", "r-quote", kQuickS},
        {"route baseline library missing", text_file("ok.csv", "file,machine,point,channel,datetime,rpm,vanes\n"),
         "route " + Q("ok.csv") + " --baselines " + Q("no-lib") + " --out " + Q("r-nolib"), 1,
         {"baseline library folder does not exist"}, "no-lib", "r-nolib", kQuickS},
        {"route store that is not an SQLite database", text_file("store.sqlite", "a text file, not a database\n"),
         "route " + Q("ok.csv") + " --baselines " + Q("lib") + " --store " + Q("store.sqlite") + " --out " +
             Q("r-store"),
         1, {"store"}, "store.sqlite", "r-store", kQuickS},
        {"route --shard 0/3", nothing,
         "route " + Q("ok.csv") + " --baselines " + Q("lib") + " --shard 0/3 --out " + Q("r-shard"), 2, {"--shard"}, "",
         "r-shard", kQuickS},
        {"merge of a folder that is no shard", [] { fs::create_directories(at("not-a-shard")); },
         "merge --out " + Q("m-out") + " " + Q("not-a-shard"), 1, {"no such route run file"}, "not-a-shard", "m-out",
         kQuickS},
        {"trend with a store that is a directory", [] { fs::create_directories(at("store-dir")); },
         "trend OW-P101 --store " + Q("store-dir"), 1, {"not a regular file"}, "store-dir", "", kQuickS},

        // --- outputs that are inputs, devices, or named twice (one guard, every command) -----
        // Before: each of these overwrote the input with exit 0; --json /dev/null (as root) replaced the device.
        {"analyze --json onto the recording's sidecar",
         all({copy_of("today.wav", "side1.wav"), text_file("side1.op.toml", "suction_pressure = \"35 kPa\"\ntemperature = \"20 C\"\n")}),
         judge + good + " --json " + Q("side1.op.toml") + " " + Q("side1.wav"), 1, {"sidecar", "refusing to overwrite"},
         "side1.op.toml", "side1.op.toml", kQuickS},
        {"analyze --json onto the NPSH3 curve its sidecar names",
         all({copy_of("today.wav", "side2.wav"), text_file("c2.npsh3.csv", "flow [m3/h], npsh3 [m]\n100, 2.0\n400, 3.5\n"),
              text_file("side2.op.toml", "suction_pressure = \"35 kPa\"\ntemperature = \"20 C\"\nflow = \"300 m3/h\"\n"
                                          "npsh3_curve = \"c2.npsh3.csv\"\n")}),
         judge + good + " --json " + Q("c2.npsh3.csv") + " " + Q("side2.wav"), 1, {"NPSH3 curve", "refusing"},
         "c2.npsh3.csv", "c2.npsh3.csv", kQuickS},
        {"npsh --json onto its own --npsh3-curve", nothing,
         "npsh --suction-pressure 35kPa --temperature 20C --flow 300m3/h --npsh3-curve " + Q("c2.npsh3.csv") +
             " --json " + Q("c2.npsh3.csv"),
         1, {"NPSH3 curve", "refusing"}, "c2.npsh3.csv", "c2.npsh3.csv", kQuickS},
        {"baseline -o onto a recording's sidecar", nothing,
         base_o + Q("side1.op.toml") + " " + Q("side1.wav"), 1, {"sidecar", "refusing"}, "side1.op.toml",
         "side1.op.toml", kQuickS},
        {"compare --json onto a recording", copy_of("good2.wav", "before.wav"),
         "compare --baseline " + good + " --before " + Q("before.wav") + " --after " + today + " --json " +
             Q("before.wav"),
         1, {"recording", "refusing"}, "before.wav", "before.wav", kQuickS},
        {"analyze --json through a link to the recording", [] { fs::create_symlink(at("today.wav"), at("link-to-today.json")); },
         judge + good + " --json " + Q("link-to-today.json") + " " + today, 1, {"is the recording"},
         "link-to-today.json", "today.wav", kQuickS},
        {"analyze --json through a link to /dev/null", [] { fs::create_symlink("/dev/null", at("null-link.json")); },
         judge + good + " --json " + Q("null-link.json") + " " + today, 1, {"character device"}, "null-link.json", "",
         kQuickS},
        {"route, then a store for the rows below", text_file("none.csv", "file,machine,point,channel,datetime,rpm,vanes\n"),
         "route " + Q("none.csv") + " --baselines " + Q("lib") + " --store " + Q("h.sqlite") + " --out " + Q("r-none"),
         0, {}, "", "h.sqlite"},
        {"trend --json onto its own store", nothing,
         "trend OW-P101 --store " + Q("h.sqlite") + " --json " + Q("h.sqlite"), 1, {"results store", "refusing"},
         "h.sqlite", "h.sqlite", kQuickS},
        {"report of a route folder onto its summary.jsonl", nothing,
         "report " + Q("r-none") + " --html " + Q("r-none/summary.jsonl"), 1, {"route folder", "refusing"},
         "r-none/summary.jsonl", "r-none/summary.jsonl", kQuickS},
        {"report --html X --pdf X", nothing,
         "report " + Q("ctl-finding.json") + " --html " + Q("twice.out") + " --pdf " + Q("twice.out"), 1,
         {"named twice"}, "twice.out", "twice.out", kQuickS},
        {"route --out the folder holding its manifest",
         all({[] { fs::create_directories(at("holds")); }, text_file("holds/m.csv", "file,machine,point,channel,datetime,rpm,vanes\n")}),
         "route " + Q("holds/m.csv") + " --baselines " + Q("lib") + " --no-store --out " + Q("holds"), 1,
         {"holds", "route manifest"}, "holds", "holds/m.csv", kQuickS},
        // Names up to the file system's 255 bytes are written (before: 248 and over were refused for the temporary name).
        {"control: a 255-byte output name", nothing,
         judge + good + " --json " + Q(std::string(250, 'n') + ".json") + " " + today, 0, {}, "",
         std::string(250, 'n') + ".json"},
        {"a 256-byte output name", nothing, judge + good + " --json " + Q(std::string(251, 'n') + ".json") + " " + today, 1,
         {"255"}, std::string(251, 'n') + ".json", std::string(251, 'n') + ".json", kQuickS},

        // --- text that is not what it claims: encodings, NULs, control characters, sizes -------------
        // Before: one Latin-1 byte in a passed-through cell killed the run in the JSON writer (no summary).
        {"route with a Latin-1 byte in a passed-through cell",
         all({[] { fs::create_directories(at("lib/OW-P101")); }, copy_of("good.json", "lib/OW-P101/DE-H.json"),
              text_file("latin1.csv", "file,machine,point,channel,datetime,rpm,vanes,remark\n"
                                      "today.wav,OW-P101,DE-H,0,2026-11-02T08:00,1485,7,caf\xE9 au lait\n")}),
         "route " + Q("latin1.csv") + " --baselines " + Q("lib") + " --no-store --out " + Q("r-latin1"), 0, {}, "",
         "r-latin1/summary.jsonl"},
        {"analyze --json of a recording with a Latin-1 name", copy_of("today.wav", "caf\xE9.wav"),
         judge + good + " --json " + Q("j-latin1.json") + " " + Q("caf\xE9.wav"), 0, {}, "", "j-latin1.json"},
        {"baseline from a recording with a Latin-1 name", nothing,
         base_o + Q("o-latin1.json") + " " + Q("caf\xE9.wav") + " " + Q("good2.wav"), 0, {}, "", "o-latin1.json"},
        // A spreadsheet's "Unicode text": UTF-16 with a byte-order mark (before: "lacks the columns").
        {"route manifest in UTF-16",
         [] {
             const std::string text = "file,machine,point,channel,datetime,rpm,vanes\r\n"
                                      "today.wav,OW-P101,DE-H,0,2026-11-02T08:00,1485,7\r\n";
             std::string b = "\xFF\xFE";
             for (char c : text) b += std::string{c, '\0'};
             spit(at("utf16.csv"), b);
         },
         "route " + Q("utf16.csv") + " --baselines " + Q("lib") + " --no-store --out " + Q("r-utf16"), 0, {}, "",
         "r-utf16/summary.jsonl"},
        {"route manifest with a NUL byte in a file cell",
         text_file("nul.csv", std::string("file,machine,point,channel,datetime,rpm,vanes\ntoday.wav\0evil.wav,OW-P101,DE-H,0,"
                                          "2026-11-02T08:00,1485,7\n", 89)),
         "route " + Q("nul.csv") + " --baselines " + Q("lib") + " --no-store --out " + Q("r-nul"), 1,
         {":2: holds a NUL byte"}, "nul.csv", "r-nul", kQuickS},
        // 1.6 MB of blanks before a cell's value took 23 s (each blank erased from the front); now linear.
        {"route manifest cell with 1.6 MB of leading blanks",
         text_file("blanks.csv", "file,machine,point,channel,datetime,rpm,vanes\ntoday.wav,OW-P101," +
                                     std::string(1600000, ' ') + "DE-H,0,2026-11-02T08:00,1485,7\n"),
         "route " + Q("blanks.csv") + " --baselines " + Q("lib") + " --no-store --out " + Q("r-blanks"), 0, {}, "",
         "r-blanks/summary.jsonl"},
        // A control character in a file name reaches the terminal escaped, not as a command to it.
        {"ESC in a file name", nothing, judge + good + " " + Q("n\x1B[31mo.wav"), 1, {"n\\x1B[31mo.wav", "no such"}, "", ""},
        // A 100 000-character work order took 44 s to lay out; a header field is a line.
        {"report --work-order of 100 000 characters", nothing,
         "report " + Q("ctl-finding.json") + " --work-order " + std::string(100000, 'W') + " --html " + Q("wo.html"), 2,
         {"--work-order", "at most 200"}, "", "wo.html", kQuickS},
        // An 8-bit file whose signal spans a step or two: quantisation, not overload or dropouts.
        {"8-bit recording reaching 1 step of the scale",
         [] {
             SF_INFO info{};
             info.samplerate = kRate;
             info.channels = 1;
             info.format = SF_FORMAT_WAV | SF_FORMAT_PCM_U8;
             SNDFILE* f = sf_open(at("quiet8.wav").c_str(), SFM_WRITE, &info);
             REQUIRE(f != nullptr);
             std::mt19937 gen(8u);
             std::normal_distribution<float> noise(0.0f, 0.004f);
             std::vector<float> x(static_cast<std::size_t>(kRate) * kSeconds);
             for (auto& v : x) v = noise(gen);
             sf_writef_float(f, x.data(), static_cast<sf_count_t>(x.size()));
             sf_close(f);
         },
         base_o + Q("o-quiet8.json") + " " + Q("quiet8.wav"), 1, {"steps of this 8-bit file", "not clipping or dropouts"},
         "quiet8.wav", "o-quiet8.json"},
        // What a baseline cannot be read back with is refused when learning (before: written, then refused by analyze).
        {"baseline --full-scale 1e30g", nothing, "baseline --rpm 1485 --full-scale 1e30g -o " + Q("u-fs30.json") + " " +
         Q("good1.wav"), 2, {"1e-12 .. 1e12"}, "", "u-fs30.json", kQuickS},
        // A median near the largest double made z infinite (written as null, against the finding schema).
        {"baseline with an indicator median of 1.7e308",
         edited_baseline("median-huge.json",
                         [](nlohmann::json& j) { j["segment_indicators"].begin().value()["median"] = 1.7e308; }),
         judge + Q("median-huge.json") + " --json " + Q("j-median-huge.json") + " " + today, 1, {"beyond any value"},
         "median-huge.json", "j-median-huge.json", kQuickS},

        // --- merge trusts nothing in a shard's summary ------------------------------------------
        {"merge of a shard whose finding path leaves the folder",
         all({[] { fs::create_directories(at("sh-up")); },
              text_file("sh-up/route.json", R"({"schema":"cavitas.route/1","shard":"1/1","manifest_sha256":"ab","manifest_rows":1,"extra_columns":[]})"),
              text_file("sh-up/summary.jsonl", R"({"schema":"cavitas.route-row/1","line":2,"verdict":"normal","finding":"../x.txt"})" "\n"),
              text_file("x.txt", "outside the output folder\n")}),
         "merge --out " + Q("m-up") + " " + Q("sh-up"), 1, {"finding", "findings/NAME.json"},
         "sh-up/summary.jsonl", "m-up", kQuickS},
        {"merge of a shard whose finding path is absolute",
         all({[] { fs::create_directories(at("sh-abs")); },
              text_file("sh-abs/route.json", R"({"schema":"cavitas.route/1","shard":"1/1","manifest_sha256":"ab","manifest_rows":1,"extra_columns":[]})"),
              text_file("sh-abs/summary.jsonl", R"({"schema":"cavitas.route-row/1","line":2,"verdict":"normal","finding":"/etc/passwd"})" "\n")}),
         "merge --out " + Q("m-abs") + " " + Q("sh-abs"), 1, {"finding"}, "sh-abs/summary.jsonl", "m-abs",
         kQuickS},

        // --- baselines ---------------------------------------------------------------------
        // Not there at all.
        {"missing baseline", nothing, judge + Q("absent.json") + " --json " + Q("j-absent.json") + " " + today, 1,
         {"no such baseline"}, "absent.json", "j-absent.json"},
        // A folder.
        {"a directory as baseline", [] { fs::create_directories(at("bdir.json")); },
         judge + Q("bdir.json") + " --json " + Q("j-bdir.json") + " " + today, 1, {"is a directory"}, "bdir.json",
         "j-bdir.json"},
        // Zero bytes (a baseline whose write was lost): spec silent, cavitas calls it invalid JSON.
        {"0-byte baseline", text_file("empty.json", ""),
         judge + Q("empty.json") + " --json " + Q("j-empty.json") + " " + today, 1, {"not valid JSON"}, "empty.json",
         "j-empty.json"},
        // A real baseline truncated at half its length (a copy cut short).
        {"baseline truncated at half its length",
         [] {
             const std::string t = slurp(at("good.json"));
             spit(at("half.json"), t.substr(0, t.size() / 2));
         },
         judge + Q("half.json") + " --json " + Q("j-half.json") + " " + today, 1, {"not valid JSON"}, "half.json",
         "j-half.json"},
        // A baseline from a newer cavitas: refused, not misread.
        {"future baseline schema", text_file("future.json", "{\"schema\":\"cavitas.baseline/99\"}"),
         judge + Q("future.json") + " --json " + Q("j-future.json") + " " + today, 1, {"not supported"},
         "future.json", "j-future.json"},
        // JSON that is not an object.
        {"foreign JSON [1,2,3]", text_file("array.json", "[1,2,3]"),
         judge + Q("array.json") + " --json " + Q("j-array.json") + " " + today, 1, {"not a cavitas baseline"},
         "array.json", "j-array.json"},
        // Another program's JSON object with a schema of its own.
        {"foreign schema something/1", text_file("foreign.json", "{\"schema\":\"something/1\"}"),
         judge + Q("foreign.json") + " --json " + Q("j-foreign.json") + " " + today, 1, {"not a cavitas baseline"},
         "foreign.json", "j-foreign.json"},
        // A hand-edited field of the wrong type: a JSON type error must not escape as a crash.
        {"baseline with \"rpm\": \"fast\"",
         edited_baseline("rpm-fast.json", [](nlohmann::json& j) { j["context"]["rpm"] = "fast"; }),
         judge + Q("rpm-fast.json") + " --json " + Q("j-rpm-fast.json") + " " + today, 1, {"rpm"}, "rpm-fast.json",
         "j-rpm-fast.json"},
        // An indicator statistic of the wrong type, deep inside the file.
        {"baseline with an indicator median that is a string",
         edited_baseline("median-str.json",
                         [](nlohmann::json& j) {
                             auto& seg = j["segment_indicators"];
                             REQUIRE(!seg.empty());
                             seg.begin().value()["median"] = "high";
                         }),
         judge + Q("median-str.json") + " --json " + Q("j-median-str.json") + " " + today, 1, {"median"},
         "median-str.json", "j-median-str.json"},
        // Another machine's baseline: judging P102 against P101 would be meaningless.
        {"baseline of another machine",
         [] {
             const Run r = run("baseline --machine OW-P101 --rpm 1485 --vanes 7 --full-scale 50g -o " + Q("p101.json") +
                               " " + Q("good1.wav") + " " + Q("good2.wav"));
             REQUIRE(r.status == 0);
         },
         "analyze --machine OW-P102 --rpm 1485 --baseline " + Q("p101.json") + " --json " + Q("j-p102.json") + " " +
             today,
         1, {"baseline is for machine"}, "p101.json", "j-p102.json"},
        // A FIFO as baseline: reading it would block for ever, like a FIFO recording.
        // Spec: unreadable input, exit 1, one line naming the file (wording not specified).
        {"a FIFO as baseline",
         [] {
             std::error_code ec;
             fs::remove(at("bpipe.json"), ec);
             REQUIRE(::mkfifo(at("bpipe.json").c_str(), 0600) == 0);
         },
         judge + Q("bpipe.json") + " --json " + Q("j-bpipe.json") + " " + today, 1, {}, "bpipe.json", "j-bpipe.json",
         kQuickS},
        // "rpm_estimated" of the wrong type: a JSON type error must still be one line
        // naming the baseline, like "rpm": "fast".
        {"baseline with \"rpm_estimated\": \"yes\"",
         edited_baseline("rpm-est-str.json", [](nlohmann::json& j) { j["context"]["rpm_estimated"] = "yes"; }),
         judge + Q("rpm-est-str.json") + " --json " + Q("j-rpm-est-str.json") + " " + today, 1, {}, "rpm-est-str.json",
         "j-rpm-est-str.json", kQuickS},
        // A hand-edited segment length of 0.1 ms (1 sample): the analysis cannot be set up;
        // the error must name the baseline whose numbers caused it.
        {"baseline with segment_s 1e-4",
         edited_baseline("seg-tiny.json", [](nlohmann::json& j) { j["setup"]["segment_s"] = 1e-4; }),
         judge + Q("seg-tiny.json") + " --json " + Q("j-seg-tiny.json") + " " + today, 1, {}, "seg-tiny.json",
         "j-seg-tiny.json"},
        // A negative HF band edge: same, the error must name the baseline.
        {"baseline with hf_low_hz -5000",
         edited_baseline("hf-neg.json", [](nlohmann::json& j) { j["setup"]["hf_low_hz"] = -5000.0; }),
         judge + Q("hf-neg.json") + " --json " + Q("j-hf-neg.json") + " " + today, 1, {}, "hf-neg.json",
         "j-hf-neg.json"},
        // An LF band upside down (low edge above high edge): same.
        {"baseline with lf_low_hz above lf_high_hz",
         edited_baseline("lf-inv.json",
                         [](nlohmann::json& j) {
                             j["setup"]["lf_low_hz"] = 5000.0;
                             j["setup"]["lf_high_hz"] = 10.0;
                         }),
         judge + Q("lf-inv.json") + " --json " + Q("j-lf-inv.json") + " " + today, 1, {}, "lf-inv.json",
         "j-lf-inv.json"},
        // A shaft speed of 10^15 rpm (far outside the 1..100000 that --rpm accepts) is an
        // invalid baseline: it must be refused, and above all must not hang the speed
        // search that analyze without --rpm runs near the baseline's speed.
        {"baseline with rpm 1e15, analyzed without --rpm",
         edited_baseline("rpm-1e15.json", [](nlohmann::json& j) { j["context"]["rpm"] = 1e15; }),
         "analyze --baseline " + Q("rpm-1e15.json") + " --json " + Q("j-rpm-1e15.json") + " " + today, 1, {},
         "rpm-1e15.json", "j-rpm-1e15.json", kQuickS},
        // A bad baseline over a stale finding: the old finding must survive.
        {"corrupt baseline over a stale finding", stale_output("j-stale.json"),
         judge + Q("half.json") + " --json " + Q("j-stale.json") + " " + today, 1, {"not valid JSON"}, "half.json",
         "j-stale.json"},

        // --- outputs aimed at inputs or nowhere -----------------------------------------
        // -o at the second of the inputs: learning must not destroy its own evidence.
        {"-o pointing at an input recording", all({copy_of("good1.wav", "in-a.wav"), copy_of("good2.wav", "in-b.wav")}),
         base_o + Q("in-b.wav") + " " + Q("in-a.wav") + " " + Q("in-b.wav"), 1, {"refusing to overwrite"}, "in-b.wav",
         "in-b.wav"},
        // -o through a symlink to an input: the same file under another name.
        {"-o is a symlink to an input recording",
         all({copy_of("good1.wav", "in-c.wav"), [] {
                  std::error_code ec;
                  fs::remove(at("link-c.json"), ec);
                  fs::create_symlink(at("in-c.wav"), at("link-c.json"));
              }}),
         base_o + Q("link-c.json") + " " + Q("in-c.wav"), 1, {"refusing to overwrite"}, "link-c.json", "in-c.wav"},
        // --json at the recording being judged.
        {"--json pointing at the recording", copy_of("today.wav", "in-d.wav"),
         judge + good + " --json " + Q("in-d.wav") + " " + Q("in-d.wav"), 1, {"refusing to overwrite"}, "in-d.wav",
         "in-d.wav"},
        // --json at the baseline: the reference must not be replaced by a finding.
        {"--json pointing at the baseline", copy_of("good.json", "in-base.json"),
         judge + Q("in-base.json") + " --json " + Q("in-base.json") + " " + today, 1, {"refusing to overwrite"},
         "in-base.json", "in-base.json"},
        // -o into a folder that does not exist: refused before the analysis, folder not made.
        {"-o into a missing folder", nothing, base_o + Q("no-such-out/b.json") + " " + Q("good1.wav"), 1,
         {"does not exist"}, "no-such-out/b.json", "no-such-out/b.json"},
        // --json into a folder that does not exist.
        {"--json into a missing folder", nothing, judge + good + " --json " + Q("no-such-out/f.json") + " " + today, 1,
         {"does not exist"}, "no-such-out/f.json", "no-such-out/f.json"},
        // -o at a directory: spec silent, cavitas refuses with "it is a directory" (reasonable).
        {"-o pointing at a directory", [] { fs::create_directories(at("outdir")); },
         base_o + Q("outdir") + " " + Q("good1.wav"), 1, {"is a directory"}, "outdir", ""},

        // --- report on a finding or comparison that was cut or edited: the field is named, nothing is
        // drawn from it (before: a read past an array, a tick loop from INT_MIN, undefined behaviour).
        {"report: a finding with nothing but its schema", text_file("f-min.json", R"({"schema":"cavitas.finding/1"})"),
         "report " + Q("f-min.json") + " --html " + Q("r-min.html"), 1, {"verdict"}, "f-min.json", "r-min.html"},
        {"report: a comparison with nothing but its schema", text_file("c-min.json", R"({"schema":"cavitas.compare/1"})"),
         "report " + Q("c-min.json") + " --html " + Q("r-cmin.html"), 1, {"change"}, "c-min.json", "r-cmin.html"},
        {"report: spectrum levels shorter than its frequencies",
         edited_finding("f-short.json",
                        [](nlohmann::json& j) { j["plots"]["spectrum"]["level_db"] = nlohmann::json::array({-40.0}); }),
         "report " + Q("f-short.json") + " --html " + Q("r-short.html"), 1, {"level_db"}, "f-short.json", "r-short.html"},
        {"report: an empty spectrum level array",
         edited_finding("f-empty.json",
                        [](nlohmann::json& j) { j["plots"]["spectrum"]["level_db"] = nlohmann::json::array(); }),
         "report " + Q("f-empty.json") + " --html " + Q("r-empty.html"), 1, {"level_db"}, "f-empty.json", "r-empty.html"},
        {"report: a zero frequency on the log axis",
         edited_finding("f-zero.json", [](nlohmann::json& j) { j["plots"]["spectrum"]["center_hz"][0] = 0.0; }),
         "report " + Q("f-zero.json") + " --html " + Q("r-zero.html"), 1, {"center_hz"}, "f-zero.json", "r-zero.html"},
        {"report: a kurtogram row of 100 000 cells",
         edited_finding("f-kg.json",
                        [](nlohmann::json& j) {
                            j["plots"]["kurtogram"]["rows"][0]["mean"] = std::vector<double>(100000, 1.0);
                        }),
         "report " + Q("f-kg.json") + " --html " + Q("r-kg.html"), 1, {"mean"}, "f-kg.json", "r-kg.html"},

        // --- report inputs past the report's limits (reports.cpp): refused before a chart is drawn, the file
        // and the field named (before: a finding within the old per-array limit, 64 kurtogram rows of 65 536
        // cells, 17 MB, took 7 s and 286 MB and made a 13.5 MB page).
        {"report: a finding of more than 8 MB",
         [] { spit(at("f-8mb.json"), slurp(at("ctl-finding.json")) + std::string((8u << 20) + 1, ' ')); },
         "report " + Q("f-8mb.json") + " --html " + Q("r-8mb.html"), 1, {"too large for a report input"}, "f-8mb.json",
         "r-8mb.html", kQuickS},
        {"report: a kurtogram of 16 rows of 62 500 cells",
         edited_finding("f-kg16.json",
                        [](nlohmann::json& j) {
                            nlohmann::json kg = nlohmann::json::array();
                            for (int i = 0; i < 16; ++i)
                                kg.push_back({{"level", i}, {"bandwidth_hz", 0.2}, {"mean", std::vector<double>(62500, 1.5)}});
                            j["plots"]["kurtogram"]["rows"] = kg;
                        }),
         "report " + Q("f-kg16.json") + " --html " + Q("r-kg16.html"), 1, {"plots.kurtogram.rows[].mean", "at most 4096"},
         "f-kg16.json", "r-kg16.html", kQuickS},
        {"report: a kurtogram of 40 rows",
         edited_finding("f-kg40.json",
                        [](nlohmann::json& j) {
                            j["plots"]["kurtogram"]["rows"] = std::vector<nlohmann::json>(
                                40, {{"level", 1}, {"bandwidth_hz", 100.0}, {"mean", {2.0}}});
                        }),
         "report " + Q("f-kg40.json") + " --html " + Q("r-kg40.html"), 1, {"plots.kurtogram.rows", "at most 32"},
         "f-kg40.json", "r-kg40.html", kQuickS},
        {"report: spectra of 7 x 40 000 values",
         edited_finding("f-pts.json",
                        [](nlohmann::json& j) {
                            auto& sp = j["plots"]["spectrum"];
                            std::vector<double> hz(40000);
                            for (std::size_t i = 0; i < hz.size(); ++i) hz[i] = 10.0 + 0.5 * static_cast<double>(i);
                            sp["center_hz"] = hz;
                            for (const char* k : {"level_db", "p10_db", "p90_db", "baseline_median_db", "baseline_p10_db",
                                                  "baseline_p90_db"})
                                sp[k] = std::vector<double>(hz.size(), -40.0);
                        }),
         "report " + Q("f-pts.json") + " --html " + Q("r-pts.html"), 1, {"plotted values", "262144"}, "f-pts.json",
         "r-pts.html", kQuickS},
        {"report: spectrum frequencies that fall",
         edited_finding("f-fall.json",
                        [](nlohmann::json& j) {
                            auto& hz = j["plots"]["spectrum"]["center_hz"];
                            std::reverse(hz.begin(), hz.end());
                        }),
         "report " + Q("f-fall.json") + " --html " + Q("r-fall.html"), 1, {"center_hz", "do not increase"},
         "f-fall.json", "r-fall.html", kQuickS},
        {"report: a shaft speed of 1e-9 Hz on the envelope chart",
         edited_finding("f-shaft.json", [](nlohmann::json& j) { j["plots"]["envelope_spectrum"]["shaft_hz"] = 1e-9; }),
         "report " + Q("f-shaft.json") + " --html " + Q("r-shaft.html"), 1, {"shaft_hz", "2000 orders"},
         "f-shaft.json", "r-shaft.html", kQuickS},
        // plots.waveform (the most impulsive segment's excerpt): wrong types, too long, not finite, unequal.
        {"report: a waveform of 9000 values",
         edited_finding("f-wf-long.json",
                        [](nlohmann::json& j) {
                            j["plots"]["waveform"]["raw"] = std::vector<double>(9000, 0.1);
                            j["plots"]["waveform"]["hf"] = std::vector<double>(9000, 0.1);
                        }),
         "report " + Q("f-wf-long.json") + " --html " + Q("r-wf-long.html"), 1, {"plots.waveform.raw", "at most 8192"},
         "f-wf-long.json", "r-wf-long.html", kQuickS},
        {"report: a waveform trace that is text",
         edited_finding("f-wf-text.json", [](nlohmann::json& j) { j["plots"]["waveform"]["hf"] = "0.1 0.2"; }),
         "report " + Q("f-wf-text.json") + " --html " + Q("r-wf-text.html"), 1, {"plots.waveform.hf", "not an array"},
         "f-wf-text.json", "r-wf-text.html", kQuickS},
        {"report: a waveform with a NaN (written as null)",
         edited_finding("f-wf-nan.json",
                        [](nlohmann::json& j) { j["plots"]["waveform"]["raw"][1] = std::numeric_limits<double>::quiet_NaN(); }),
         "report " + Q("f-wf-nan.json") + " --html " + Q("r-wf-nan.html"), 1, {"plots.waveform.raw", "finite number"},
         "f-wf-nan.json", "r-wf-nan.html", kQuickS},
        {"report: waveform traces of unequal length",
         edited_finding("f-wf-short.json", [](nlohmann::json& j) { j["plots"]["waveform"]["hf"].erase(0); }),
         "report " + Q("f-wf-short.json") + " --html " + Q("r-wf-short.html"), 1, {"plots.waveform.hf", "values for the"},
         "f-wf-short.json", "r-wf-short.html", kQuickS},
        {"report: a waveform at a sample rate of 0 Hz",
         edited_finding("f-wf-fs.json", [](nlohmann::json& j) { j["plots"]["waveform"]["sample_rate_hz"] = 0.0; }),
         "report " + Q("f-wf-fs.json") + " --html " + Q("r-wf-fs.html"), 1, {"plots.waveform.sample_rate_hz", "below 1 Hz"},
         "f-wf-fs.json", "r-wf-fs.html", kQuickS},
        {"report: a waveform that is a number",
         edited_finding("f-wf-num.json", [](nlohmann::json& j) { j["plots"]["waveform"] = 3; }),
         "report " + Q("f-wf-num.json") + " --html " + Q("r-wf-num.html"), 1, {"plots.waveform", "not an object"},
         "f-wf-num.json", "r-wf-num.html", kQuickS},
        {"report: 1001 evidence sentences",
         edited_finding("f-ev.json",
                        [](nlohmann::json& j) { j["evidence"] = std::vector<std::string>(1001, "a sentence"); }),
         "report " + Q("f-ev.json") + " --html " + Q("r-ev.html"), 1, {"evidence", "at most 1000"}, "f-ev.json",
         "r-ev.html", kQuickS},
        {"report: a comparison of 2000 indicators",
         text_file("c-ind.json",
                   [] {
                       nlohmann::json c = {{"schema", "cavitas.compare/1"}, {"change", "improved"}, {"evidence", {"x"}}};
                       c["indicators"] = std::vector<nlohmann::json>(2000, {{"key", "hf_band_level_db"}, {"shift", -3.0}});
                       return c.dump();
                   }()),
         "report " + Q("c-ind.json") + " --html " + Q("r-cind.html"), 1, {"indicators", "at most 1000"}, "c-ind.json",
         "r-cind.html", kQuickS},
        {"report: a route summary line of 70 kB",
         all({[] { fs::create_directories(at("rr-line")); },
              text_file("rr-line/route.json", R"({"schema":"cavitas.route/1"})"),
              text_file("rr-line/summary.jsonl", R"({"schema":"cavitas.route-row/1","line":2,"verdict":"normal","note":")" +
                                                     std::string(70000, 'x') + "\"}\n")}),
         "report " + Q("rr-line") + " --html " + Q("r-rline.html"), 1, {"summary.jsonl:1", "65536"},
         "rr-line/summary.jsonl", "r-rline.html", kQuickS},
        {"report: a route summary of 20 001 rows",
         all({[] { fs::create_directories(at("rr-rows")); }, text_file("rr-rows/route.json", R"({"schema":"cavitas.route/1"})"),
              text_file("rr-rows/summary.jsonl",
                        [] {
                            std::string t;
                            for (int i = 1; i <= 20001; ++i)
                                t += R"({"schema":"cavitas.route-row/1","line":)" + std::to_string(i + 1) +
                                     R"(,"verdict":"normal"})" + "\n";
                            return t;
                        }())}),
         "report " + Q("rr-rows") + " --html " + Q("r-rrows.html"), 1, {"more than 20000 rows"},
         "rr-rows/summary.jsonl", "r-rrows.html", kQuickS},
        {"report: a route summary naming a finding outside the folder",
         all({[] { fs::create_directories(at("rr-out")); }, text_file("rr-out/route.json", R"({"schema":"cavitas.route/1"})"),
              text_file("rr-out/summary.jsonl",
                        R"({"schema":"cavitas.route-row/1","line":2,"machine":"P1","point":"A","verdict":"developed",)"
                        R"("finding":"../ctl-finding.json"})"
                        "\n")}),
         "report " + Q("rr-out") + " --html " + Q("r-rout.html"), 1, {"finding", "findings/"}, "rr-out/summary.jsonl",
         "r-rout.html", kQuickS},
        // Reported fine (exit 0): before, the history chart's date ticks never ended (1e300 + 365 days is
        // 1e300 again) and filled the memory (found with fuzz_report's route mode).
        {"report: a route whose two visits of a point are 1e300 days apart",
         all({[] { fs::create_directories(at("rr-days")); },
              text_file("rr-days/route.json", R"({"schema":"cavitas.route/1"})"),
              text_file("rr-days/summary.jsonl",
                        R"({"schema":"cavitas.route-row/1","line":2,"machine":"P1","point":"A","verdict":"normal",)"
                        R"("sha256":"aa","hf_rise_db":0.5,"days":-1e300})"
                        "\n"
                        R"({"schema":"cavitas.route-row/1","line":3,"machine":"P1","point":"A","verdict":"normal",)"
                        R"("sha256":"bb","hf_rise_db":1.5,"days":1e300})"
                        "\n")}),
         "report " + Q("rr-days") + " --html " + Q("r-rdays.html"), 0, {}, "", "r-rdays.html", kQuickS},

        // --- merge of a shard whose route.json was edited: the file and the field named, exit 1 (before: a JSON
        // type error without the file, and a shard "2/0" reported as a bad --shard option, exit 2).
        {"merge: a shard's route.json with \"baselines\": 8",
         all({[] { fs::create_directories(at("sh-num")); },
              text_file("sh-num/route.json",
                        R"({"schema":"cavitas.route/1","shard":"1/1","manifest_rows":0,"baselines":8})"),
              text_file("sh-num/summary.jsonl", "")}),
         "merge --out " + Q("m-num") + " " + Q("sh-num"), 1, {"baselines"}, "sh-num/route.json", "m-num", kQuickS},
        {"merge: a shard's route.json with \"shard\": \"2/0\"",
         all({[] { fs::create_directories(at("sh-20")); },
              text_file("sh-20/route.json", R"({"schema":"cavitas.route/1","shard":"2/0","manifest_rows":0})"),
              text_file("sh-20/summary.jsonl", "")}),
         "merge --out " + Q("m-20") + " " + Q("sh-20"), 1, {"field 'shard'"}, "sh-20/route.json", "m-20", kQuickS},

        // --- a sidecar of deeply nested keys or brackets: refused before the TOML parser recurses
        // (before: the stack overflowed, exit 139, and a route died with it).
        {"sidecar: 40 000 dotted key levels",
         all({copy_of("today.wav", "deep1.wav"), text_file("deep1.op.toml", [] {
                  std::string t;
                  for (int i = 0; i < 40000; ++i) t += "a.";
                  return t + "b = \"1\"\n";
              }())}),
         judge + good + " --json " + Q("j-deep1.json") + " " + Q("deep1.wav"), 1, {"nested"}, "deep1.op.toml",
         "j-deep1.json"},
        {"sidecar: 5 000 nested arrays",
         all({copy_of("today.wav", "deep2.wav"), text_file("deep2.op.toml", "x = " + std::string(5000, '[') + "\n")}),
         judge + good + " --json " + Q("j-deep2.json") + " " + Q("deep2.wav"), 1, {"nested"}, "deep2.op.toml",
         "j-deep2.json"},

        // --- usage errors (exit 2). The one-line rule is specified for exit 1 only; CLI11
        // adds a second line "Run with --help for more information.", which is adopted.
        // No arguments at all.
        {"no arguments", nothing, "", 2, {"subcommand"}, "", ""},
        // An unknown subcommand: CLI11 reports it as "A subcommand is required" (adopted).
        {"unknown subcommand", nothing, "frobnicate " + today, 2, {"subcommand"}, "", ""},
        // A negative speed: must not be read as an option nor accepted.
        {"--rpm -5", nothing, "baseline --rpm -5 -o " + Q("u-rpm.json") + " " + Q("good1.wav"), 2, {"--rpm"}, "",
         "u-rpm.json"},
        // "nan" and hexadecimal are numbers to the parsers underneath, not to a person (before: --rpm nan
        // was taken as "not given").
        {"--rpm nan", nothing, judge.substr(0, judge.find("--rpm")) + "--rpm nan --baseline " + good + " " + today, 2,
         {"--rpm"}, "", ""},
        {"--rpm 0x5CD", nothing, "baseline --rpm 0x5CD -o " + Q("u-hex.json") + " " + Q("good1.wav"), 2, {"--rpm"}, "",
         "u-hex.json"},
        // A unit nobody knows: levels would be silently mis-scaled.
        {"--full-scale 50furlongs", nothing,
         "baseline --full-scale 50furlongs -o " + Q("u-fs.json") + " " + Q("good1.wav"), 2, {"furlongs"}, "",
         "u-fs.json"},
    };

    for (const Row& row : rows) {
        INFO(row.name);
        row.make();
        const fs::path out = row.output.empty() ? fs::path() : at(row.output);
        std::optional<std::string> before;
        std::error_code ec;
        if (!row.output.empty() && fs::is_regular_file(out, ec)) before = slurp(out);

        const Run r = run(row.command, row.timeout_s);
        INFO("command: cavitas " << row.command);
        INFO("got: " << describe(r) << "; stderr: " << r.err);
        // A crash or a hang fails the row; its stderr then says nothing worth checking.
        const bool died = crashed_or_hung(r);
        CHECK_FALSE(died);
        CHECK(r.status == row.status);
        if (!died) {
            for (const auto& w : row.words) CHECK(contains(r.err, w));
            if (row.status == 0) CHECK_FALSE(contains(r.err, "error"));
            if (row.status != 0) CHECK_FALSE(r.err.empty());
            if (row.status == 1) {
                // "cavitas: error: <file>: <problem>", one line.
                CHECK(line_count(r.err) == 1);
                CHECK((!r.err.empty() && r.err.back() == '\n'));
                CHECK(r.err.rfind("cavitas: error: ", 0) == 0);
                CHECK(contains(r.err, at(row.culprit).string()));
            }
        }
        if (out.empty()) continue;
        if (row.status == 0) {
            CHECK(fs::is_regular_file(out, ec));  // a verdict or a baseline was written
        } else if (before) {
            CHECK(fs::is_regular_file(out, ec));  // the file that was there is still there ...
            CHECK(slurp(out) == *before);         // ... byte for byte
        } else {
            CHECK_FALSE(fs::exists(out, ec));
        }
        if (row.status != 0) CHECK_FALSE(temp_leftover(out));
    }
    CHECK_FALSE(fs::exists(at("no-such-out")));
    CHECK(slurp(at("x.txt")) == "outside the output folder\n");  // merge wrote nothing outside --out
    // The Latin-1 cell and file name come out as UTF-8, the bad byte replaced (U+FFFD).
    CHECK(contains(slurp(at("r-latin1/summary.jsonl")), "caf\xEF\xBF\xBD au lait"));
    CHECK(contains(slurp(at("j-latin1.json")), "caf\xEF\xBF\xBD.wav"));
    CHECK(contains(slurp(at("r-utf16/summary.jsonl")), "\"verdict\""));
    // No raw ESC reached the terminal.
    const Run esc = run(judge + good + " " + Q("n\x1B[31mo.wav"));
    CHECK_FALSE(contains(esc.err, "\x1B"));
    // Tags longer than a file name allows fail their row before any analysis, not after it.
    spit(at("longtag.csv"), "file,machine,point,channel,datetime,rpm,vanes\ntoday.wav,OW-P101," + std::string(150, 'P') +
                                ",0,2026-11-02T08:00,1485,7\n");
    const Run tag = run("route " + Q("longtag.csv") + " --baselines " + Q("lib") + " --no-store --out " + Q("r-longtag"));
    CHECK(tag.status == 1);
    CHECK(contains(slurp(at("r-longtag/summary.jsonl")), "longer than 100 bytes"));
}
