// libFuzzer target: arbitrary bytes as the input of 'report', a finding
// (analyze --json) or a comparison (compare --json), then the renderer; bytes
// that start with a route summary row ({"schema":"cavitas.route-row/1" ...) are
// the summary.jsonl of a route folder instead (a scratch folder under TMPDIR
// with a route.json and a small finding for each file name of the demo route).
//
// document_from_text checks what 'report' checks of such a file (size, schema,
// every field the report draws) and its only way to refuse is InputError.
// What it accepts must render: to HTML every time, and to PDF when
// FUZZ_REPORT_PDF=1 (cairo's PDF writer costs about ten times the HTML; run.sh
// leaves it off). Anything else escaping, a crash, a sanitizer report, a hang
// (-timeout) or a report out of all proportion to its input is a bug.
#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <string>

#include <unistd.h>

#include <filesystem>
#include <fstream>

#include "src/report/document.hpp"
#include "src/io/errors.hpp"
#include "src/report/report_options.hpp"
#include "src/report/reports.hpp"

namespace {

[[noreturn]] void bug(const char* what, const std::string& detail) {
    std::fprintf(stderr, "\nfuzz_report: BUG: %s: %s\n", what, detail.c_str());
    std::fflush(stderr);
    std::abort();
}

bool pdf_too = false;

// A report is its fixed text plus its charts; every chart draws a bounded number of
// values (reports.cpp's limits), so its size does not grow without bound with the input.
constexpr std::size_t kMaxHtmlBytes = 64u << 20;

bool has_script(const std::string& html) {
    for (std::size_t i = html.find('<'); i != std::string::npos; i = html.find('<', i + 1)) {
        std::string tag = html.substr(i + 1, 6);
        for (auto& c : tag) c = static_cast<char>(c >= 'A' && c <= 'Z' ? c + 32 : c);
        if (tag == "script") return true;
    }
    return false;
}

namespace fs = std::filesystem;
fs::path route_folder;  // the scratch route folder (made on first use)

void spit(const fs::path& p, const std::string& bytes) {
    std::ofstream f(p, std::ios::binary | std::ios::trunc);
    f.write(bytes.data(), static_cast<std::streamsize>(bytes.size()));
    if (!f) bug("cannot write the scratch folder", p.string());
}

void remove_route_folder() {
    std::error_code ec;
    if (!route_folder.empty()) fs::remove_all(route_folder, ec);
}

// A finding small enough to render fast, with a chart of each kind.
const char* const kSmallFinding = R"({"schema":"cavitas.finding/1","verdict":"developed","evidence":["HF band +9 dB"],
"other_findings":[],"cautions":[],"input":{"path":"a.wav"},"quality":{},
"plots":{"spectrum":{"center_hz":[100,1000,10000],"level_db":[-40,-30,-20]},
"envelope_spectrum":{"bin_hz":1,"amplitude":[1,2,3,2,1],"shaft_hz":1,"bpf_hz":2},
"kurtogram":{"rows":[{"level":0,"bandwidth_hz":100,"mean":[3]},{"level":1,"bandwidth_hz":50,"mean":[2,5]}]}}})";

const char* const kFindings[] = {"L000002_OW-P101_DE-H.json", "L000003_OW-P101_DE-H.json", "L000004_OW-P101_DE-H.json",
                                 "L000005_OW-P101_DE-H.json", "L000006_OW-P102_DE-H.json", "L000007_OW-P102_DE-H.json",
                                 "L000008_OW-P103_DE-H.json"};

std::string route_html(const std::string& summary, const cavitas::app::ReportOptions& options) {
    if (route_folder.empty()) {
        std::string tmpl = (fs::temp_directory_path() / "cavitas-fuzz-report.XXXXXX").string();
        if (!::mkdtemp(tmpl.data())) bug("cannot make a scratch folder", tmpl);
        route_folder = tmpl;
        std::atexit(remove_route_folder);
        fs::create_directories(route_folder / "findings");
        for (const char* f : kFindings) spit(route_folder / "findings" / f, kSmallFinding);
        spit(route_folder / "route.json", R"({"schema":"cavitas.route/1","manifest":"route.csv","store":null})");
    }
    spit(route_folder / "summary.jsonl", summary);
    try {
        return cavitas::app::doc::to_html(cavitas::app::route_document(route_folder.string(), options));
    } catch (const cavitas::app::InputError& e) {
        if (std::string(e.what()).find(route_folder.string()) == std::string::npos) bug("a refusal names no file", e.what());
        return {};
    }
}

}  // namespace

extern "C" int LLVMFuzzerInitialize(int*, char***) {
    const char* pdf = std::getenv("FUZZ_REPORT_PDF");
    pdf_too = pdf && std::string(pdf) == "1";
    return 0;
}

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    const std::string text(reinterpret_cast<const char*>(data), size);
    cavitas::app::ReportOptions options;
    options.input = "fuzz/report.json";
    options.html = "fuzz/report.html";
    if (text.rfind(R"({"schema":"cavitas.route-row/1")", 0) == 0) {
        const std::string html = route_html(text, options);
        if (!html.empty() && html.rfind("<!DOCTYPE html>", 0) != 0) bug("the HTML does not start as a page", html.substr(0, 80));
        if (has_script(html)) bug("the HTML report holds a <script> tag", text.substr(0, 200));
        return 0;
    }
    cavitas::app::doc::Document d;
    try {
        d = cavitas::app::document_from_text(text, options.input, options);
    } catch (const cavitas::app::InputError& e) {
        if (std::string(e.what()).rfind(options.input + ": ", 0) != 0) bug("a refusal does not name the input", e.what());
        return 0;
    }
    const std::string html = cavitas::app::doc::to_html(d);
    if (html.rfind("<!DOCTYPE html>", 0) != 0) bug("the HTML does not start as a page", html.substr(0, 80));
    if (html.size() > kMaxHtmlBytes) bug("an HTML report of more than 64 MB", std::to_string(html.size()));
    // The page carries no script, whatever text the input holds (every text is escaped).
    if (has_script(html)) bug("the HTML report holds a <script> tag", text.substr(0, 200));
    if (pdf_too) {
        int pages = 0;
        const std::string pdf = cavitas::app::doc::to_pdf(d, cavitas::app::doc::Paper::a4, &pages);
        if (pdf.rfind("%PDF-", 0) != 0 || pages < 1) bug("the PDF is not a PDF", std::to_string(pages) + " pages");
    }
    return 0;
}
