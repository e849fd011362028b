// Running the real cavitas binary from a test: exit status, stdout, stderr.
#pragma once

#include <sys/wait.h>
#include <unistd.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>

namespace cavitas::test {

struct Run {
    int status = -1;
    std::string out, err;
};

inline std::string slurp(const std::filesystem::path& p) {
    std::ifstream in(p, std::ios::binary);
    std::stringstream ss;
    ss << in.rdbuf();
    return ss.str();
}

/// A path quoted for the shell.
inline std::string q(const std::filesystem::path& p) { return "'" + p.string() + "'"; }

/// `binary args` through the shell; its output captured in files under `scratch`.
inline Run run_binary(const std::string& binary, const std::string& args, const std::filesystem::path& scratch) {
    const auto o = scratch / "stdout.txt", e = scratch / "stderr.txt";
    const std::string cmd = "'" + binary + "' " + args + " >'" + o.string() + "' 2>'" + e.string() + "'";
    const int rc = std::system(cmd.c_str());
    Run r;
    r.status = WIFEXITED(rc) ? WEXITSTATUS(rc) : -1;
    r.out = slurp(o);
    r.err = slurp(e);
    return r;
}

/// A scratch folder of one test program: TEMP/cavitas-STEM-PID, made on first use.
inline std::filesystem::path scratch_dir(const std::string& stem) {
    const std::filesystem::path p =
        std::filesystem::temp_directory_path() / ("cavitas-" + stem + "-" + std::to_string(::getpid()));
    std::filesystem::create_directories(p);
    return p;
}

/// The first line a shell command prints, or "" when it fails: for checking cavitas against an
/// implementation independent of it (coreutils sha256sum, GNU date, uname).
inline std::string shell_first_line(const std::string& command, const std::filesystem::path& scratch) {
    const auto out = scratch / "shell.txt";
    if (std::system((command + " > " + q(out)).c_str()) != 0) return "";
    const std::string text = slurp(out);
    return text.substr(0, text.find('\n'));
}

}  // namespace cavitas::test
