// libFuzzer target: arbitrary bytes as the summary.jsonl of a route shard (and,
// after a line "%%route.json%%", as its route.json), merged by run_merge into
// a scratch output folder.
//
// The scratch folder (made once, under TMPDIR) holds shard/ with a finding file
// for each line of the demo route, out/ (the merge's output, emptied before each
// input) and sentinel/ beside them. Without the "%%route.json%%" part the shard's
// route.json is a valid one for a 1/1 split with as many manifest rows as the
// input has non-empty lines, so that the merge goes past its count check to
// copying the findings.
//
// run_merge may refuse with InputError naming a file (the command line is
// right: a UsageError is a bug here too). Whatever it does, nothing
// outside out/ may be written: every file of shard/ and sentinel/ keeps its
// inode, size and time, and no file appears beside them. A merge that succeeds
// must name in its summary only findings inside out/.
#include <sys/stat.h>
#include <unistd.h>

#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <map>
#include <sstream>
#include <string>
#include <tuple>

#include <nlohmann/json.hpp>

#include "src/io/errors.hpp"
#include "src/route/route.hpp"

namespace fs = std::filesystem;

namespace {

void remove_scratch();

[[noreturn]] void bug(const char* what, const std::string& detail) {
    std::fprintf(stderr, "\nfuzz_merge: BUG: %s: %s\n", what, detail.c_str());
    std::fflush(stderr);
    remove_scratch();
    std::abort();
}

// The findings of the demo route (tools/demo.sh), named as route writes them.
const char* const kFindings[] = {"L000002_OW-P101_DE-H.json", "L000003_OW-P101_DE-H.json", "L000004_OW-P101_DE-H.json",
                                 "L000005_OW-P101_DE-H.json", "L000006_OW-P102_DE-H.json", "L000007_OW-P102_DE-H.json",
                                 "L000008_OW-P103_DE-H.json"};

fs::path base, shard, out, sentinel;
using Stamp = std::tuple<ino_t, off_t, long, long>;  // inode, size, mtime s, mtime ns
std::map<std::string, Stamp> before;                 // every file outside out/, as made

void spit(const fs::path& p, const std::string& bytes) {
    std::ofstream f(p, std::ios::binary | std::ios::trunc);
    f.write(bytes.data(), static_cast<std::streamsize>(bytes.size()));
    if (!f) bug("cannot write the scratch folder", p.string());
}

Stamp stamp(const fs::path& p) {
    struct stat st {};
    if (::lstat(p.c_str(), &st) != 0) return {};
    return {st.st_ino, st.st_size, static_cast<long>(st.st_mtim.tv_sec), st.st_mtim.tv_nsec};
}

// Every file (and symlink) under base but out/.
std::map<std::string, Stamp> files_outside_out() {
    std::map<std::string, Stamp> m;
    std::error_code ec;
    for (auto it = fs::recursive_directory_iterator(base, ec); !ec && it != fs::recursive_directory_iterator();
         it.increment(ec)) {
        if (it->path() == out) {
            it.disable_recursion_pending();
            continue;
        }
        if (!it->is_directory(ec)) m[it->path().string()] = stamp(it->path());
    }
    return m;
}

void check_nothing_outside(const std::string& input) {
    const auto now = files_outside_out();
    for (const auto& [path, s] : now) {
        const auto was = before.find(path);
        if (was == before.end()) bug("merge wrote a file outside its output folder", path + "\n" + input.substr(0, 300));
        if (was->second != s) bug("merge rewrote a file outside its output folder", path + "\n" + input.substr(0, 300));
    }
    for (const auto& [path, s] : before)
        if (!now.count(path)) bug("merge removed a file outside its output folder", path);
}

// A successful merge names only findings inside out/ (the history import and the
// report read them from there).
void check_merged_findings() {
    std::ifstream in(out / "summary.jsonl");
    std::string line;
    while (std::getline(in, line)) {
        const auto j = nlohmann::json::parse(line, nullptr, false);
        if (!j.is_object() || !j.contains("finding") || !j["finding"].is_string()) continue;
        const std::string f = j["finding"].get<std::string>();
        if (f.empty()) continue;
        const fs::path p = fs::path(f).lexically_normal();
        if (p.is_absolute() || p.empty() || *p.begin() == "..")
            bug("a merged summary names a finding outside the output folder", f);
    }
}

std::string route_json(std::size_t rows) {
    return nlohmann::json{{"schema", "cavitas.route/1"},
                          {"manifest", "route.csv"},
                          {"manifest_sha256", "2d7b1556308a31158fe36ee6ad7b2a03a65baed3d72ddc32164c203068ebd21b"},
                          {"manifest_rows", rows},
                          {"extra_columns", {"role", "label", "kind", "fs_hz", "duration_s", "seed"}},
                          {"shard", "1/1"},
                          {"baselines", "baselines"},
                          {"store", nullptr}}
        .dump(2);
}

void remove_scratch() {
    std::error_code ec;
    if (!base.empty()) fs::remove_all(base, ec);
    base.clear();
}

}  // namespace

extern "C" int LLVMFuzzerInitialize(int*, char***) {
    std::string tmpl = (fs::temp_directory_path() / "cavitas-fuzz-merge.XXXXXX").string();
    if (!::mkdtemp(tmpl.data())) bug("cannot make a scratch folder", tmpl);
    base = tmpl;
    shard = base / "shard";
    out = base / "out";
    sentinel = base / "sentinel";
    fs::create_directories(shard / "findings");
    fs::create_directories(sentinel);
    for (const char* f : kFindings) spit(shard / "findings" / f, "{\"schema\":\"cavitas.finding/1\",\"verdict\":\"normal\"}\n");
    spit(sentinel / "keep.txt", "must not change\n");
    spit(base / "x.txt", "beside the folders\n");
    spit(shard / "route.json", route_json(0));
    spit(shard / "summary.jsonl", "");
    std::atexit(remove_scratch);
    before = files_outside_out();
    before.erase((shard / "route.json").string());  // rewritten by the harness for each input
    before.erase((shard / "summary.jsonl").string());
    return 0;
}

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    const std::string text(reinterpret_cast<const char*>(data), size);
    std::string summary = text, run;
    const std::string mark = "%%route.json%%\n";
    if (const auto at = text.find(mark); at != std::string::npos) {
        summary = text.substr(0, at);
        run = text.substr(at + mark.size());
    } else {
        std::size_t rows = 0;
        std::istringstream in(summary);
        for (std::string line; std::getline(in, line);) rows += !line.empty();
        run = route_json(rows);
    }
    std::error_code ec;
    fs::remove_all(out, ec);
    spit(shard / "route.json", run);
    spit(shard / "summary.jsonl", summary);
    // The harness's own two files are stamped again: only the merge's writes count.
    before[(shard / "route.json").string()] = stamp(shard / "route.json");
    before[(shard / "summary.jsonl").string()] = stamp(shard / "summary.jsonl");

    cavitas::app::MergeOptions o;
    o.shard_dirs = {shard.string()};
    o.out_dir = out.string();
    o.no_store = true;
    std::ostringstream sink;
    bool merged = false;
    try {
        cavitas::app::run_merge(o, sink, sink);
        merged = true;
    } catch (const cavitas::app::InputError& e) {
        // Every refusal names the file (all of them are in the scratch folder).
        if (std::string(e.what()).find(base.string()) == std::string::npos) bug("a refusal names no file", e.what());
    }
    // UsageError (or anything else) escaping is a bug: the command line here is right, the files are wrong.
    check_nothing_outside(text);
    if (merged) check_merged_findings();
    return 0;
}
