// libFuzzer target: arbitrary bytes as the input of 'report', a finding
// (analyze --json) or a comparison (compare --json), then the renderer.
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

#include "src/document.hpp"
#include "src/errors.hpp"
#include "src/report_options.hpp"
#include "src/reports.hpp"

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
