// run_report: finds cavitas-report.so beside the running executable (the build
// tree) or, for an installed cavitas, in its private library folder relative to
// the executable (CAVITAS_REPORT_MODULE_RELDIR, from the install directories:
// ../lib/cavitas, ../lib/<multiarch>/cavitas, ...), checks that it was built
// with this cavitas, and runs it. See report_options.hpp for why it is a module.
#include <dlfcn.h>
#include <unistd.h>

#include <array>
#include <filesystem>
#include <string>
#include <system_error>

#include "src/io/errors.hpp"
#include "src/report/report_options.hpp"

#ifndef CAVITAS_REPORT_MODULE_RELDIR
#error "CAVITAS_REPORT_MODULE_RELDIR (the module's install folder relative to the executable's) is set by src/CMakeLists.txt"
#endif

namespace cavitas::app {

namespace {

namespace fs = std::filesystem;

constexpr const char* kModuleName = "cavitas-report.so";

using AbiFn = int (*)();
using VersionFn = const char* (*)();
using RunFn = int (*)(const ReportOptions*, std::ostream*, std::string*);

struct Module {
    RunFn run = nullptr;
};

fs::path executable_folder() {
    std::array<char, 4096> buf{};
    const ssize_t n = ::readlink("/proc/self/exe", buf.data(), buf.size() - 1);
    if (n <= 0) return {};
    return fs::path(std::string(buf.data(), static_cast<std::size_t>(n))).parent_path();
}

Module load() {
    const fs::path here = executable_folder();
    if (here.empty()) throw InputError(std::string("report: cannot find the folder of the cavitas executable to load ") + kModuleName);
    const fs::path candidates[] = {here / kModuleName, here / CAVITAS_REPORT_MODULE_RELDIR / kModuleName};
    std::string tried;
    for (const fs::path& p : candidates) {
        std::error_code ec;
        if (!fs::is_regular_file(p, ec)) {
            tried += (tried.empty() ? "" : ", ") + p.lexically_normal().string();
            continue;
        }
        void* h = ::dlopen(p.c_str(), RTLD_NOW | RTLD_LOCAL);
        if (!h) {
            const char* e = ::dlerror();
            throw InputError(p.string() + ": the report renderer cannot be loaded: " + (e ? e : "unknown reason"));
        }
        const auto abi = reinterpret_cast<AbiFn>(::dlsym(h, "cavitas_report_abi"));
        const auto version = reinterpret_cast<VersionFn>(::dlsym(h, "cavitas_report_version"));
        const auto run = reinterpret_cast<RunFn>(::dlsym(h, "cavitas_report_run"));
        if (!abi || !version || !run) throw InputError(p.string() + ": not a cavitas report module");
        if (abi() != kReportModuleAbi || std::string(version()) != CAVITAS_VERSION)
            throw InputError(p.string() + ": report module of cavitas " + version() + " (interface " +
                             std::to_string(abi()) + "); this is cavitas " + CAVITAS_VERSION + " (interface " +
                             std::to_string(kReportModuleAbi) + "): rebuild or reinstall cavitas");
        return Module{run};  // stays loaded until the process ends
    }
    throw InputError(std::string("report: the report renderer ") + kModuleName +
                     " was not found (looked in " + tried + "); it is built beside the cavitas executable and installed in " +
                     CAVITAS_REPORT_MODULE_RELDIR + " relative to it: rebuild or reinstall cavitas");
}

}  // namespace

void run_report(const ReportOptions& options, std::ostream& out) {
    static const Module module = load();
    std::string message;
    switch (module.run(&options, &out, &message)) {
        case 0: return;
        case 2: throw UsageError(message);
        default: throw InputError(message);
    }
}

}  // namespace cavitas::app
